// The helper thread: large dense products split between two threads on one shared memory. Checked against
// mathjs (a general-purpose reference library) for the product itself, and for a whole run against the same
// run on one thread: splitting rows between threads must not change a single bit (each row is computed by the
// same code in the same order either way).
import { all, type Complex as MathComplex, create } from "mathjs";
import { assert, assertEqual } from "./assert.ts";
import { assertClose, eigenResidual, randomHermitian, runOrdo, seeded, tempCase } from "./helpers.ts";
import { drivenOscillator, glauberPopulations } from "./engine_helpers.ts";
import { eigh, loadEngine, multiply, populationsAt, type Result, solve, wantsHelper } from "../engine/mod.ts";
import { dense, drivenModel } from "../cli/commands/_bench_cases.ts";

const math = create(all!);

function toMath(m: Float64Array, d: number) {
  return math.matrix(
    Array.from(
      { length: d },
      (_, i) =>
        Array.from({ length: d }, (_, j) => math.complex(m[2 * (i * d + j)]!, m[2 * (i * d + j) + 1]!)),
    ),
  );
}

Deno.test("a product shared with the helper thread (d = 160) matches mathjs multiply to 1e-12", async () => {
  const engine = await loadEngine(undefined, { helper: true });
  try {
    const random = seeded(11), d = 160;
    const a = randomHermitian(d, random, 1), b = randomHermitian(d, random, 1);
    // The caller takes back a job the helper has not claimed by the time its own half is done (as it may on
    // a busy machine), so repeat until the helper has taken part at least once.
    let mine = multiply(engine, a, b, d);
    for (let k = 0; k < 200 && engine.exports.helperBlocks() === 0; k++) mine = multiply(engine, a, b, d);
    assert(engine.exports.helperBlocks() > 0, "the helper took no part in 200 products");
    const reference = math.multiply(toMath(a, d), toMath(b, d));
    let worst = 0;
    for (let i = 0; i < d; i++) {
      for (let j = 0; j < d; j++) {
        const z = math.complex(reference.get([i, j]) as MathComplex);
        worst = Math.max(
          worst,
          Math.abs(mine[2 * (i * d + j)]! - z.re),
          Math.abs(mine[2 * (i * d + j) + 1]! - z.im),
        );
      }
    }
    assert(worst < 1e-12, `largest difference from mathjs ${worst}`);
  } finally {
    engine.close();
  }
});

function same(a: Result, b: Result): boolean {
  return a.steps === b.steps && a.exact.every((x, k) => x === b.exact[k]) &&
    a.terms.every((term, n) => term.every((x, k) => x === b.terms[n]![k]));
}

Deno.test("a driven d = 128 run with the helper thread is bit-for-bit the run on one thread; so is a run after close()", async () => {
  const model = { ...drivenModel(dense(128), 1), accuracy: 1e-6, samples: 3 };
  assert(wantsHelper(model), "d = 128 dense is worth a helper");
  const alone = await loadEngine();
  const shared = await loadEngine(undefined, { helper: true });
  try {
    const one = solve(alone, model);
    const before = shared.exports.helperBlocks();
    for (let k = 0; k < 20 && shared.exports.helperBlocks() === before; k++) {
      assert(same(solve(shared, model), one), "the helper changed the result");
    }
    assert(shared.exports.helperBlocks() > before, "the helper took no part in 20 runs");
    shared.close();
    assert(same(solve(shared, model), one), "the engine after close() changed the result");
  } finally {
    alone.close();
    shared.close();
  }
});

Deno.test("the series in two halves (orders 2, 3, 5, 8; one and three columns at d = 64): the same bits with and without the helper, norms kept", async () => {
  const alone = await loadEngine(), shared = await loadEngine(undefined, { helper: true });
  try {
    const base = drivenModel(dense(64), 1), d = 64;
    for (const order of [2, 3, 5, 8]) {
      const initial = new Float64Array(6 * d);
      [0, 5, 17].forEach((level, c) => (initial[2 * (c * d + level)] = 1));
      for (
        const model of [
          { ...base, order, accuracy: 1e-6, samples: 3 },
          { ...base, order, accuracy: 1e-6, samples: 3, columns: 3, initial },
        ]
      ) {
        const one = solve(alone, model), columns = model.columns ?? 1;
        const before = shared.exports.helperBlocks();
        let two = solve(shared, model);
        for (let k = 0; k < 20 && shared.exports.helperBlocks() === before; k++) two = solve(shared, model);
        assert(shared.exports.helperBlocks() > before, `order ${order}: the helper took no part in 20 runs`);
        assert(same(two, one), `order ${order}, ${columns} column(s): the helper changed the result`);
        // the exact state of each column stays a unit vector (the evolution is unitary: a fact of quantum
        // mechanics), at every sample
        for (let k = 0; k < model.samples; k++) {
          for (let c = 0; c < columns; c++) {
            let norm = 0;
            for (let a = 0; a < 2 * d; a++) norm += two.exact[(k * columns + c) * 2 * d + a]! ** 2;
            assertClose(norm, 1, { abs: 1e-6 }, `order ${order}, sample ${k}, column ${c}: norm`);
          }
        }
      }
    }
  } finally {
    alone.close();
    shared.close();
  }
});

