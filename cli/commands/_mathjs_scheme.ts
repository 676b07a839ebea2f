/**
 * The interaction-picture scheme written the way a JavaScript user would
 * write it with mathjs complex matrices: the baseline of `ordo bench`. Same
 * integrator (two-exponential commutator-free, 4th order), same order-resolved
 * factors, exact factors by mathjs `expm`. Private to the benchmark.
 *
 * @module
 */

import { all, type Complex, create, type Matrix } from "mathjs";

const math = create(all!);

/** A driven model for the baseline: constant H0 (dense), V·f(t). */
export interface BaselineModel {
  dim: number;
  h0: number[][][]; // [re, im] entries
  v: number[][][];
  f: (t: number) => number;
  order: number;
  tEnd: number;
}

/**
 * Runs `steps` steps of the scheme and returns the elapsed milliseconds per step.
 *
 * @param model the model
 * @param steps how many steps to time
 * @param totalSteps the step count that sets h (as the engine would use)
 * @returns milliseconds per step
 */
export function mathjsScheme(model: BaselineModel, steps: number, totalSteps: number): number {
  const d = model.dim;
  const toMatrix = (m: number[][][]) =>
    math.matrix(m.map((row) => row.map(([re, im]) => math.complex(re!, im!))));
  const eig = math.eigs(toMatrix(model.h0));
  const energies = (eig.values as Matrix).toArray().map((x) =>
    typeof x === "number" ? x : math.complex(x as Complex).re
  );
  const vectors = math.matrix(
    Array.from(
      { length: d },
      (_, i) => eig.eigenvectors.map((e) => (e.vector as Matrix).get([i]) as Complex),
    ),
  );
  const w = math.multiply(math.multiply(math.ctranspose(vectors), toMatrix(model.v)), vectors) as Matrix;
  const h = model.tEnd / totalSteps;
  const s3 = Math.sqrt(3);
  const [c1, c2, a1, a2] = [0.5 - s3 / 6, 0.5 + s3 / 6, 0.25 + s3 / 6, 0.25 - s3 / 6];
  const phase = (t: number) =>
    math.matrix(
      Array.from({ length: d }, (_, a) =>
        Array.from({ length: d }, (_, b) =>
          math.exp(math.complex(0, (energies[a]! - energies[b]!) * t)))),
    );
  const vi = (t: number) => math.multiply(model.f(t), math.dotMultiply(phase(t), w)) as Matrix;
  let terms: Matrix[] = Array.from(
    { length: model.order + 1 },
    (_, n) => math.matrix(Array.from({ length: d }, (_, a) => [math.complex(n === 0 && a === 0 ? 1 : 0, 0)])),
  );
  let exact = terms[0]!;
  const minusIH = math.complex(0, -h);
  const started = performance.now();
  for (let s = 0; s < steps; s++) {
    const t = s * h;
    const w1 = vi(t + c1 * h), w2 = vi(t + c2 * h);
    for (
      const x of [
        math.add(math.multiply(a1, w1), math.multiply(a2, w2)),
        math.add(math.multiply(a2, w1), math.multiply(a1, w2)),
      ] as Matrix[]
    ) {
      // order-resolved factor: new_n = Σ_k (−ihX)^k/k! · ψ_{n−k}
      const next = terms.slice();
      let powers = terms.slice(0, -1);
      for (let k = 1; k <= model.order; k++) {
        powers = powers.slice(0, model.order - k + 1).map((p) =>
          math.multiply(math.multiply(minusIH, x), p) as Matrix
        )
          .map((p) => math.divide(p, k) as Matrix);
        powers.forEach((p, m) => (next[m + k] = math.add(next[m + k]!, p) as Matrix));
      }
      terms = next;
      exact = math.multiply(math.expm(math.multiply(minusIH, x) as Matrix), exact) as Matrix;
    }
  }
  return (performance.now() - started) / steps;
}
