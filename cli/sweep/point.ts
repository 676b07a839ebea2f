/**
 * Evaluating sweep points: one case, many parameter values. Used by the
 * sweep workers and by `ordo check`. A point's result is the exact and
 * partial-sum populations of every target at the final time, and the
 * smallest order within tolerance.
 *
 * @module
 */

import { analyse, type Resolution, resolutionOf } from "../analysis/verdict.ts";
import { engineModel, turningOf } from "../analysis/inspection.ts";
import { buildCase, type BuildOptions, type BuiltCase } from "../case/build.ts";
import { parseCase, withLocation } from "../case/parse.ts";
import { CaseError } from "../case/errors.ts";
import { compileExpression } from "../case/expression.ts";
import { STRENGTH } from "../case/params.ts";
import { csvField } from "../base/csv.ts";
import { columnOf, type Engine, populationsAt, type Result, solve } from "../../engine/mod.ts";
import { gateOf, withColumns } from "../analysis/gate.ts";

/** What every point shares. */
export interface SweepSetup {
  /** The case text and file name (parsed once per evaluator). */
  text: string;
  file: string;
  /** Overrides common to all points. */
  options: BuildOptions;
  /** The swept names, in grid order. */
  axes: string[];
  /** Formulas to evaluate at each point's final time (for `ordo check`). */
  formulas?: string[];
}

/** One evaluated point. */
export interface PointResult {
  index: number;
  values: number[];
  /** Per target: exact population at the final time. */
  exact: number[];
  /** Per target, per order n = 0…N: partial-sum population at the final time. */
  orders: number[][];
  /** Per target: smallest order within tolerance, or null. */
  minOrder: (number | null)[];
  /** The setup's formulas at the final time, in order. */
  formulas: number[];
  /** With a subspace: the gate's fidelity per order and the exact leakage at the final time. */
  gate?: { fidelity: number[]; leakage: number };
}

/** Builds and solves the points of one sweep with one engine. */
export class PointEvaluator {
  readonly #engine: Engine;
  readonly #setup: SweepSetup;
  readonly #source;
  /** The case as built with the common overrides (labels, targets, tolerance). */
  readonly base: BuiltCase;