// First and second order of time-dependent perturbation theory for a constant coupling W switched on at t = 0, in
// H0's eigenbasis (H0 = diag E, c0 = |0⟩): c1_a = −i W_a0 ∫₀ᵀ e^{iω_a0 t} dt and c2_a = −Σ_b W_ab W_b0
// ∫₀ᵀ e^{iω_ab t} ∫₀ᵗ e^{iω_b0 s} ds dt, ω_ab = E_a − E_b (Sakurai, Modern Quantum Mechanics, §5.7; the integrals
// in closed form).
function dysonClosedForm(energies: number[], w: Float64Array, t: number) {
  const d = energies.length;
  type C = [number, number];
  const mul = (a: C, b: C): C => [a[0] * b[0] - a[1] * b[1], a[0] * b[1] + a[1] * b[0]];
  const div = (a: C, b: C): C => {
    const m = b[0] * b[0] + b[1] * b[1];
    return [(a[0] * b[0] + a[1] * b[1]) / m, (a[1] * b[0] - a[0] * b[1]) / m];
  };
  const cis = (x: number): C => [Math.cos(x), Math.sin(x)];
  // ∫₀ᵀ e^{ixt} dt, and ∫₀ᵀ t e^{ixt} dt
  const once = (x: number): C => (x === 0 ? [t, 0] : div([Math.cos(x * t) - 1, Math.sin(x * t)], [0, x]));
  const ramp = (x: number): C =>
    x === 0
      ? [t * t / 2, 0]
      : div([t * Math.cos(x * t) - once(x)[0], t * Math.sin(x * t) - once(x)[1]], [0, x]);
  const twice = (a: number, b: number): C => {
    if (b === 0) return ramp(a);
    const e = once(a + b), f = once(a);
    return div([e[0] - f[0], e[1] - f[1]], [0, b]);
  };
  const entry = (i: number, j: number): C => [w[2 * (i * d + j)]!, w[2 * (i * d + j) + 1]!];
  const first: C[] = [], second: C[] = [];
  for (let a = 0; a < d; a++) {
    first.push(mul([0, -1], mul(entry(a, 0), once(energies[a]! - energies[0]!))));
    let sum: C = [0, 0];
    for (let b = 0; b < d; b++) {
      const term = mul(
        mul(entry(a, b), entry(b, 0)),
        twice(energies[a]! - energies[b]!, energies[b]! - energies[0]!),
      );
      sum = [sum[0] - term[0], sum[1] - term[1]];
    }
    second.push(sum);
  }
  // ψ_n = e^{−iEt} c_n
  const back = (c: C[]) => c.map((x, a) => mul(cis(-energies[a]! * t), x));
  return { first: back(first), second: back(second) };
}

