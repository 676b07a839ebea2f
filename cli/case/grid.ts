/**
 * `[grid]` and `[series]`: the time window, integrator steps and recorded
 * samples, the Dyson order, λ and the tolerance, with the command line's
 * overrides applied and each value checked.
 *
 * @module
 */

import { CaseError, type KeyPath } from "./errors.ts";
import type { CaseSpec } from "./schema.ts";
import { compileExpression, type Scope } from "./expression.ts";
import { showValue } from "./params.ts";

/** The highest Dyson order a case may ask for. */
export const MAX_ORDER = 40;

/** The window and series settings of a case. */
export interface Settings {
  tStart: number;
  tEnd: number;
  steps: number;
  samples: number;
  order: number;
  strength: number;
  tolerance: number;
}

/**
 * Reads and checks `[grid]` and `[series]`.
 *
 * @param spec the case as written
 * @param overrides `--order` and `--steps`
 * @param scope the params that t_start and t_end may use
 * @returns the settings
 * @throws {CaseError} for a window that is not finite or empty, too few steps or samples, or an order out of range
 */
export function readSettings(
  spec: CaseSpec,
  overrides: { order?: number; steps?: number },
  scope: Scope,
): Settings {
  const tStart = realConstant(spec.grid.t_start, ["grid", "t_start"], scope);
  const tEnd = realConstant(spec.grid.t_end, ["grid", "t_end"], scope);
  for (const [v, key] of [[tStart, "t_start"], [tEnd, "t_end"]] as const) {
    if (!Number.isFinite(v)) {
      throw new CaseError(`${key} is ${v}`, ["grid", key], "give a finite time");
    }
  }
  if (!(tEnd > tStart)) {
    throw new CaseError(
      `t_end = ${tEnd} is not after t_start = ${tStart}`,
      ["grid", "t_end"],
      "set t_end larger than t_start",
    );
  }
  const steps = overrides.steps ?? spec.grid.steps;
  if (steps < 1) {
    throw new CaseError(
      `steps = ${steps}, but at least 1 integrator step is needed`,
      ["grid", "steps"],
      "set steps ≥ 1 (see `ordo inspect` for a suggestion)",
    );
  }
  const samples = spec.grid.samples;
  if (samples < 2) {
    throw new CaseError(
      `samples = ${samples}, but the two ends are always recorded`,
      ["grid", "samples"],
      "set samples ≥ 2",
    );
  }
  const order = overrides.order ?? spec.series.order;
  if (order < 0 || order > MAX_ORDER) {
    throw new CaseError(
      `order = ${order} is outside 0…${MAX_ORDER}`,
      ["series", "order"],
      `the Dyson order N counts powers of V: set 0 ≤ order ≤ ${MAX_ORDER}`,
    );
  }
  const strength = spec.series.strength ?? 1;
  const tolerance = spec.series.tolerance ?? 1e-6;
  return { tStart, tEnd, steps, samples, order, strength, tolerance };
}

function realConstant(v: number | string, path: KeyPath, scope: Scope): number {
  if (typeof v === "number") return v;
  const value = compileExpression(v, scope, path).at(0);
  if (typeof value !== "number") {
    throw new CaseError(`must be real, got ${showValue(value)}`, path);
  }
  return value;
}
