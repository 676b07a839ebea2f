#!/usr/bin/env python3
"""The practitioner's alternative to ordo, for the benchmark: Dyson terms and the exact state of a driven
dense d-level system, H(t) = H0 + f(t) V, in the interaction picture, as one stacked ODE integrated by SciPy's
adaptive 8th-order Runge-Kutta (DOP853). Reads a JSON job on stdin, prints JSON on stdout:

  {"kind": "driven", "d", "order", "t_end", "h0", "v" (row-major [re, im] pairs), "rtol", "atol"}
  {"kind": "constant", "d", "order", "t_end", "h0", "v"}   (time-independent: eigh + expm_multiply)
  {"kind": "sweep", "d", "order", "t_end", "rtol", "atol", "points": [{"h0", "v", "center", "width"}, ...]}
      (a parameter sweep: each point driven by the Gaussian exp(-((t-center)/width)^2/2), in a loop)
  {"kind": "eigh", "d", "h0"}   (the eigen-decomposition alone: {"seconds", "values"})

and answers {"seconds": in-process time of the solve, "exact": [populations], "series": [[populations of
the partial sum to order n] for n = 0..N]} at the final time. The drive is f(t) = exp(-((t-10)/3)^2/2) cos(1.1 t).
"""
import json
import sys
import time

import numpy as np
from scipy.integrate import solve_ivp
from scipy.linalg import eigh
from scipy.sparse import bmat, csr_matrix, identity
from scipy.sparse.linalg import expm_multiply


def matrix(pairs, d):
    a = np.asarray(pairs, dtype=float).reshape(d, d, 2)
    return a[..., 0] + 1j * a[..., 1]


def drive(t):
    return np.exp(-0.5 * ((t - 10.0) / 3.0) ** 2) * np.cos(1.1 * t)


def driven(job, f=drive):
    d, n, t_end = job["d"], job["order"], job["t_end"]
    h0, v = matrix(job["h0"], d), matrix(job["v"], d)
    start = time.perf_counter()
    energies, u = eigh(h0)
    w = u.conj().T @ v @ u
    c0 = u.conj().T[:, 0].copy()  # the state |0> in H0's eigenbasis

    def rhs(t, y):
        c = y.reshape(n + 2, d)  # rows: c_0 ... c_N, then the exact state
        phase = np.exp(1j * energies * t)
        wt = f(t) * (phase[:, None] * w * phase.conj()[None, :])
        out = np.empty_like(c)
        out[0] = 0.0
        out[1:n + 1] = -1j * (c[:n] @ wt.T)
        out[n + 1] = -1j * (wt @ c[n + 1])
        return out.ravel()

    y0 = np.zeros((n + 2, d), dtype=complex)
    y0[0] = c0
    y0[n + 1] = c0
    sol = solve_ivp(rhs, (0.0, t_end), y0.ravel(), method="DOP853", rtol=job["rtol"], atol=job["atol"],
                    t_eval=[t_end])
    c = sol.y[:, -1].reshape(n + 2, d)
    back = u * np.exp(-1j * energies * t_end)[None, :]  # psi = U e^{-iEt} c
    seconds = time.perf_counter() - start
    exact = np.abs(back @ c[n + 1]) ** 2
    partial = np.cumsum(c[:n + 1], axis=0)
    series = [list(np.abs(back @ p) ** 2) for p in partial]
    return {"seconds": seconds, "exact": list(exact), "series": series, "rhs_calls": int(sol.nfev)}


def constant(job):
    d, n, t_end = job["d"], job["order"], job["t_end"]
    h0, v = matrix(job["h0"], d), matrix(job["v"], d)
    start = time.perf_counter()
    # The block generator A = I⊗H0 + S⊗V (Van Loan): exp(-iTA) applied to (psi0, 0, ..., 0) gives psi_0..psi_N;
    # the exact state from the eigen-decomposition of H0 + V.
    blocks = [[None] * (n + 1) for _ in range(n + 1)]
    for k in range(n + 1):
        blocks[k][k] = csr_matrix(h0)
        if k > 0:
            blocks[k][k - 1] = csr_matrix(v)
    a = bmat(blocks, format="csr")
    psi = np.zeros((n + 1) * d, dtype=complex)
    psi[0] = 1.0
    terms = expm_multiply(-1j * t_end * a, psi).reshape(n + 1, d)
    energies, u = eigh(h0 + v)
    exact_state = u @ (np.exp(-1j * energies * t_end) * u.conj().T[:, 0])
    seconds = time.perf_counter() - start
    partial = np.cumsum(terms, axis=0)
    return {"seconds": seconds, "exact": list(np.abs(exact_state) ** 2),
            "series": [list(np.abs(p) ** 2) for p in partial]}


def sweep(job):
    answers = []
    for point in job["points"]:
        c, w = point["center"], point["width"]
        answers.append(driven({**job, "h0": point["h0"], "v": point["v"]},
                              lambda t, c=c, w=w: np.exp(-0.5 * ((t - c) / w) ** 2)))
    return {"seconds": sum(a["seconds"] for a in answers), "points": answers}


def eigen(job):
    d = job["d"]
    h0 = matrix(job["h0"], d)
    start = time.perf_counter()
    values, _ = eigh(h0)
    return {"seconds": time.perf_counter() - start, "values": list(values)}


def main():
    job = json.load(sys.stdin)
    kinds = {"driven": driven, "constant": constant, "sweep": sweep, "eigh": eigen}
    answer = kinds[job["kind"]](job)
    json.dump(answer, sys.stdout)


if __name__ == "__main__":
    main()