Deno.test("the series in two halves (d = 64, orders 2 and 3, alone and with the helper): first and second order as their closed forms", async () => {
  const d = 64, t = 5, random = seeded(21);
  const energies = Array.from({ length: d }, () => 4 * random() - 2);
  const h0 = new Float64Array(2 * d * d);
  energies.forEach((e, a) => (h0[2 * (a * d + a)] = e));
  const w = randomHermitian(d, random, 0.02);
  const initial = new Float64Array(2 * d);
  initial[0] = 1;
  const reference = dysonClosedForm(energies, w, t);
  const alone = await loadEngine(), shared = await loadEngine(undefined, { helper: true });
  try {
    for (const order of [2, 3]) {
      const model = {
        dim: d,
        unperturbed: [{ matrix: h0, coefficient: { kind: "constant" as const, re: 1, im: 0 } }],
        // a coefficient given as samples (so that the run takes the driven interaction-picture steps), all 1
        perturbation: [{
          matrix: w,
          coefficient: {
            kind: "sampled" as const,
            sample: (ts: Float64Array, out: Float64Array) =>
              ts.forEach((_, k) => ((out[2 * k] = 1), (out[2 * k + 1] = 0))),
          },
        }],
        strength: 1,
        initial,
        tStart: 0,
        tEnd: t,
        steps: 1,
        samples: 2,
        order,
        accuracy: 1e-10,
      };
      for (const [name, engine] of [["alone", alone], ["with the helper", shared]] as const) {
        const result = solve(engine, model);
        for (const [n, expected] of [[1, reference.first], [2, reference.second]] as const) {
          const term = result.terms[n]!;
          expected.forEach(([re, im], a) => {
            assertClose(
              term[2 * d + 2 * a]!,
              re,
              { abs: 1e-9 },
              `order ${order} ${name}: term ${n}, level ${a} (re)`,
            );
            assertClose(
              term[2 * d + 2 * a + 1]!,
              im,
              { abs: 1e-9 },
              `order ${order} ${name}: term ${n}, level ${a} (im)`,
            );
          });
        }
      }
    }
  } finally {
    alone.close();
    shared.close();
  }
});

Deno.test("a helper that joins a run already going (waitForHelper: false) changes no number; d = 64 shares", async () => {
  const model = { ...drivenModel(dense(64), 1), accuracy: 1e-6, samples: 3 };
  assert(wantsHelper(model), "d = 64 dense is worth a helper");
  const alone = await loadEngine();
  const one = solve(alone, model);
  // the run starts at once, alone; the worker joins (through the shared memory) while runs go on
  const shared = await loadEngine(undefined, { helper: true, waitForHelper: false });
  try {
    const started = performance.now();
    let runs = 0;
    while (shared.exports.helperBlocks() === 0 && performance.now() - started < 20000) {
      assert(same(solve(shared, model), one), `run ${runs} changed when the helper joined`);
      runs++;
      await new Promise((resolve) => setTimeout(resolve, 1)); // lets the worker's start-up messages through
    }
    assert(shared.exports.helperBlocks() > 0, `the helper never joined (${runs} runs)`);
    assert(same(solve(shared, model), one), "a run with the helper changed the result");
  } finally {
    alone.close();
    shared.close();
  }
  // a longer run (d = 192, ~100 ms): the worker starts, makes its instance on the shared memory and joins while
  // the caller is in the middle of it
  const big = { ...drivenModel(dense(192), 1), accuracy: 1e-5, samples: 2 };
  const reference = solve(alone, big);
  for (let k = 0; k < 2; k++) {
    const late = await loadEngine(undefined, { helper: true, waitForHelper: false });
    try {
      assert(same(solve(late, big), reference), "a run the helper joined midway changed");
    } finally {
      late.close();
    }
  }
});

Deno.test("products posted with no helper to take them are done by the caller (no hang, same numbers)", async () => {
  const model = { ...drivenModel(dense(128), 1), accuracy: 1e-6, samples: 3 };
  const alone = await loadEngine(), orphan = await loadEngine();
  orphan.exports.useHelper(1); // posts jobs that nobody claims
  assert(same(solve(orphan, model), solve(alone, model)), "the unclaimed jobs changed the result");
});

