/**
 * `ordo sweep`: parameter sweeps on all cores, appended to `points.csv` row by
 * row as points finish, resumable, split into shards for a cluster's job
 * array and merged back; a validity-map report at the end.
 *
 * @module
 */

import { join, resolve } from "node:path";
import { CaseError, OutputError, UsageError } from "../case/errors.ts";
import type { BuildOptions } from "../case/build.ts";
import { located, readCase } from "../case/parse.ts";
import { STRENGTH } from "../case/params.ts";
import {
  type Axis,
  buildGrid,
  type Grid,
  parseShard,
  parseVary,
  pointValues,
  shardPoints,
} from "../sweep/grid.ts";
import {
  csvHeader,
  csvRow,
  gateColumnCount,
  PointEvaluator,
  type PointResult,
  rowKey,
  type SweepSetup,
} from "../sweep/point.ts";
import { evaluatePool, Interrupted, type PointJob } from "../sweep/pool.ts";
import {
  finishedRows,
  lockPoints,
  type Manifest,
  manifestOf,
  mergeShardFiles,
  readManifest,
  shardFile,
  writeAtomically,
  writeManifest,
  writeSorted,
} from "../sweep/store.ts";
import { arrayScript } from "../sweep/slurm.ts";
import { progressBar } from "../report/progress.ts";
import { ensureOutputDir, isSystemError, writeUserFile } from "../report/output_dir.ts";
import { loadEngine } from "../../engine/mod.ts";
import { buildOptions, CASE_FLAGS, integerFlag, oneCase, parseOrFail, usage } from "./_args.ts";

/** What `ordo sweep` was asked to do. */
export interface SweepOptions {
  out: string;
  workers: number;
  resume: boolean;
  shard?: { k: number; n: number };
  vary: Axis[];
  build: BuildOptions;
  quiet: boolean;
}

/** What a finished (or resumed) sweep did. */
export interface SweepSummary {
  written: number;
  skipped: number;
  total: number;
  seconds: number;
  reusedSeries: boolean;
}

/**
 * `ordo sweep …`: runs, resumes, shards, merges, or writes a job-array script.
 *
 * @param args the arguments after `sweep`
 * @returns the exit code
 */
export async function sweepCommand(args: string[]): Promise<number> {
  const { values, positionals } = parseOrFail(args, {
    out: { type: "string" },
    workers: { type: "string" },
    vary: { type: "string", multiple: true },
    resume: { type: "boolean" },
    shard: { type: "string" },
    merge: { type: "string" },
    "emit-array": { type: "string" },
    shards: { type: "string" },
    ...CASE_FLAGS,
  });
  if (values.merge !== undefined) {
    const n = await mergeShards(String(values.merge));
    console.log(`merged ${n} points into ${values.merge}/points.csv (report: ${values.merge}/report.html)`);
    return 0;
  }
  const file = oneCase(positionals, "sweep");
  if (values.out === undefined) {
    usage("sweep needs --out DIR, the folder for points.csv, sweep.json and report.html");
  }
  const out = String(values.out);
  if (values["emit-array"] !== undefined) return emitArray(args, values, file, out);
  const workers = integerFlag(values.workers, "--workers") ?? navigator.hardwareConcurrency;
  if (workers < 1) usage("--workers takes a whole number ≥ 1");
  try {
    const r = await runSweep(file, {
      out,
      workers,
      resume: Boolean(values.resume),
      shard: values.shard === undefined ? undefined : parseShard(String(values.shard)),
      vary: ((values.vary as string[] | undefined) ?? []).map(parseVary),
      build: buildOptions(values),
      quiet: Boolean(values.quiet),
    });
    const rate = r.written / Math.max(r.seconds, 1e-9);
    console.log(
      `sweep: ${r.written} points in ${r.seconds.toFixed(1)} s (${rate.toFixed(1)} points/s, ${
        r.reusedSeries ? "λ only: series reused" : `${workers} worker${workers > 1 ? "s" : ""}`
      })` + (r.skipped ? `; ${r.skipped} were already done` : "") +
        `; ${r.skipped + r.written} of ${r.total} in ${out}`,
    );
    return 0;
  } catch (e) {
    if (e instanceof Interrupted) {
      console.error(`ordo: interrupted; every finished point is in ${out}; continue with --resume`);
      return 130;
    }
    throw e;
  }
}

