/**
 * Reporting in H0's eigenbasis (dressed states when H0 is not diagonal): every recorded state turned by U†
 * (U: H0's eigenvectors as columns), and each eigenstate named after the bare label it is mostly made of; when
 * two eigenstates share a dominant label the assignment is ambiguous, said, and the second gets a suffix.
 *
 * @module
 */

import { CaseError } from "../case/errors.ts";
import { ComplexMatrix } from "../case/complex_matrix.ts";
import { type BuiltCase, checkTargets } from "../case/build.ts";
import type { Inspection } from "./inspection.ts";
import { type Engine, type Result, transformStates } from "../../engine/mod.ts";

/**
 * The case and result as seen in the basis the case asks for.
 *
 * @param engine a loaded engine (its kernel turns the states)
 * @param built the case
 * @param info its inspection (H0's eigen-decomposition)
 * @param result the engine's result, in the bare basis
 * @returns the case with the eigenstates' labels, and the result in the eigenbasis (unchanged for "bare")
 */
export function inChosenBasis(
  engine: Engine,
  built: BuiltCase,
  info: Inspection,
  result: Result,
): { built: BuiltCase; result: Result } {
  if (built.basis === "bare") return { built, result };
  if (info.scheme === "time-dependent-h0") {
    throw new CaseError(
      "basis = eigen needs a constant H0: its eigenbasis changes with time here",
      ["series", "basis"],
      'use basis = "bare"',
    );
  }
  const d = built.model.dim, spectrum = info.spectrum[0]!;
  const labels: string[] = [], ambiguous: string[] = [];
  for (const name of spectrum.dominant) {
    let label = name;
    for (let n = 2; labels.includes(label); n++) label = `${name}#${n}`;
    if (label !== name) ambiguous.push(`${label} (mostly ${name}, as another eigenstate is)`);
    labels.push(label);
  }
  const view: BuiltCase = { ...built, space: { ...built.space, labels }, warnings: [...built.warnings] };
  if (ambiguous.length) view.warnings.push(`eigenstates named ambiguously: ${ambiguous.join(", ")}`);
  checkTargets(built.targets, view.space, true);
  const uDagger = new ComplexMatrix(d, d, spectrum.vectors).dagger().data;
  const turn = (states: Float64Array) => transformStates(engine, uDagger, states, d);
  return {
    built: view,
    result: {
      ...result,
      exact: turn(result.exact),
      check: turn(result.check),
      terms: result.terms.map(turn),
    },
  };
}

/**
 * The recorded states in the interaction picture, ψ_I(t) = e^{iH0(t−t0)}ψ(t) = U·e^{iE(t−t0)}·U†ψ(t), in the basis
 * the case is reported in (in the eigenbasis only the phases e^{iE(t−t0)}).
 *
 * @param engine a loaded engine
 * @param built the case (as seen in its reporting basis)
 * @param info its inspection (H0's eigen-decomposition)
 * @param result the result (in the reporting basis)
 * @returns the exact state and the Dyson terms in the interaction picture
 */
export function interactionPicture(
  engine: Engine,
  built: BuiltCase,
  info: Inspection,
  result: Result,
): { exact: Float64Array; terms: Float64Array[] } {
  if (info.scheme === "time-dependent-h0") {
    throw new CaseError(
      "picture = interaction needs a constant H0",
      ["series", "picture"],
      'use picture = "schrodinger" when H0 depends on time',
    );
  }
  const d = built.model.dim, { values, vectors } = info.spectrum[0]!;
  const u = new ComplexMatrix(d, d, vectors), uDagger = u.dagger().data;
  const eigen = built.basis === "eigen";
  const turn = (states: Float64Array) => {
    const inEigen = eigen ? states.slice() : transformStates(engine, uDagger, states, d);
    result.times.forEach((t, k) => {
      const tau = t - built.model.tStart;
      for (let a = 0; a < d; a++) {
        const c = Math.cos(values[a]! * tau), s = Math.sin(values[a]! * tau);
        const p = 2 * (k * d + a), re = inEigen[p]!, im = inEigen[p + 1]!;
        inEigen[p] = c * re - s * im;
        inEigen[p + 1] = c * im + s * re;
      }
    });
    return eigen ? inEigen : transformStates(engine, u.data, inEigen, d);
  };
  return { exact: turn(result.exact), terms: result.terms.map(turn) };
}