Deno.test("the eigensolver with the helper thread (d = 200): bit-for-bit the one-thread result; residuals, orthonormality, trace identities", async () => {
  const d = 200, a = randomHermitian(d, seeded(5), 1);
  const alone = await loadEngine(), shared = await loadEngine(undefined, { helper: true });
  try {
    const one = eigh(alone, a, d);
    const before = shared.exports.helperBlocks();
    const two = eigh(shared, a, d);
    assert(shared.exports.helperBlocks() > before, "the helper took no part");
    assert(one.values.every((x, k) => x === two.values[k]), "eigenvalues differ");
    assert(one.vectors.every((x, k) => x === two.vectors[k]), "eigenvectors differ");
    // facts of linear algebra: A z_k = λ_k z_k, Z†Z = I, Σλ = tr A, Σλ² = ‖A‖_F²
    const z = two.vectors, w = two.values;
    let overlap = 0, trace = 0, frobenius = 0;
    for (let i = 0; i < d; i++) trace += a[2 * (i * d + i)]!;
    for (let k = 0; k < 2 * d * d; k++) frobenius += a[k]! ** 2;
    const residual = eigenResidual(a, w, z, d, 7);
    for (let k = 0; k < d; k += 7) {
      for (let l = 0; l < d; l += 5) {
        let sr = 0, si = 0;
        for (let i = 0; i < d; i++) {
          const xr = z[2 * (i * d + k)]!, xi = z[2 * (i * d + k) + 1]!;
          const yr = z[2 * (i * d + l)]!, yi = z[2 * (i * d + l) + 1]!;
          sr += xr * yr + xi * yi;
          si += xr * yi - xi * yr;
        }
        overlap = Math.max(overlap, Math.hypot(sr - (k === l ? 1 : 0), si));
      }
    }
    assert(residual < 1e-12 * Math.sqrt(frobenius), `residual ${residual}`);
    assert(overlap < 1e-13, `orthonormality ${overlap}`);
    assert(Math.abs(w.reduce((s, x) => s + x, 0) - trace) < 1e-11, "Σλ ≠ tr A");
    assert(Math.abs(w.reduce((s, x) => s + x * x, 0) - frobenius) < 1e-10 * frobenius, "Σλ² ≠ ‖A‖_F²");
  } finally {
    alone.close();
    shared.close();
  }
});

// A = U·diag(E)·U† with U a product of Householder reflectors H = I − 2vv†/‖v‖² (unitary) has the spectrum E
// whatever U is (a unitary similarity keeps eigenvalues: common practice).
function withSpectrum(energies: number[], random: () => number): Float64Array {
  const d = energies.length, a = new Float64Array(2 * d * d);
  energies.forEach((e, k) => (a[2 * (k * d + k)] = e));
  for (let reflector = 0; reflector < 3; reflector++) {
    const v = Array.from({ length: 2 * d }, () => random() - 0.5);
    const f = 2 / v.reduce((s, x) => s + x * x, 0);
    // A ← A − f·v(v†A), then A ← A − f·(Av)v†
    for (const left of [true, false]) {
      const w = new Float64Array(2 * d);
      for (let o = 0; o < d; o++) {
        for (let i = 0; i < d; i++) {
          const k = left ? 2 * (i * d + o) : 2 * (o * d + i), ar = a[k]!, ai = a[k + 1]!;
          const vr = v[2 * i]!, vi = v[2 * i + 1]!;
          // left: Σ_i conj(v_i)·a_io; right: Σ_i a_oi·v_i
          w[2 * o] = w[2 * o]! + (left ? vr * ar + vi * ai : ar * vr - ai * vi);
          w[2 * o + 1] = w[2 * o + 1]! + (left ? vr * ai - vi * ar : ar * vi + ai * vr);
        }
      }
      for (let i = 0; i < d; i++) {
        for (let o = 0; o < d; o++) {
          // left: a_io −= f·v_i·w_o; right: a_oi −= f·w_o·conj(v_i)
          const k = left ? 2 * (i * d + o) : 2 * (o * d + i);
          const vr = v[2 * i]!,
            vi = left ? v[2 * i + 1]! : -v[2 * i + 1]!,
            wr = w[2 * o]!,
            wi = w[2 * o + 1]!;
          a[k] = a[k]! - f * (vr * wr - vi * wi);
          a[k + 1] = a[k + 1]! - f * (vr * wi + vi * wr);
        }
      }
    }
  }
  return a;
}

