/**
 * `ordo check CASE`: the case's `[[approx]]` formulas against exact
 * propagation over its sweep grid (or its single point). PASS/FAIL per
 * formula, the worst point, the region where it holds, and the Dyson order it
 * tracks best. Exit code 1 when any formula fails.
 *
 * @module
 */

import { CaseError } from "../case/errors.ts";
import type { BuildOptions } from "../case/build.ts";
import { type CaseSource, located, readCase, withLocation } from "../case/parse.ts";
import { type Axis, buildGrid, type Grid, pointValues } from "../sweep/grid.ts";
import { STRENGTH } from "../case/params.ts";
import { PointEvaluator, type PointResult, type SweepSetup } from "../sweep/point.ts";
import { evaluatePool } from "../sweep/pool.ts";
import { parseVary } from "../sweep/grid.ts";
import { loadEngine } from "../../engine/mod.ts";
import { progressBar } from "../report/progress.ts";
import { buildOptions, CASE_FLAGS, integerFlag, oneCase, parseOrFail } from "./_args.ts";

/** Options of `ordo check`. */
export interface CheckOptions {
  workers: number;
  vary: Axis[];
  build: BuildOptions;
  quiet: boolean;
}

/** The verdict on one formula. */
export interface ApproxVerdict {
  name: string;
  target: string;
  formula: string;
  tolerance: string;
  pass: boolean;
  /** Points within tolerance, of all. */
  passed: number;
  total: number;
  /** The point with the largest error relative to what is allowed. */
  worst: { values: number[]; error: number; allowed: number; exact: number; formula: number };
  /** Per swept parameter, where the formula holds for every value of the others. */
  region: string[];
  /** The Dyson order whose partial sum the formula follows most closely (largest deviation over the grid). */
  bestOrder: { order: number; deviation: number };
}

/** The whole check. */
export interface CheckReport {
  file: string;
  grid: Grid;
  approximations: ApproxVerdict[];
}

function fmt(x: number): string {
  return Number(x.toPrecision(4)).toString();
}

/** Consecutive runs of values where holds[k] is true, as "[a, b]" ranges. */
function ranges(values: number[], holds: boolean[]): string[] {
  const out: string[] = [];
  let start = -1;
  for (let k = 0; k <= values.length; k++) {
    if (k < values.length && holds[k]) {
      if (start < 0) start = k;
    } else if (start >= 0) {
      out.push(start === k - 1 ? fmt(values[start]!) : `[${fmt(values[start]!)}, ${fmt(values[k - 1]!)}]`);
      start = -1;
    }
  }
  return out;
}

/**
 * `ordo check CASE`: prints the verdicts; exit 1 when any formula fails.
 *
 * @param args the arguments after `check`
 * @returns the exit code
 */
export async function checkCommand(args: string[]): Promise<number> {
  const { values, positionals } = parseOrFail(args, {
    workers: { type: "string" },
    vary: { type: "string", multiple: true },
    ...CASE_FLAGS,
  });
  const report = await runCheck(oneCase(positionals, "check"), {
    workers: integerFlag(values.workers, "--workers") ?? navigator.hardwareConcurrency,
    vary: ((values.vary as string[] | undefined) ?? []).map(parseVary),
    build: buildOptions(values),
    quiet: Boolean(values.quiet),
  });
  console.log(formatCheck(report));
  return report.approximations.every((a) => a.pass) ? 0 : 1;
}

type Approx = NonNullable<CaseSource["spec"]["approx"]>[number];

/** Refuses a case without formulas, a formula without a tolerance, or a formula on an unknown label. */
function checkApprox(source: CaseSource, labels?: string[]): Approx[] {
  const approx = source.spec.approx ?? [];
  const fail = (message: string, path: (string | number)[], fix: string): never => {
    throw withLocation(new CaseError(message, path, fix), source.file, source.text, source.format);
  };
  if (approx.length === 0) {
    fail(
      "there are no [[approx]] entries to check",
      ["approx"],
      'add one: [[approx]] name = "…", target = "e", formula = "…", rel = 0.01',
    );
  }
  approx.forEach((a, k) => {
    if (a.abs === undefined && a.rel === undefined) {
      fail(
        `approximation "${a.name}" has no tolerance`,
        ["approx", k],
        "give abs = … and/or rel = … (it passes within either)",
      );
    }
    if (labels && !labels.includes(a.target)) {
      fail(
        `unknown target label "${a.target}"`,
        ["approx", k, "target"],
        `labels are: ${labels.slice(0, 16).join(", ")}`,
      );
    }
  });
  return approx;
}

/**
 * Runs the check.
 *
 * @param file the case file
 * @param options workers, extra axes, overrides
 * @returns the verdicts
 */
