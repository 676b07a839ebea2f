#!/usr/bin/env python3
"""A measurement, not part of ordo: how many products with the coupling a Lawson-type Gauss collocation method
would need for the dense driven benchmark case, against the Lawson Runge-Kutta (Dormand-Prince 8) that ordo uses.

The method, on a step [t, t+h] with K Gauss-Legendre nodes s_k = t + c_k h, in the interaction picture (H0's
phases exact at each node): the Dyson terms are explicit order by order (the stacked system is nilpotent),
    C_n(s_k) = c_n(t) + h sum_l a_kl F(s_l, C_{n-1}(s_l)),   c_n(t+h) = c_n(t) + h sum_l b_l F(s_l, C_{n-1}(s_l)),
one product with K vectors per order; the exact state is the collocation solution found by fixed-point
iteration (one product with K vectors per sweep). Uniform steps; error = the largest population difference,
exact state and every partial sum, from bench/scipy_dyson.py at rtol 1e-12 (the benchmark's reference).

Reads the benchmark's driven job on stdin (as bench/scipy_dyson.py does) and prints, for K = 3..6 and a few step
counts, the error, the vector-products and the fixed-point sweeps per step:

  deno eval 'import { dense } from "./cli/commands/_bench_cases.ts"; const m = dense(64);
    console.log(JSON.stringify({ kind: "driven", d: 64, order: 6, t_end: 20, h0: m.h0, v: m.v }))' |
    python3 bench/prototypes/gauss_collocation.py
 Measured on the d = 64, N = 6 case:
K = 6 reaches 4.4e-9 in 20 uniform steps with 1548 vector-products (~6 sweeps a step); the Runge-Kutta pair
needs 43 adaptive steps x 12 stages x 7 vectors = 3612 for 2.9e-9. What it still lacks before it could be an
ordo method: an embedded error estimate that is honest (within 10x), step control, and several V terms
(per-node coefficient combinations).

Tried in the engine since (K = 8, order 16: one product per order with the 8 stage vectors, per V term;
step doubling for the error, ||Psi_h - Psi_2h|| / (2^16 - 1); at most 8 rad of the fastest phase per step) and
dropped: on the d = 64 case it took 18 steps for 5.7e-10 with 2624 vector-products against the pair's ~3100 (the
doubling's third step eats most of the gain), and its estimate read 13x low there and 100x low on the leaky
transmon example (2.5e-11 against a true 2.6e-9): at 8 rad per step the big step is not yet in the asymptotic
regime that Richardson's 2^16 - 1 assumes. Smaller divisors do not mend it: with 4095 and with 511 (the stage
order's 2^9 - 1) the estimate still read 2400x and 70x low on the explicit-partner test case, whose sin^2 pulse
has kinks at its ends, where a step across one drops to low order. An order-16 method needs an estimate that is
honest before the asymptotic regime and across kinks of the drive (as the Runge-Kutta pair's embedded 5th- and
3rd-order estimate is), and costs less than a third step.
"""
import json
import sys
from pathlib import Path

import numpy as np
from scipy.linalg import eigh

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))
import scipy_dyson as sd  # noqa: E402


def collocation(K):
    x, w = np.polynomial.legendre.leggauss(K)
    c, b = (x + 1) / 2, w / 2
    vander = np.vander(c, K, increasing=True)
    a = np.array([np.linalg.solve(vander.T, [c[k] ** (j + 1) / (j + 1) for j in range(K)]) for k in range(K)])
    return c, a, b


def run(job, reference, K, steps, sweep_tol=1e-13):
    d, N, T = job["d"], job["order"], job["t_end"]
    h0, v = sd.matrix(job["h0"], d), sd.matrix(job["v"], d)
    E, U = eigh(h0)
    W = U.conj().T @ v @ U
    c, a, b = collocation(K)
    h = T / steps
    series = np.zeros((N + 1, d), complex)
    series[0] = U.conj().T[:, 0]
    psi = series[0].copy()
    products, sweeps = 0, 0
    for s in range(steps):
        nodes = s * h + c * h
        phase = np.exp(1j * np.outer(nodes, E))
        drive = sd.drive(nodes)

        def rate(x):
            nonlocal products
            products += x.shape[0]
            return -1j * drive[:, None] * phase * ((phase.conj() * x) @ W.T)

        at_nodes, new = np.tile(series[0], (K, 1)), series.copy()
        for n in range(1, N + 1):
            f = rate(at_nodes)
            at_nodes = series[n][None, :] + h * a @ f
            new[n] = series[n] + h * b @ f
        guess = np.tile(psi, (K, 1))
        for _ in range(60):
            nxt = psi[None, :] + h * a @ rate(guess)
            sweeps += 1
            done = np.max(np.abs(nxt - guess)) < sweep_tol
            guess = nxt
            if done:
                break
        psi = psi + h * b @ rate(guess)
        series = new
    back = U * np.exp(-1j * E * T)[None, :]
    err = np.max(np.abs(np.abs(back @ psi) ** 2 - reference["exact"]))
    for p, r in zip(np.cumsum(series, axis=0), reference["series"]):
        err = max(err, np.max(np.abs(np.abs(back @ p) ** 2 - np.array(r))))
    return err, products, sweeps / steps


def main():
    job = json.load(sys.stdin)
    reference = sd.driven({**job, "rtol": 1e-12, "atol": 1e-14})
    for K in (3, 4, 5, 6):
        for steps in (10, 15, 20, 30, 40):
            err, products, sweeps = run(job, reference, K, steps)
            print(f"K={K} steps={steps} error={err:.2e} vector-products={products} sweeps/step={sweeps:.1f}")


if __name__ == "__main__":
    main()