Deno.test("the eigensolver with the helper on clustered spectra (d = 96, 80): the known eigenvalues, orthonormal vectors, the one-thread bits", async () => {
  const random = seeded(23);
  const spread = (count: number, lo: number, hi: number) =>
    Array.from({ length: count }, (_, k) => lo + (hi - lo) * (k + random()) / count);
  const cases = [
    // a twelvefold level across the middle: the tridiagonal's vectors split at a cluster's edge, not inside it
    {
      name: "a twelvefold level across the middle (d = 96)",
      energies: [...spread(42, -5, -1), ...Array(12).fill(0.3), ...spread(42, 1, 5)],
    },
    // every level within 1e-4 of the next: one chain of close levels, so no split at all
    {
      name: "one chain of close levels (d = 80)",
      energies: Array.from({ length: 80 }, (_, k) => 1 + 1e-4 * k),
    },
  ];
  const alone = await loadEngine(), shared = await loadEngine(undefined, { helper: true });
  try {
    for (const { name, energies } of cases) {
      const d = energies.length, a = withSpectrum(energies, random);
      const one = eigh(alone, a, d);
      // (on a busy machine the helper may miss a run's jobs: the caller then does them all; again until it joins)
      const before = shared.exports.helperBlocks();
      let two = eigh(shared, a, d);
      for (let k = 0; k < 20 && shared.exports.helperBlocks() === before; k++) {
        assert(
          one.vectors.every((x, j) => x === two.vectors[j]),
          `${name}: eigenvectors differ from one thread's`,
        );
        two = eigh(shared, a, d);
      }
      assert(shared.exports.helperBlocks() > before, `${name}: the helper took no part in 20 runs`);
      assert(shared.exports.lastEighByInverseIteration() === 1, `${name}: inverse iteration refused`);
      assert(
        one.values.every((x, k) => x === two.values[k]),
        `${name}: eigenvalues differ from one thread's`,
      );
      assert(
        one.vectors.every((x, k) => x === two.vectors[k]),
        `${name}: eigenvectors differ from one thread's`,
      );
      const sorted = energies.slice().sort((x, y) => x - y);
      sorted.forEach((e, k) => assertClose(two.values[k]!, e, { abs: 1e-12 }, `${name}: eigenvalue ${k}`));
      assertClose(eigenResidual(a, two.values, two.vectors, d), 0, { abs: 1e-12 }, `${name}: ‖Az − λz‖`);
      let overlap = 0;
      for (let k = 0; k < d; k++) {
        for (let l = k; l < d; l++) {
          let sr = 0, si = 0;
          for (let i = 0; i < d; i++) {
            const xr = two.vectors[2 * (i * d + k)]!, xi = two.vectors[2 * (i * d + k) + 1]!;
            const yr = two.vectors[2 * (i * d + l)]!, yi = two.vectors[2 * (i * d + l) + 1]!;
            sr += xr * yr + xi * yi;
            si += xr * yi - xi * yr;
          }
          overlap = Math.max(overlap, Math.hypot(sr - (k === l ? 1 : 0), si));
        }
      }
      assert(overlap < 1e-13, `${name}: Z†Z − I is ${overlap}`);
    }
  } finally {
    alone.close();
    shared.close();
  }
});

Deno.test("the plain build owns its memory (no shared memory needed: Node, browsers); the shared build imports one", async () => {
  const imports = async (name: string) =>
    WebAssembly.Module.imports(
      await WebAssembly.compile(await Deno.readFile(new URL(`../engine/${name}`, import.meta.url))),
    );
  assert(!(await imports("ordo.wasm")).some((i) => i.kind === "memory"), "ordo.wasm imports a memory");
  assert(
    (await imports("ordo_shared.wasm")).some((i) => i.kind === "memory"),
    "ordo_shared.wasm owns its memory",
  );
  assert(
    !(await imports("ordo_fma.wasm")).some((i) => i.kind === "memory"),
    "ordo_fma.wasm imports a memory",
  );
  const plain = await loadEngine();
  assert(
    !(plain.exports.memory.buffer instanceof SharedArrayBuffer),
    "the default engine runs on shared memory",
  );
});