function emitArray(args: string[], values: Record<string, unknown>, file: string, out: string): number {
  const shards = integerFlag(values.shards, "--shards");
  if (!shards || shards < 1) usage("--emit-array needs --shards N, the number of array tasks");
  // Pass the flags that shape the sweep on to every shard.
  const passed = ["--vary", "--set", "--order", "--steps", "--accuracy", "--targets"];
  const extra: string[] = [];
  args.forEach((arg, k) => {
    if (passed.includes(arg) && args[k + 1] !== undefined) extra.push(arg, args[k + 1]!);
  });
  const script = String(values["emit-array"]);
  // The jobs start elsewhere: every path in the script is absolute.
  const text = arrayScript(script, resolve(file), resolve(out), shards!, extra);
  writeUserFile(script, text, "the job script", 0o755);
  console.log(`wrote ${script}: submit it with \`bash ${script}\` on the cluster`);
  return 0;
}

/** The case, grid and evaluator of a sweep, checked on its first point. */
async function prepare(file: string, options: SweepOptions) {
  const source = readCase(file);
  const grid = located(source, () => buildGrid(source.spec, options.vary));
  const setup: SweepSetup = {
    text: source.text,
    file,
    options: options.build,
    axes: grid.axes.map((a) => a.name),
  };
  const evaluator = new PointEvaluator(await loadEngine(), setup);
  // Fail early on the first point, with the case's own message and the point's values.
  try {
    evaluator.build(pointValues(grid, 0));
  } catch (e) {
    if (e instanceof CaseError) {
      e.message += ` (at ${setup.axes.map((a, j) => `${a} = ${pointValues(grid, 0)[j]}`).join(", ")})`;
    }
    throw e;
  }
  const { base } = evaluator;
  const header = csvHeader(setup.axes, base.targets, base.model.order, base.subspace !== undefined);
  const manifest = manifestOf(source.sha256, grid, options.build, { ...base, order: base.model.order });
  return { grid, setup, evaluator, header, manifest };
}

/** Opens the sweep folder: the rows already finished there (refusing another sweep's folder or damaged files). */
function openFolder(
  options: SweepOptions,
  manifest: Manifest,
  header: string,
  grid: Grid,
): { csvPath: string; rows: string[] } {
  ensureOutputDir(options.out, "--out");
  const csvPath = join(options.out, shardFile(options.shard));
  const existing = readManifest(options.out);
  if (existing && JSON.stringify(existing) !== JSON.stringify(manifest)) {
    throw new UsageError(
      `${options.out} holds a sweep of another case or grid (the case file, its overrides or the grid changed); ` +
        "start a new sweep with another --out, or restore the case it was started with",
    );
  }
  const shape = { targets: manifest.targets.length, order: manifest.order, gate: gateColumnCount(header) };
  const resumed = existing
    ? finishedRows(csvPath, header, grid, shape)
    : { rows: [], dropped: 0, example: "" };
  if (!options.resume && (resumed.rows.length > 0 || resumed.dropped > 0)) {
    throw new UsageError(
      `${options.out} already holds ${resumed.rows.length} points of this sweep; pass --resume to continue it`,
    );
  }
  if (resumed.dropped > 0 && !options.quiet) {
    console.error(
      `sweep: dropped ${resumed.dropped} damaged row${resumed.dropped > 1 ? "s" : ""} of ${csvPath} ` +
        `(e.g. ${resumed.example}); they are computed again`,
    );
  }
  if (!existing) writeManifest(options.out, manifest);
  if (resumed.rows.length === 0) writeAtomically(csvPath, header + "\n", "the points file");
  return { csvPath, rows: resumed.rows };
}

/** Reports progress: a bar on a terminal, otherwise a line every two seconds. */
async function progressReporter(total: number, quiet: boolean) {
  const bar = quiet ? undefined : await progressBar("sweep", total);
  const started = performance.now();
  let finished = 0, lastLine = started;
  return {
    tick() {
      finished++;
      if (bar) bar.update(finished / total);
      else if (!quiet && performance.now() - lastLine > 2000) {
        lastLine = performance.now();
        const rate = finished / ((lastLine - started) / 1000);
        console.error(
          `sweep: ${finished}/${total} points, ${rate.toFixed(1)}/s, about ${
            ((total - finished) / rate).toFixed(0)
          } s left`,
        );
      }
    },
    stop: () => bar?.stop(),
  };
}

/**
 * Runs (or resumes, or runs one shard of) a sweep.
 *
 * @param file the case file
 * @param options what to do
 * @returns counts and the rate
 */
