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

/** The accuracy a stepped run asks for when a case gives neither steps nor accuracy. */
export const DEFAULT_ACCURACY = 1e-8;

/**
 * Integrator nodes at which an accuracy-driven run is checked before it starts (its own steps are chosen as it
 * runs): this many steps' nodes over the window, or 8 per recorded interval if that is more.
 */
export const ACCURACY_CHECK_STEPS = 20_000;

/** The highest Dyson order a case may ask for. */
export const MAX_ORDER = 40;

/** The window and series settings of a case. */
export interface Settings {
  tStart: number;
  tEnd: number;
  /** Fixed steps, or (with an accuracy) the steps whose nodes are checked before the run. */
  steps: number;
  /** The accuracy the engine chooses its steps for; undefined for fixed steps. */
  accuracy: number | undefined;
  samples: number;
  order: number;
  strength: number;
  /** Absolute tolerance on populations (with a relative one: the floor below which populations are judged absolutely). */
  tolerance: number;
  /** Relative tolerance on populations (0: none): a population passes within max(tolerance, relative·P). */
  relativeTolerance: number;
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
  overrides: { order?: number; steps?: number; accuracy?: number },
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
  const samples = spec.grid.samples;
  const accuracy = chooseAccuracy(spec, overrides);
  const steps = accuracy !== undefined
    ? Math.max(ACCURACY_CHECK_STEPS, 8 * (samples - 1))
    : (overrides.steps ?? spec.grid.steps)!;
  if (steps < 1) {
    throw new CaseError(
      `steps = ${steps}, but at least 1 integrator step is needed`,
      ["grid", "steps"],
      "set steps ≥ 1 (see `ordo inspect` for a suggestion)",
    );
  }
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
  const written = spec.series.tolerance;
  if (typeof written === "object" && written.abs === undefined && written.rel === undefined) {
    throw new CaseError(
      "tolerance gives neither abs nor rel",
      ["series", "tolerance"],
      "e.g. { rel = 0.01, abs = 1e-10 }",
    );
  }
  // A relative tolerance alone is judged absolutely below 1e-12 (where a population is round-off).
  const tolerance = typeof written === "number" ? written : written?.abs ?? (written?.rel ? 1e-12 : 1e-6);
  const relativeTolerance = typeof written === "object" ? written.rel ?? 0 : 0;
  return { tStart, tEnd, steps, accuracy, samples, order, strength, tolerance, relativeTolerance };
}

/** Fixed steps (a number) or an accuracy: the command line first, then the case, then the default accuracy. */
function chooseAccuracy(
  spec: CaseSpec,
  overrides: { steps?: number; accuracy?: number },
): number | undefined {
  if (overrides.steps !== undefined) return undefined;
  if (overrides.accuracy !== undefined) {
    if (!(overrides.accuracy > 0 && overrides.accuracy < 1)) {
      throw new CaseError(
        `--accuracy ${overrides.accuracy} is not between 0 and 1`,
        [],
        "e.g. --accuracy 1e-8",
      );
    }
    return overrides.accuracy;
  }
  if (spec.grid.steps !== undefined && spec.grid.accuracy !== undefined) {
    throw new CaseError(
      "gives both steps and accuracy",
      ["grid"],
      "keep accuracy (the engine chooses its steps) or steps (fixed steps), not both",
    );
  }
  if (spec.grid.accuracy !== undefined && !(spec.grid.accuracy < 1)) {
    throw new CaseError(`accuracy = ${spec.grid.accuracy} is not below 1`, ["grid", "accuracy"], "e.g. 1e-8");
  }
  if (spec.grid.steps !== undefined) return undefined;
  return spec.grid.accuracy ?? DEFAULT_ACCURACY;
}

function realConstant(v: number | string, path: KeyPath, scope: Scope): number {
  if (typeof v === "number") return v;
  const value = compileExpression(v, scope, path).at(0);
  if (typeof value !== "number") {
    throw new CaseError(`must be real, got ${showValue(value)}`, path);
  }
  return value;
}