  /**
   * @param engine an engine instance (one per worker)
   * @param setup the sweep's shared setup
   */
  constructor(engine: Engine, setup: SweepSetup) {
    this.#engine = engine;
    this.#setup = setup;
    this.#source = parseCase(setup.text, setup.file);
    this.base = buildCase(this.#source, setup.options);
  }

  /** The case built at one point's values. */
  build(values: number[]): BuiltCase {
    const set = { ...this.#setup.options.set };
    let strength: number | undefined;
    this.#setup.axes.forEach((name, a) => {
      if (name === STRENGTH) strength = values[a]!;
      else set[name] = String(values[a]!);
    });
    const built = buildCase(this.#source, { ...this.#setup.options, set });
    if (strength !== undefined) built.model.strength = strength;
    return built;
  }

  /** Evaluates one point. */
  evaluate(index: number, values: number[]): PointResult {
    const built = this.build(values);
    const turning = turningOf(this.#engine, built);
    const model = engineModel(built, turning);
    // a gate's subspace columns ride along in the same run (its columns alone: no Magnus terms in sweeps)
    const columns = built.subspace ? { levels: built.subspace.indices, whole: false } : undefined;
    const run = solve(this.#engine, columns ? withColumns(model, columns) : model);
    const result = columnOf(run, built.model.dim, 0);
    const gate = columns ? gateOf(this.#engine, built, run, columns) : undefined;
    return {
      ...(gate ? { gate: { fidelity: gate.fidelity, leakage: gate.leakage.exact } } : {}),
      ...summarise(
        index,
        values,
        built,
        result,
        resolutionOf(result, turning.rate, built.model.accuracy, built.relativeTolerance),
      ),
      formulas: this.#formulas(built),
    };
  }

  #formulas(built: BuiltCase): number[] {
    return (this.#setup.formulas ?? []).map((formula, k) => {
      const path = ["approx", k, "formula"];
      const value = compileExpression(formula, {
        // Formulas may use λ as `strength` beside the params.
        params: new Map([...built.params, [STRENGTH, built.model.strength]]),
        allowTime: true,
        angularFactor: built.units.energyFactor,
      }, path).at(
        built.model.tEnd,
      );
      if (typeof value !== "number" || !Number.isFinite(value)) {
        throw withLocation(
          new CaseError(
            `formula gives ${JSON.stringify(value)} at t = ${built.model.tEnd}`,
            path,
            "a formula must give a finite real number (a population)",
          ),
          this.#source.file,
          this.#source.text,
          this.#source.format,
        );
      }
      return value;
    });
  }

  /**
   * Evaluates a sweep over λ alone, reusing the series: the Dyson terms do not
   * depend on λ, so they are computed once (at λ = 1) and only the exact
   * propagation (order 0) runs per point.
   */
  evaluateStrengths(points: { index: number; values: number[] }[], onPoint: (r: PointResult) => void): void {
    if (this.base.subspace) {
      // a gate needs its columns at every λ: no reuse
      for (const { index, values } of points) onPoint(this.evaluate(index, values));
      return;
    }
    const built = this.build([1]);
    const turning = turningOf(this.#engine, built);
    const series = solve(this.#engine, engineModel(built, turning));
    for (const { index, values } of points) {
      const lambda = values[0]!;
      const model = { ...engineModel(built, turning), strength: lambda, order: 0 };
      const exactRun = solve(this.#engine, model);
      const result: Result = {
        ...series,
        terms: series.terms.map((t, n) => t.map((x) => lambda ** n * x)),
        exact: exactRun.exact,
        check: exactRun.check,
      };
      const point = { ...built, model: { ...built.model, strength: lambda } };
      const resolution = resolutionOf(exactRun, turning.rate, built.model.accuracy, built.relativeTolerance);
      onPoint({ ...summarise(index, values, point, result, resolution), formulas: this.#formulas(point) });
    }
  }
}

function summarise(
  index: number,
  values: number[],
  built: BuiltCase,
  result: Result,
  resolution: Resolution,
): Omit<PointResult, "formulas"> {
  const d = built.model.dim, last = result.times.length - 1;
  const targets = built.targets.map((l) => built.space.labels.indexOf(l));
  const exactPop = populationsAt(result.exact, d, last);
  const partial = new Float64Array(2 * d);
  const orders = targets.map(() => [] as number[]);
  result.terms.forEach((term) => {
    for (let k = 0; k < 2 * d; k++) partial[k]! += term[last * 2 * d + k]!;
    const pops = populationsAt(partial, d, 0);
    targets.forEach((a, j) => orders[j]!.push(pops[a]!));
  });
  const analysis = analyse(
    result,
    built.space.labels,
    built.targets,
    0,
    built.tolerance,
    undefined,
    resolution,
  );
  return {
    index,
    values,
    exact: targets.map((a) => exactPop[a]!),
    orders,
    minOrder: analysis.targets.map((t) => t.minOrder),
  };
}

/**
 * The CSV header of a sweep: swept names, per target exact and orders, then min orders, then with a gate its
 * fidelity per order and the exact leakage.
 */
export function csvHeader(axes: string[], targets: string[], order: number, gate = false): string {
  const cols = [...axes];
  for (const t of targets) {
    cols.push(`exact:${t}`);
    for (let n = 0; n <= order; n++) cols.push(`order${n}:${t}`);
  }
  for (const t of targets) cols.push(`min_order:${t}`);
  if (gate) {
    for (let n = 0; n <= order; n++) cols.push(`fidelity:order${n}`);
    cols.push("leakage:exact");
  }
  return cols.map(csvField).join(",");
}

/** How many gate columns a header has (they come last). */
export function gateColumnCount(header: string): number {
  return header.split(",").filter((c) => c.startsWith("fidelity:") || c === "leakage:exact").length;
}

/** One CSV row (numbers in shortest round-trip form). */
export function csvRow(r: PointResult): string {
  const cells = r.values.map(String);
  r.exact.forEach((e, j) => cells.push(String(e), ...r.orders[j]!.map(String)));
  for (const m of r.minOrder) cells.push(m === null ? "" : String(m));
  if (r.gate) cells.push(...r.gate.fidelity.map(String), String(r.gate.leakage));
  return cells.join(",");
}

/** The identity of a point in a CSV row: its swept values as written. */
export function rowKey(row: string, axes: number): string {
  return row.split(",").slice(0, axes).join(",");
}
