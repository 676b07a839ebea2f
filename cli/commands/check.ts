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
import { ensureOutputDir } from "../report/output_dir.ts";
import { type ApproxVerdict, type CheckReport, verdictOf } from "../sweep/approximations.ts";
import { VERSION } from "../base/version.ts";
import { buildOptions, CASE_FLAGS, integerFlag, oneCase, parseOrFail } from "./_args.ts";

/** Options of `ordo check`. */
export interface CheckOptions {
  workers: number;
  vary: Axis[];
  build: BuildOptions;
  quiet: boolean;
}

function fmt(x: number): string {
  return Number(x.toPrecision(4)).toString();
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
    json: { type: "boolean" },
    out: { type: "string" },
    ...CASE_FLAGS,
  });
  if (values.out !== undefined) ensureOutputDir(String(values.out), "--out");
  const report = await runCheck(oneCase(positionals, "check"), {
    workers: integerFlag(values.workers, "--workers") ?? navigator.hardwareConcurrency,
    vary: ((values.vary as string[] | undefined) ?? []).map(parseVary),
    build: buildOptions(values),
    quiet: Boolean(values.quiet),
  });
  if (values.json) console.log(JSON.stringify(checkJson(report)));
  else console.log(formatCheck(report));
  if (values.out !== undefined) {
    const { writeCheckReport } = await import("../report/check_report.ts");
    const files = await writeCheckReport(report, String(values.out));
    console.error(`ordo: wrote ${files.join(", ")}`);
  }
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
  const bar = options.quiet ? undefined : await progressBar("check", jobs.length);
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

/** The check as JSON: every approximation with every point (value, exact, error, allowed, pass). */
export function checkJson(report: CheckReport): unknown {
  return {
    ordo: VERSION,
    file: report.file,
    axes: report.grid.axes.map((a) => ({ name: a.name, values: a.values })),
    pass: report.approximations.every((a) => a.pass),
    approximations: report.approximations.map((a) => ({
      name: a.name,
      target: a.target,
      formula: a.formula,
      tolerance: a.tolerance,
      pass: a.pass,
      passed: a.passed,
      total: a.total,
      worst: a.worst,
      region: a.region,
      tracks_order: a.tracks,
      points: a.points,
    })),
  };
}

/** Where a formula holds, in words that are true for any shape of region. */
function regionText(a: ApproxVerdict): string {
  switch (a.region.kind) {
    case "everywhere":
      return "holds at every point of the grid";
    case "nowhere":
      return "holds at no point of the grid";
    case "box":
      return `holds exactly on ${
        a.region.box!.map((b) =>
          b.from === b.to ? `${b.axis} = ${fmt(b.from)}` : `${b.axis} ∈ [${fmt(b.from)}, ${fmt(b.to)}]`
        )
          .join(", ")
      } (and nowhere else on the grid)`;
    default:
      return `holds at ${a.passed} of ${a.total} points (${(100 * a.passed / a.total).toFixed(0)}%), ` +
        "on a region that is not a box of the grid: see the pass/fail map (--out)";
  }
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
    const tolerance = [
      a.tolerance.abs !== null ? `abs ${a.tolerance.abs}` : "",
      a.tolerance.rel !== null ? `rel ${a.tolerance.rel}` : "",
    ]
      .filter(Boolean).join(" or ");
    lines.push(`${a.pass ? "PASS" : "FAIL"}  ${a.name}  (target ${a.target}, tolerance ${tolerance})`);
    lines.push(`      formula ${a.formula}`);
    lines.push(`      holds at ${a.passed} of ${a.total} points`);
    lines.push(
      `      worst point${at}: formula ${fmt(a.worst.value)}, exact ${fmt(a.worst.exact)}, error ${
        a.worst.error.toExponential(2)
      } (allowed ${a.worst.allowed.toExponential(2)})`,
    );
    if (grid.axes.length) lines.push(`      ${regionText(a)}`);
    lines.push(
      a.tracks
        ? `      tracks Dyson order ${a.tracks.order} (within its tolerance everywhere; largest deviation ${
          a.tracks.deviation.toExponential(2)
        })`
        : "      tracks no single Dyson order within its tolerance",
    );
  }
  return lines.join("\n");
}