export async function runSweep(file: string, options: SweepOptions): Promise<SweepSummary> {
  const { grid, setup, evaluator, header, manifest } = await prepare(file, options);
  ensureOutputDir(options.out, "--out");
  const release = lockPoints(join(options.out, shardFile(options.shard)));
  try {
    return await sweepLocked(grid, setup, evaluator, header, manifest, options);
  } finally {
    release();
  }
}

async function sweepLocked(
  grid: Grid,
  setup: SweepSetup,
  evaluator: PointEvaluator,
  header: string,
  manifest: Manifest,
  options: SweepOptions,
): Promise<SweepSummary> {
  const { csvPath, rows } = openFolder(options, manifest, header, grid);
  const skipped = rows.length;
  const done = new Set(rows.map((r) => rowKey(r, grid.axes.length)));
  const indices = options.shard
    ? shardPoints(grid, options.shard.k, options.shard.n)
    : [...Array(grid.size).keys()];
  const jobs = indices.map((index) => ({ index, values: pointValues(grid, index) }))
    .filter((j) => !done.has(j.values.map(String).join(",")));

  const started = performance.now();
  const reusedSeries = grid.axes.length === 1 && grid.axes[0]!.name === STRENGTH && !evaluator.base.subspace;
  const written = await evaluateInto(csvPath, rows, jobs, reusedSeries, { setup, evaluator, options });
  const seconds = (performance.now() - started) / 1000;
  writeSorted(csvPath, header, rows, grid);
  if (!options.shard) await writeMaps(options.out, grid, manifest, rows);
  return { written, skipped, total: indices.length, seconds, reusedSeries };
}

/** Evaluates the jobs, appending each finished row to the CSV (one write per row) and to `rows`. */
async function evaluateInto(
  csvPath: string,
  rows: string[],
  jobs: PointJob[],
  reusedSeries: boolean,
  { setup, evaluator, options }: { setup: SweepSetup; evaluator: PointEvaluator; options: SweepOptions },
): Promise<number> {
  const csv = Deno.openSync(csvPath, { append: true });
  const encoder = new TextEncoder();
  const progress = await progressReporter(jobs.length, options.quiet);
  let written = 0;
  const onResult = (r: PointResult) => {
    const row = csvRow(r);
    try {
      csv.writeSync(encoder.encode(row + "\n")); // one write per row: a kill keeps every finished point
    } catch (e) {
      throw new OutputError(
        `cannot append to ${csvPath}: ${
          (e as Error).message
        }; the ${rows.length} points finished before are on ` +
          "disk: make room, then continue with --resume",
      );
    }
    rows.push(row);
    written++;
    progress.tick();
  };
  // Ctrl-C stops the workers cleanly; the λ-only path runs on this thread, so there the default
  // handler (ending the process) stays: every finished row is on disk either way.
  const controller = new AbortController();
  const onSignal = () => controller.abort();
  if (!reusedSeries) Deno.addSignalListener("SIGINT", onSignal);
  try {
    if (reusedSeries) {
      if (!options.quiet) {
        console.error(
          "sweep: only λ (strength) varies: the Dyson terms are computed once and reused; each point re-runs the exact propagation only",
        );
      }
      evaluator.evaluateStrengths(jobs, onResult);
    } else {
      await evaluatePool(setup, jobs, options.workers, onResult, controller.signal);
    }
  } finally {
    if (!reusedSeries) Deno.removeSignalListener("SIGINT", onSignal);
    progress.stop();
    csv.close();
  }
  return written;
}

async function writeMaps(dir: string, grid: Grid, manifest: Manifest, rows: string[]): Promise<void> {
  const { writeSweepReport } = await import("../report/sweep_maps.ts");
  try {
    await writeSweepReport(dir, grid, manifest, rows);
  } catch (e) {
    if (!isSystemError(e)) throw e;
    throw new OutputError(
      `cannot write ${dir}/report.html: ${(e as Error).message}; every point is in ${dir}/points.csv; ` +
        `make room, then run \`ordo sweep --merge\` or the sweep again with --resume to write the report`,
    );
  }
}

/**
 * Merges shard files in dir into points.csv, checking that every point is present exactly once, and
 * writes the report.
 *
 * @param dir the sweep folder
 * @returns the number of points merged
 * @throws {UsageError} naming missing or duplicated points
 */
export async function mergeShards(dir: string): Promise<number> {
  const { grid, manifest, rows } = mergeShardFiles(dir);
  await writeMaps(dir, grid, manifest, rows);
  return rows.length;
}
