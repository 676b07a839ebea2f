/**
 * Sparse operators in the engine: the CSR kernels against plain JavaScript, and a random sparse case propagated
 * with CSR terms against the dense path, every Dyson order: to round-off against the same integrator on dense
 * matrices, and to 1e-10 against an independent method (the dense interaction-picture Runge–Kutta run at a
 * tighter accuracy).
 */

import { assertEqual } from "./assert.ts";
import { assertClose, seeded, testEngine } from "./helpers.ts";
import { type Coefficient, type Model, type OperatorTerm, solve, type SparseMatrix } from "../engine/mod.ts";

/** A random sparse Hermitian d×d matrix (dense storage): a diagonal and `perRow` random partners per row. */
function sparseHermitian(d: number, random: () => number, perRow: number, scale: number): Float64Array {
  const m = new Float64Array(2 * d * d);
  for (let i = 0; i < d; i++) {
    m[2 * (i * d + i)] = scale * (2 * random() - 1);
    for (let k = 0; k < perRow; k++) {
      const j = Math.floor(random() * d);
      if (j === i) continue;
      const re = scale * (random() - 0.5), im = scale * (random() - 0.5);
      m[2 * (i * d + j)] = re;
      m[2 * (i * d + j) + 1] = im;
      m[2 * (j * d + i)] = re;
      m[2 * (j * d + i) + 1] = -im;
    }
  }
  return m;
}

/** Dense (interleaved) → CSR, keeping the exact non-zeros. */
function toCsr(m: Float64Array, d: number): SparseMatrix {
  const rowStart = new Int32Array(d + 1), column: number[] = [], values: number[] = [];
  for (let i = 0; i < d; i++) {
    for (let j = 0; j < d; j++) {
      const re = m[2 * (i * d + j)]!, im = m[2 * (i * d + j) + 1]!;
      if (re !== 0 || im !== 0) {
        column.push(j);
        values.push(re, im);
      }
    }
    rowStart[i + 1] = column.length;
  }
  return { rowStart, column: Int32Array.from(column), values: Float64Array.from(values) };
}

Deno.test("the sparse kernels (SIMD and reference) agree with plain JS", async () => {
  const { exports: e } = await testEngine();
  const random = seeded(17);
  for (const d of [1, 3, 17, 64]) {
    const dense = sparseHermitian(d, random, 3, 1);
    const csr = toCsr(dense, d);
    const nnz = csr.column.length;
    for (const r of [1, 2, 4, 5, 9]) {
      e.arenaReset();
      const rows = e.arenaAlloc(4 * (d + 1)),
        cols = e.arenaAlloc(4 * Math.max(nnz, 1)),
        vals = e.arenaAlloc(16 * Math.max(nnz, 1)),
        x = e.arenaAlloc(16 * d * r),
        y1 = e.arenaAlloc(16 * d * r),
        y2 = e.arenaAlloc(16 * d * r);
      new Int32Array(e.memory.buffer, rows, d + 1).set(csr.rowStart);
      new Int32Array(e.memory.buffer, cols, nnz).set(csr.column);
      new Float64Array(e.memory.buffer, vals, 2 * nnz).set(csr.values);
      const X = new Float64Array(e.memory.buffer, x, 2 * d * r);
      X.forEach((_, k) => (X[k] = random() - 0.5));
      const [ar, ai] = [0.4, -1.1];
      e.zcsrmvRef(rows, cols, vals, d, x, y1, r, ar, ai);
      e.zcsrmvSimd(rows, cols, vals, d, x, y2, r, ar, ai);
      const Y1 = new Float64Array(e.memory.buffer, y1, 2 * d * r),
        Y2 = new Float64Array(e.memory.buffer, y2, 2 * d * r);
      for (let v = 0; v < r; v++) {
        for (let i = 0; i < d; i++) {
          let sr = 0, si = 0;
          for (let j = 0; j < d; j++) {
            const pr = dense[2 * (i * d + j)]!, pi = dense[2 * (i * d + j) + 1]!;
            const xr = X[2 * (v * d + j)]!, xi = X[2 * (v * d + j) + 1]!;
            sr += pr * xr - pi * xi;
            si += pr * xi + pi * xr;
          }
          const k = 2 * (v * d + i), js = [ar * sr - ai * si, ar * si + ai * sr];
          for (const c of [0, 1]) {
            assertClose(Y1[k + c]!, js[c]!, { abs: 1e-13 }, `reference d=${d} r=${r}`);
            assertClose(Y2[k + c]!, js[c]!, { abs: 1e-13 }, `SIMD d=${d} r=${r}`);
          }
        }
      }
    }
  }
});