export async function runCheck(file: string, options: CheckOptions): Promise<CheckReport> {
  const source = readCase(file);
  const approx = checkApprox(source);
  const grid = located(source, () => buildGrid(source.spec, options.vary));
  const baseTargets = options.build.targets ?? source.spec.series.targets;
  const targets = baseTargets ? [...new Set([...baseTargets, ...approx.map((a) => a.target)])] : undefined;
  const setup: SweepSetup = {
    text: source.text,
    file,
    options: { ...options.build, targets },
    axes: grid.axes.map((a) => a.name),
    formulas: approx.map((a) => a.formula),
  };
  const evaluator = new PointEvaluator(await loadEngine(), setup);
  checkApprox(source, evaluator.base.space.labels);
  const results = await evaluateAll(grid, setup, evaluator, options);
  const approximations = approx.map((a, k) =>
    verdictOf(a, k, results, grid, evaluator.base.targets.indexOf(a.target), evaluator.base.model.order)
  );
  return { file, grid, approximations };
}

/** Every point of the grid, in grid order. */
async function evaluateAll(
  grid: Grid,
  setup: SweepSetup,
  evaluator: PointEvaluator,
  options: CheckOptions,
): Promise<PointResult[]> {
  const jobs = [...Array(grid.size).keys()].map((index) => ({ index, values: pointValues(grid, index) }));
  const results: PointResult[] = [];
  const bar = options.quiet ? undefined : progressBar("check", jobs.length);
  const collect = (r: PointResult) => {
    results.push(r);
    bar?.update(results.length / jobs.length);
  };
  try {
    if (grid.axes.length === 1 && grid.axes[0]!.name === STRENGTH) evaluator.evaluateStrengths(jobs, collect);
    else if (jobs.length === 1) collect(evaluator.evaluate(0, jobs[0]!.values));
    else await evaluatePool(setup, jobs, options.workers, collect);
  } finally {
    bar?.stop();
  }
  return results.sort((a, b) => a.index - b.index);
}

/** The verdict on formula k (on target column j) over all points. */
function verdictOf(
  a: Approx,
  k: number,
  results: PointResult[],
  grid: Grid,
  j: number,
  order: number,
): ApproxVerdict {
  let worst: ApproxVerdict["worst"] | undefined;
  let worstRatio = -1, passed = 0;
  const ok: boolean[] = [];
  for (const r of results) {
    const exact = r.exact[j]!, value = r.formulas[k]!;
    const error = Math.abs(value - exact);
    const allowed = Math.max(a.abs ?? 0, (a.rel ?? 0) * Math.abs(exact));
    const good = error <= allowed;
    ok.push(good);
    if (good) passed++;
    const ratio = allowed > 0 ? error / allowed : error > 0 ? Infinity : 0;
    if (ratio > worstRatio) {
      [worstRatio, worst] = [ratio, { values: r.values, error, allowed, exact, formula: value }];
    }
  }
  const region = grid.axes.map((axis, ai) => {
    const holds = axis.values.map((v) => results.every((r, p) => r.values[ai] !== v || ok[p]));
    const where = ranges(axis.values, holds);
    return `${axis.name}: ${where.length ? where.join(" ∪ ") : "nowhere on the grid"}`;
  });
  let bestOrder = { order: 0, deviation: Infinity };
  for (let n = 0; n <= order; n++) {
    let deviation = 0;
    for (const r of results) deviation = Math.max(deviation, Math.abs(r.formulas[k]! - r.orders[j]![n]!));
    if (deviation < bestOrder.deviation) bestOrder = { order: n, deviation };
  }
  const tolerance = [a.abs !== undefined ? `abs ${a.abs}` : "", a.rel !== undefined ? `rel ${a.rel}` : ""]
    .filter(Boolean)
    .join(" or ");
  return {
    name: a.name,
    target: a.target,
    formula: a.formula,
    tolerance,
    pass: passed === results.length,
    passed,
    total: results.length,
    worst: worst!,
    region,
    bestOrder,
  };
}

/** The check as text. */
export function formatCheck(report: CheckReport): string {
  const { grid } = report;
  const over = grid.axes.length
    ? grid.axes.map((a) => `${a.name} (${a.values.length})`).join(" × ")
    : "the case's single point";
  const lines = [
    `check ${report.file}: ${report.approximations.length} approximation(s) over ${grid.size} point(s), ${over}`,
  ];
  for (const a of report.approximations) {
    const at = a.worst.values.length
      ? ` at ${grid.axes.map((ax, i) => `${ax.name} = ${fmt(a.worst.values[i]!)}`).join(", ")}`
      : "";
    lines.push("");
    lines.push(`${a.pass ? "PASS" : "FAIL"}  ${a.name}  (target ${a.target}, tolerance ${a.tolerance})`);
    lines.push(`      formula ${a.formula}`);
    lines.push(`      holds at ${a.passed} of ${a.total} points`);
    lines.push(
      `      worst point${at}: formula ${fmt(a.worst.formula)}, exact ${fmt(a.worst.exact)}, error ${
        a.worst.error.toExponential(2)
      } (allowed ${a.worst.allowed.toExponential(2)})`,
    );
    if (grid.axes.length) {
      lines.push(`      holds for every value of the others where ${a.region.join("; ")}`);
    }
    lines.push(
      `      tracks Dyson order ${a.bestOrder.order} best (largest deviation ${
        a.bestOrder.deviation.toExponential(2)
      })`,
    );
  }
  return lines.join("\n");
}
