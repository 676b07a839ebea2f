/**
 * Propagator columns in one run: the engine propagates m initial states together (`columns`), all by the same
 * products. Checked (1) for a random time-independent case against the Van Loan block exponential (Van Loan,
 * IEEE TAC 23 (1978) 395: the (n, 0) block of exp(−itA), A = I⊗H0 + S⊗V, is the n-th Dyson term of the
 * propagator), computed by mathjs `expm`, column by column; and (2) for every stepping method, against runs of
 * each column alone (the columns must not see each other).
 */

import { all, type Complex as MathComplex, create, type Matrix } from "mathjs";
import { assertClose, randomHermitian, seeded, testEngine } from "./helpers.ts";
import { constantModel } from "./engine_helpers.ts";
import { columnOf, type Model, solve } from "../engine/mod.ts";

const math = create(all!);

/** The m basis states e_j (j < m) of dimension d, one after another. */
function basisColumns(d: number, m: number): Float64Array {
  const out = new Float64Array(2 * d * m);
  for (let j = 0; j < m; j++) out[2 * (j * d + j)] = 1;
  return out;
}

Deno.test("propagator terms of a random time-independent case equal the Van Loan block exponential, column by column", async () => {
  const engine = await testEngine();
  const random = seeded(31);
  const d = 4, order = 3, t = 2.5, lambda = 0.7;
  const h0 = randomHermitian(d, random, 1), v = randomHermitian(d, random, 0.5);
  const model: Model = {
    ...constantModel(h0, v, basisColumns(d, d), t, 2, order),
    dim: d,
    columns: d,
    strength: lambda,
  };
  const result = solve(engine, model);
  // A = I⊗H0 + S⊗(λV), (N+1)d square; exp(−itA) by mathjs
  const size = (order + 1) * d;
  const a = math.zeros(size, size) as Matrix;
  for (let n = 0; n <= order; n++) {
    for (let i = 0; i < d; i++) {
      for (let j = 0; j < d; j++) {
        const k = 2 * (i * d + j);
        a.set([n * d + i, n * d + j], math.complex(h0[k]!, h0[k + 1]!));
        if (n > 0) a.set([n * d + i, (n - 1) * d + j], math.complex(lambda * v[k]!, lambda * v[k + 1]!));
      }
    }
  }
  const u = math.expm(math.multiply(math.complex(0, -t), a) as Matrix);
  const last = result.times.length - 1;
  for (let n = 0; n <= order; n++) {
    for (let j = 0; j < d; j++) {
      const column = columnOf(result, d, j).terms[n]!;
      for (let i = 0; i < d; i++) {
        const z = math.complex(u.get([n * d + i, j]) as MathComplex);
        const at = 2 * (last * d + i);
        assertClose(column[at]!, z.re, { abs: 1e-12 }, `Re U_${n}[${i}, ${j}]`);
        assertClose(column[at + 1]!, z.im, { abs: 1e-12 }, `Im U_${n}[${i}, ${j}]`);
      }
    }
  }
  // and the exact columns: exp(−it(H0 + λV)) from the same mathjs expm of the d×d matrix
  const h = math.zeros(d, d) as Matrix;
  for (let i = 0; i < d; i++) {
    for (let j = 0; j < d; j++) {
      const k = 2 * (i * d + j);
      h.set([i, j], math.complex(h0[k]! + lambda * v[k]!, h0[k + 1]! + lambda * v[k + 1]!));
    }
  }
  const exact = math.expm(math.multiply(math.complex(0, -t), h) as Matrix);
  for (let j = 0; j < d; j++) {
    const column = columnOf(result, d, j).exact;
    for (let i = 0; i < d; i++) {
      const z = math.complex(exact.get([i, j]) as MathComplex);
      assertClose(column[2 * (last * d + i)]!, z.re, { abs: 1e-12 }, `Re U[${i}, ${j}]`);
      assertClose(column[2 * (last * d + i) + 1]!, z.im, { abs: 1e-12 }, `Im U[${i}, ${j}]`);
    }
  }
});

/** A driven d-level model (constant or time-dependent H0) with m basis columns. */
function driven(d: number, m: number, opts: { accuracy?: number; h0Driven?: boolean }): Model {
  const random = seeded(7 + d);
  const h0 = randomHermitian(d, random, 1), v = randomHermitian(d, random, 0.3);
  const pulse = {
    kind: "sampled",
    sample: (ts: Float64Array, out: Float64Array) =>
      ts.forEach((
        t,
        k,
      ) => ((out[2 * k] = Math.exp(-((t - 3) ** 2)) * Math.cos(1.3 * t)), (out[2 * k + 1] = 0))),
  } as const;
  const slow = {
    kind: "sampled",
    sample: (ts: Float64Array, out: Float64Array) =>
      ts.forEach((t, k) => ((out[2 * k] = 1 + 0.2 * t), (out[2 * k + 1] = 0))),
  } as const;
  return {
    dim: d,
    unperturbed: [{ matrix: h0, coefficient: opts.h0Driven ? slow : { kind: "constant", re: 1, im: 0 } }],
    perturbation: [{ matrix: v, coefficient: pulse }],
    strength: 1,
    initial: basisColumns(d, m),
    columns: m,
    tStart: 0,
    tEnd: 6,
    steps: 200,
    samples: 5,
    order: 4,
    accuracy: opts.accuracy,
  };
}

Deno.test("columns propagated together equal each column propagated alone, for every stepping method", async () => {
  const engine = await testEngine();
  const d = 5, m = 3;
  const variants = [
    { name: "fixed steps, interaction picture", opts: {} },
    { name: "accuracy, Runge–Kutta in the interaction picture", opts: { accuracy: 1e-9 } },
    { name: "fixed steps, H0(t)", opts: { h0Driven: true } },
  ];
  for (const { name, opts } of variants) {
    const together = solve(engine, driven(d, m, opts));
    for (let j = 0; j < m; j++) {
      const alone = solve(engine, {
        ...driven(d, m, opts),
        columns: 1,
        initial: basisColumns(d, m).slice(2 * d * j, 2 * d * (j + 1)),
      });
      const mine = columnOf(together, d, j);
      // with an accuracy the steps are chosen on all columns at once, so they differ from the lone run's:
      // then agreement is to the accuracy, else to round-off
      const tolerance = opts.accuracy ? 10 * opts.accuracy : 1e-13;
      for (let k = 0; k < mine.exact.length; k++) {
        assertClose(mine.exact[k]!, alone.exact[k]!, { abs: tolerance }, `${name}: exact, column ${j}`);
        for (let n = 0; n < mine.terms.length; n++) {
          assertClose(
            mine.terms[n]![k]!,
            alone.terms[n]![k]!,
            { abs: tolerance },
            `${name}: term ${n}, column ${j}`,
          );
        }
      }
    }
  }
});
