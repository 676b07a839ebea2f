/**
 * One run of one case: the series and the exact propagation, and the
 * order-by-order analysis at the reported time.
 *
 * @module
 */

import { analyse, type Analysis, resolutionOf } from "./verdict.ts";
import { driveSpectra, driveWarning } from "./drive_spectrum.ts";
import { inChosenBasis, interactionPicture } from "./eigenbasis.ts";
import { type Expectation, expectations } from "./expectations.ts";
import type { BuiltCase } from "../case/build.ts";
import { engineModel, inspectCase, type Inspection, normIntegralAt, turningFrom } from "./inspection.ts";
import { columnOf, type Engine, type Result, schemeFor, solve } from "../../engine/mod.ts";
import { type Gate, gateColumns, gateOf, withColumns } from "./gate.ts";

/** A finished run with its analysis. */
export interface RunOutcome {
  built: BuiltCase;
  info: Inspection;
  result: Result;
  analysis: Analysis;
  /** The case's observables at every recorded time. */
  observed: Expectation[];
  /** The states whose amplitudes are reported: the result's own, or in the interaction picture. */
  amplitudes: { exact: Float64Array; terms: Float64Array[] };
  /** With a subspace: the gate the run performs on it (in the case's own labels), order by order. */
  gate?: Gate;
}

/**
 * Runs a built case.
 *
 * @param engine a loaded engine
 * @param built the case
 * @param at report at the recorded time nearest to this (default: the end)
 * @param onProgress progress callback (fraction done)
 * @returns the result and its analysis
 */
export function runCase(
  engine: Engine,
  built: BuiltCase,
  at?: number,
  onProgress?: (f: number) => void,
): RunOutcome {
  const info = inspectCase(engine, built);
  const drives = driveWarning(built, driveSpectra(built, info));
  if (drives && !built.warnings.includes(drives)) built.warnings.push(drives);
  const turning = turningFrom(info);
  const model = engineModel(built, turning);
  // with a subspace, its propagator columns ride along with the start state in the same run
  const columns = built.subspace ? gateColumns(built, schemeFor(built.model)) : undefined;
  const run = solve(engine, columns ? withColumns(model, columns) : model, onProgress);
  const gate = columns ? gateOf(engine, built, run, columns, turning.eigen) : undefined;
  const solved = columnOf(run, built.model.dim, 0);
  // From here on the case and result are seen in the basis the case asks for.
  const chosen = inChosenBasis(engine, built, info, solved);
  const result = chosen.result;
  built = chosen.built;
  let sample = result.times.length - 1;
  if (at !== undefined) {
    let best = Infinity;
    result.times.forEach((t, k) => {
      if (Math.abs(t - at) < best) [best, sample] = [Math.abs(t - at), k];
    });
  }
  // The tail bound at the reported time uses x = ∫‖λV‖ds up to that time.
  const x = normIntegralAt(info, result.times[sample]!);
  const resolution = resolutionOf(result, turning.rate, built.model.accuracy, built.relativeTolerance);
  const analysis = analyse(result, built.space.labels, built.targets, x, built.tolerance, sample, resolution);
  const amplitudes = built.picture === "interaction"
    ? interactionPicture(engine, built, info, result)
    : result;
  const observed = expectations(built.observables, result, built.model.dim);
  return { built, info, result, analysis, observed, amplitudes, ...(gate ? { gate } : {}) };
}
