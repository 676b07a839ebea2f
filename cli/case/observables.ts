/**
 * `[[observable]]`: the user's own observables, each a name and an operator in the case's notation (the same as
 * the Hamiltonian's), checked Hermitian. Their expectation values are reported beside the populations.
 *
 * @module
 */

import { CaseError } from "./errors.ts";
import type { Operator } from "./complex_matrix.ts";
import type { Scope } from "./expression.ts";
import { evaluateOperator } from "./operators.ts";
import type { CaseSpec } from "./schema.ts";
import type { Space } from "./space.ts";

/** One observable, as a matrix in the case's basis. */
export interface Observable {
  name: string;
  matrix: Operator;
}

/**
 * The observables of a case.
 *
 * @param spec the case as written
 * @param space the Hilbert space
 * @param scope the params the operators may use
 * @returns the observables, in the order written
 * @throws {CaseError} for a repeated or empty name, or an operator that is not Hermitian
 */
export function buildObservables(spec: CaseSpec, space: Space, scope: Scope): Observable[] {
  const seen = new Set<string>();
  return (spec.observable ?? []).map(({ name, op }, k) => {
    const path = ["observable", k];
    if (!name.trim() || seen.has(name)) {
      throw new CaseError(
        `observable name "${name}" is empty or used twice`,
        [...path, "name"],
        "give each its own name",
      );
    }
    seen.add(name);
    const { matrix, hc } = evaluateOperator(op, space, scope, [...path, "op"]);
    const full = hc ? matrix.add(matrix.dagger()) : matrix;
    const defect = full.hermiticityDefect();
    if (defect.value > 1e-12 * Math.max(full.maxAbs(), 1e-300)) {
      throw new CaseError(
        `observable "${name}" is not Hermitian: largest |A−A†| is ${defect.value.toPrecision(3)} at ` +
          `(${space.labels[defect.row]}, ${space.labels[defect.col]})`,
        [...path, "op"],
        "an observable must be Hermitian: add + h.c. or the missing conjugate terms",
      );
    }
    return { name, matrix: full };
  });
}
