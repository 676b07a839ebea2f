/**
 * Expectation values of the case's observables: ⟨O⟩ of the exact state, of each partial sum ψ0 + … + ψn (as
 * populations are, unnormalised), and at consistent order in λ, Σ_{m+l≤n} ⟨ψm|O|ψl⟩ (the expansion of ⟨ψ|O|ψ⟩ in
 * powers of λ truncated at n), at every recorded time.
 *
 * @module
 */

import type { Operator } from "../case/complex_matrix.ts";
import { applyOperator } from "../case/sparse_matrix.ts";
import type { Observable } from "../case/observables.ts";
import type { Result } from "../../engine/mod.ts";

/** One observable's values: exact[k], series[n][k], consistent[n][k]. */
export interface Expectation {
  name: string;
  exact: number[];
  series: number[][];
  consistent: number[][];
}

/** O·x for a d×d interleaved matrix and a d-vector at offset `at` of `states`, into out. */
function apply(o: Operator, d: number, states: Float64Array, at: number, out: Float64Array): void {
  out.set(applyOperator(o, states.subarray(at, at + 2 * d)));
}

/** Re⟨x|y⟩ of d-vectors x (at offset `at` of `states`) and y. */
function realDot(states: Float64Array, at: number, y: Float64Array, d: number): number {
  let s = 0;
  for (let a = 0; a < 2 * d; a++) s += states[at + a]! * y[a]!;
  return s;
}

/**
 * The expectation values of every observable at every recorded time.
 *
 * @param observables the case's observables
 * @param result the engine's result
 * @param d the dimension
 * @returns one entry per observable
 */
export function expectations(observables: Observable[], result: Result, d: number): Expectation[] {
  const samples = result.times.length, r = result.terms.length;
  return observables.map(({ name, matrix }) => {
    const o = matrix;
    const exact: number[] = [];
    const series = result.terms.map(() => [] as number[]),
      consistent = result.terms.map(() => [] as number[]);
    const oTerms = result.terms.map(() => new Float64Array(2 * d)), oExact = new Float64Array(2 * d);
    const partial = new Float64Array(2 * d), oPartial = new Float64Array(2 * d);
    for (let k = 0; k < samples; k++) {
      const at = 2 * d * k;
      apply(o, d, result.exact, at, oExact);
      exact.push(realDot(result.exact, at, oExact, d));
      result.terms.forEach((term, l) => apply(o, d, term, at, oTerms[l]!));
      partial.fill(0);
      oPartial.fill(0);
      let running = 0;
      for (let n = 0; n < r; n++) {
        for (let a = 0; a < 2 * d; a++) {
          partial[a]! += result.terms[n]![at + a]!;
          oPartial[a]! += oTerms[n]![a]!;
        }
        series[n]!.push(realDot(partial, 0, oPartial, d));
        // the terms of total order n: Σ_{m+l=n} Re⟨ψm|O|ψl⟩
        for (let m = 0; m <= n; m++) running += realDot(result.terms[m]!, at, oTerms[n - m]!, d);
        consistent[n]!.push(running);
      }
    }
    return { name, exact, series, consistent };
  });
}