const pulse: Coefficient = {
  kind: "sampled",
  sample: (ts, out) =>
    ts.forEach((
      t,
      k,
    ) => ((out[2 * k] = Math.exp(-0.5 * ((t - 2.5) / 0.8) ** 2) * Math.cos(2 * t)), (out[2 * k + 1] = 0))),
};
const one: Coefficient = { kind: "constant", re: 1, im: 0 };
// 1, as a sampled coefficient: makes the dense path use the same Schrödinger-picture integrator as the sparse one
const sampledOne: Coefficient = {
  kind: "sampled",
  sample: (ts, out) => ts.forEach((_, k) => ((out[2 * k] = 1), (out[2 * k + 1] = 0))),
};

function randomSparseCase(sparse: boolean, h0Coefficient: Coefficient, grid: Partial<Model>): Model {
  const d = 200, random = seeded(200);
  const h0 = sparseHermitian(d, random, 2, 1), v = sparseHermitian(d, random, 3, 0.15);
  const term = (m: Float64Array, coefficient: Coefficient): OperatorTerm =>
    sparse ? { matrix: new Float64Array(0), sparse: toCsr(m, d), coefficient } : { matrix: m, coefficient };
  const initial = new Float64Array(2 * d);
  initial[0] = 1;
  return {
    dim: d,
    unperturbed: [term(h0, h0Coefficient)],
    perturbation: [term(v, pulse)],
    strength: 1,
    initial,
    tStart: 0,
    tEnd: 5,
    steps: 1000,
    samples: 3,
    order: 4,
    ...grid,
  };
}

Deno.test("a random sparse d = 200 case: every Dyson order against the dense path (same integrator, and an independent one)", async () => {
  const engine = await testEngine();
  const sparse = solve(engine, randomSparseCase(true, one, { steps: 150 }));
  const denseSame = solve(engine, randomSparseCase(false, sampledOne, { steps: 150 }));
  for (let n = 0; n < sparse.terms.length; n++) {
    sparse.terms[n]!.forEach((x, k) =>
      assertClose(x, denseSame.terms[n]![k]!, { abs: 1e-12 }, `order ${n}, same integrator`)
    );
  }
  sparse.exact.forEach((x, k) =>
    assertClose(x, denseSame.exact[k]!, { abs: 1e-12 }, "exact, same integrator")
  );
  // independent: the sparse run to an accuracy, against the dense interaction-picture Runge–Kutta run tighter
  const sparseAccurate = solve(engine, randomSparseCase(true, one, { accuracy: 1e-11 }));
  const denseRk = solve(engine, randomSparseCase(false, one, { accuracy: 1e-13 }));
  for (let n = 0; n < sparseAccurate.terms.length; n++) {
    sparseAccurate.terms[n]!.forEach((x, k) =>
      assertClose(x, denseRk.terms[n]![k]!, { abs: 1e-10 }, `order ${n}, against the interaction-picture run`)
    );
  }
  sparseAccurate.exact.forEach((x, k) => assertClose(x, denseRk.exact[k]!, { abs: 1e-10 }, "exact"));
});

/** The random sparse case with H0 replaced by its diagonal (the usual bare basis). */
function diagonalCase(sparse: boolean, accuracy: number): Model {
  const model = randomSparseCase(sparse, one, { accuracy });
  const d = model.dim, h0 = new Float64Array(2 * d * d);
  const random = seeded(7);
  for (let a = 0; a < d; a++) h0[2 * (a * d + a)] = 2 * random() - 1;
  const term: OperatorTerm = sparse
    ? { matrix: new Float64Array(0), sparse: toCsr(h0, d), coefficient: one }
    : { matrix: h0, coefficient: one };
  return { ...model, unperturbed: [term] };
}

Deno.test("a sparse case with a diagonal H0 runs in the interaction picture with sparse products, as the dense path does", async () => {
  const engine = await testEngine();
  const sparse = solve(engine, diagonalCase(true, 1e-11));
  const dense = solve(engine, diagonalCase(false, 1e-12));
  assertEqual(sparse.scheme, "sparse-interaction");
  for (let n = 0; n < sparse.terms.length; n++) {
    sparse.terms[n]!.forEach((x, k) => assertClose(x, dense.terms[n]![k]!, { abs: 1e-10 }, `order ${n}`));
  }
  sparse.exact.forEach((x, k) => assertClose(x, dense.exact[k]!, { abs: 1e-10 }, "exact"));
});