// Deno has relaxed SIMD, so it takes the builds with fused multiply-adds; the portable build (plain SIMD) is what
// a host without it gets. A fused multiply-add rounds once where a multiply and an add round twice: the two agree
// to rounding, not bit for bit. Both must also meet the Rabi formula (Rabi, Phys. Rev. 51, 1937):
// P_e = (4g²/Ω²) sin²(Ωt/2), Ω = √(Δ² + 4g²).
Deno.test("Deno takes the fused (relaxed-SIMD) builds; the portable build agrees to rounding on a driven d = 64 run", async () => {
  const fused = await loadEngine();
  const helped = await loadEngine(undefined, { helper: true });
  const portable = await loadEngine(await Deno.readFile(new URL("../engine/ordo.wasm", import.meta.url)));
  try {
    assertEqual(fused.exports.fusedMultiplyAdd(), 1, "ordo_fma.wasm fuses");
    assertEqual(helped.exports.fusedMultiplyAdd(), 1, "ordo_shared.wasm fuses");
    assertEqual(portable.exports.fusedMultiplyAdd(), 0, "ordo.wasm does not");
    const model = { ...drivenModel(dense(64), 1), accuracy: 1e-8, samples: 2 };
    const a = solve(fused, model), b = solve(portable, model);
    assertEqual(a.steps, b.steps, "the same steps");
    let worst = 0;
    for (let k = 0; k < a.exact.length; k++) worst = Math.max(worst, Math.abs(a.exact[k]! - b.exact[k]!));
    assert(worst < 1e-12, `the builds differ by ${worst}`);
    const one = { kind: "constant", re: 1, im: 0 } as const;
    const rabiModel = {
      dim: 2,
      unperturbed: [{ matrix: new Float64Array([0, 0, 0, 0, 0, 0, 0.8, 0]), coefficient: one }],
      perturbation: [{ matrix: new Float64Array([0, 0, 0.3, 0, 0.3, 0, 0, 0]), coefficient: one }],
      strength: 1,
      initial: new Float64Array([1, 0, 0, 0]),
      tStart: 0,
      tEnd: 25,
      steps: 1,
      samples: 2,
      order: 2,
    };
    const omega = Math.sqrt(0.8 ** 2 + 4 * 0.3 ** 2);
    const rabi = 4 * 0.09 / omega ** 2 * Math.sin(omega * 25 / 2) ** 2;
    for (const [name, engine] of [["fused", fused], ["portable", portable]] as const) {
      const excited = populationsAt(solve(engine, rabiModel).exact, 2, 1)[1]!;
      assertClose(excited, rabi, { abs: 1e-12 }, `${name} build: Rabi population`);
    }
  } finally {
    helped.close();
  }
});

Deno.test("after the helper has failed, runs work alone (same numbers, no hang)", async () => {
  const model = { ...drivenModel(dense(128), 1), accuracy: 1e-6, samples: 3 };
  const alone = await loadEngine(), shared = await loadEngine(undefined, { helper: true });
  try {
    shared.exports.helperFailed(); // as its worker reports a trap in a block
    const before = shared.exports.helperBlocks();
    assert(same(solve(shared, model), solve(alone, model)), "the result changed");
    assertEqual(shared.exports.helperBlocks(), before, "blocks the failed helper took");
  } finally {
    alone.close();
    shared.close();
  }
});

Deno.test("many shared jobs back to back (eigensolver and runs, d = 128 and 256): every result bit-for-bit the one-thread result", async () => {
  // Jobs follow each other within microseconds here, where a helper still finishing one job meets the caller
  // posting the next. (A race of that kind once counted a block twice and hung; it showed in about one of five
  // runs of ~50 000 jobs, so this smoke test of ~10 000 would seldom catch its like: the protocol's ordering is
  // argued in engine/assembly/share.ts.)
  const alone = await loadEngine(), shared = await loadEngine(undefined, { helper: true });
  try {
    for (const [d, rounds, runs] of [[128, 20, 4], [256, 30, 6]] as const) {
      const model = { ...drivenModel(dense(d), 1), accuracy: 1e-5, samples: 2 };
      const h0 = model.unperturbed[0]!.matrix;
      const one = eigh(alone, h0, d), run = solve(alone, model);
      for (let k = 0; k < rounds; k++) {
        const two = eigh(shared, h0, d);
        assert(
          two.vectors.every((x, i) => x === one.vectors[i]),
          `eigenvectors differ (d = ${d}, round ${k})`,
        );
      }
      for (let k = 0; k < runs; k++) {
        assert(same(solve(shared, model), run), `run differs (d = ${d}, round ${k})`);
      }
    }
  } finally {
    alone.close();
    shared.close();
  }
});

Deno.test("ordo run of a dense d = 120 driven oscillator (with its helper thread) ends in Glauber's coherent state", async () => {
  // Glauber, Phys. Rev. 131 (1963): from |0⟩ the driven oscillator stays coherent, Poisson populations with
  // mean |α|² (glauberPopulations). 120 Fock states: dense, so `ordo run` shares its products with a helper.
  const text = drivenOscillator(1, 0.1, 2, "accuracy = 1e-9")
    .replace("oscillator = 16", "oscillator = 120")
    .replace("order = 10", 'order = 10\ntargets = ["0", "1", "2", "3"]');
  const out = await runOrdo(["run", tempCase(text), "--json"]);
  assertEqual(out.code, 0, out.stderr);
  const final = JSON.parse(out.stdout).final.exact as Record<string, number>;
  glauberPopulations(1, 0.1, 2, 4).forEach((poisson, n) =>
    assertClose(final[String(n)]!, poisson, { abs: 1e-9 }, `P(${n})`)
  );
});
