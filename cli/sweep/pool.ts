/**
 * `ordo sweep`: parameter sweeps on all cores (one engine per Deno Worker),
 * appended to `points.csv` row by row as points finish, resumable, split into
 * shards for a cluster's job array and merged back; a validity-map report.
 *
 * @module
 */

import { join } from "node:path";
import { CaseError, UsageError } from "../case/errors.ts";
import type { BuildOptions } from "../case/build.ts";
import { readCase } from "../case/parse.ts";
import { type Axis, buildGrid, type Grid, pointValues, shardPoints, STRENGTH } from "./grid.ts";
import {
  csvHeader,
  csvRow,
  PointEvaluator,
  type PointResult,
  rowKey,
  type SweepSetup,
} from "./point.ts";
import { loadEngine } from "../../engine/mod.ts";
import { progressBar } from "../report/progress.ts";
import { VERSION } from "../base/version.ts";

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

/** The record of what a sweep folder holds; a resume must match it. */
interface Manifest {
  ordo: string;
  title: string;
  case_sha256: string;
  axes: { name: string; values: number[] }[];
  overrides: BuildOptions;
  targets: string[];
  order: number;
  tolerance: number;
}

/** Raised when a sweep is interrupted (SIGINT); finished points are on disk. */
export class Interrupted extends Error {
  constructor() {
    super("interrupted");
    this.name = "Interrupted";
  }
}

/** A point to evaluate. */
export interface PointJob {
  index: number;
  values: number[];
}

/**
 * Evaluates points on a pool of workers, calling onResult as each finishes.
 *
 * @param setup shared setup
 * @param points the points
 * @param workers how many workers
 * @param onResult called on the main thread for each finished point
 * @param signal aborts the pool (workers are terminated)
 */
export async function evaluatePool(
  setup: SweepSetup,
  points: PointJob[],
  workers: number,
  onResult: (r: PointResult) => void,
  signal?: AbortSignal,
): Promise<void> {
  if (points.length === 0) return;
  const count = Math.max(1, Math.min(workers, points.length));
  const pool: Worker[] = [];
  let next = 0, done = 0;
  await new Promise<void>((resolve, reject) => {
    const stop = (error: Error) => {
      for (const w of pool) w.terminate();
      reject(error);
    };
    signal?.addEventListener("abort", () => stop(new Interrupted()), { once: true });
    const dispatch = (w: Worker) => {
      if (next >= points.length) return;
      const job = points[next++]!;
      w.postMessage({ kind: "point", index: job.index, values: job.values });
    };
    for (let i = 0; i < count; i++) {
      const w = new Worker(new URL("./worker.ts", import.meta.url).href, { type: "module" });
      pool.push(w);
      w.onmessage = (event: MessageEvent) => {
        const msg = event.data;
        if (msg.kind === "ready") dispatch(w);
        else if (msg.kind === "done") {
          onResult(msg.result as PointResult);
          done++;
          if (done === points.length) {
            for (const x of pool) x.terminate();
            resolve();
          } else dispatch(w);
        } else {
          const job = points.find((p) => p.index === msg.index);
          const where = job ? ` (at ${setup.axes.map((a, j) => `${a} = ${job.values[j]}`).join(", ")})` : "";
          // The point goes on the first line, before the report's "fix:" line.
          const [first, ...more] = String(msg.message).split("\n");
          stop(new UsageError([`${first}${where}`, ...more].join("\n")));
        }
      };
      w.onerror = (e) => {
        e.preventDefault();
        stop(new Error(`a sweep worker failed: ${e.message}`));
      };
      w.postMessage({ kind: "init", setup });
    }
  });
}

function shardFile(shard?: { k: number; n: number }): string {
  return shard ? `points.shard-${shard.k}-of-${shard.n}.csv` : "points.csv";
}

function manifestOf(sha: string, grid: Grid, build: BuildOptions, evaluator: PointEvaluator): Manifest {
  return {
    ordo: VERSION,
    title: evaluator.base.title,
    case_sha256: sha,
    axes: grid.axes.map((a) => ({ name: a.name, values: a.values })),
    overrides: build,
    targets: evaluator.base.targets,
    order: evaluator.base.model.order,
    tolerance: evaluator.base.tolerance,
  };
}

/** Reads the finished rows of a CSV, dropping a trailing partial line (a write cut by a kill). */
function finishedRows(path: string, header: string): string[] {
  let text: string;
  try {
    text = Deno.readTextFileSync(path);
  } catch {
    return [];
  }
  const complete = text.slice(0, text.lastIndexOf("\n") + 1);
  if (complete.length !== text.length) Deno.writeTextFileSync(path, complete);
  const lines = complete.split("\n").filter((l) => l.length > 0);
  if (lines.length === 0) return [];
  if (lines[0] !== header) {
    throw new UsageError(`${path} has another header than this sweep; it belongs to another sweep`);
  }
  return lines.slice(1);
}

/** Grid index of every point key (swept values joined as in CSV rows). */
function keyIndex(grid: Grid): Map<string, number> {
  const map = new Map<string, number>();
  for (let k = 0; k < grid.size; k++) map.set(pointValues(grid, k).map(String).join(","), k);
  return map;
}

/** Rewrites a CSV with its rows in grid order. */
function writeSorted(path: string, header: string, rows: string[], grid: Grid): void {
  const index = keyIndex(grid);
  const sorted = rows.slice().sort((a, b) =>
    index.get(rowKey(a, grid.axes.length))! - index.get(rowKey(b, grid.axes.length))!
  );
  const tmp = `${path}.tmp`;
  Deno.writeTextFileSync(tmp, [header, ...sorted].join("\n") + "\n");
  Deno.renameSync(tmp, path);
}

/**
 * Runs (or resumes, or runs one shard of) a sweep.
 *
 * @param file the case file
 * @param options what to do
 * @returns counts and the rate
 */
export async function runSweep(
  file: string,
  options: SweepOptions,
): Promise<{ written: number; skipped: number; total: number; seconds: number; reusedSeries: boolean }> {
  const source = readCase(file);
  const grid = buildGrid(source.spec, options.vary);
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
  const header = csvHeader(setup.axes, evaluator.base.targets, evaluator.base.model.order);
  const manifest = manifestOf(source.sha256, grid, options.build, evaluator);

  Deno.mkdirSync(options.out, { recursive: true });
  const manifestPath = join(options.out, "sweep.json");
  const csvPath = join(options.out, shardFile(options.shard));
  let existing: Manifest | undefined;
  try {
    existing = JSON.parse(Deno.readTextFileSync(manifestPath));
  } catch { /* a new folder */ }
  const rowsOnDisk = existing ? finishedRows(csvPath, header) : [];
  if (existing) {
    const same = JSON.stringify(existing) === JSON.stringify(manifest);
    if (!same) {
      throw new UsageError(
        `${options.out} holds a sweep of another case or grid (the case file, its overrides or the grid changed); ` +
          "start a new sweep with another --out, or restore the case it was started with",
      );
    }
    if (!options.resume && rowsOnDisk.length > 0) {
      throw new UsageError(
        `${options.out} already holds ${rowsOnDisk.length} points of this sweep; pass --resume to continue it`,
      );
    }
  } else {
    Deno.writeTextFileSync(manifestPath, JSON.stringify(manifest, null, 1) + "\n");
  }
  if (rowsOnDisk.length === 0) Deno.writeTextFileSync(csvPath, header + "\n");

  const done = new Set(rowsOnDisk.map((r) => rowKey(r, grid.axes.length)));
  const indices = options.shard
    ? shardPoints(grid, options.shard.k, options.shard.n)
    : [...Array(grid.size).keys()];
  const jobs = indices.map((index) => ({ index, values: pointValues(grid, index) }))
    .filter((j) => !done.has(j.values.map(String).join(",")));

  const file_ = Deno.openSync(csvPath, { append: true });
  const encoder = new TextEncoder();
  const rows = rowsOnDisk.slice();
  const started = performance.now();
  const reusedSeries = grid.axes.length === 1 && grid.axes[0]!.name === STRENGTH;
  const bar = options.quiet ? undefined : progressBar("sweep", jobs.length);
  let finished = 0, lastLine = performance.now();
  const onResult = (r: PointResult) => {
    const row = csvRow(r);
    file_.writeSync(encoder.encode(row + "\n")); // one write per row: a kill keeps every finished point
    rows.push(row);
    finished++;
    if (bar) bar.update(finished / jobs.length);
    else if (!options.quiet && performance.now() - lastLine > 2000) {
      lastLine = performance.now();
      const rate = finished / ((lastLine - started) / 1000);
      console.error(
        `sweep: ${finished}/${jobs.length} points, ${rate.toFixed(1)}/s, about ${
          ((jobs.length - finished) / rate).toFixed(0)
        } s left`,
      );
    }
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
    bar?.stop();
    file_.close();
  }
  const seconds = (performance.now() - started) / 1000;
  writeSorted(csvPath, header, rows, grid);
  if (!options.shard) {
    const { writeSweepReport } = await import("../report/sweep_maps.ts");
    await writeSweepReport(options.out, grid, manifest, rows);
  }
  return { written: finished, skipped: rowsOnDisk.length, total: indices.length, seconds, reusedSeries };
}

/**
 * Merges shard files in dir into points.csv, checking that every point is present exactly once.
 *
 * @param dir the sweep folder
 * @returns the number of points merged
 * @throws {UsageError} naming missing or duplicated points
 */
export async function mergeShards(dir: string): Promise<number> {
  let manifest: Manifest;
  try {
    manifest = JSON.parse(Deno.readTextFileSync(join(dir, "sweep.json")));
  } catch {
    throw new UsageError(
      `${dir} has no sweep.json: it is not a sweep folder (run \`ordo sweep CASE --out ${dir} --shard k/n\` first)`,
    );
  }
  const grid: Grid = {
    axes: manifest.axes.map((a) => ({ ...a, scale: "values" as const })),
    size: manifest.axes.reduce((n, a) => n * a.values.length, 1),
  };
  const files = [...Deno.readDirSync(dir)].map((e) => e.name).filter((n) =>
    /^points\.shard-\d+-of-\d+\.csv$/.test(n)
  ).sort();
  if (files.length === 0) throw new UsageError(`${dir} holds no shard files (points.shard-K-of-N.csv)`);
  const n = Number(/of-(\d+)/.exec(files[0]!)![1]);
  let header: string | undefined;
  const seen = new Map<number, string>();
  const index = keyIndex(grid);
  for (const name of files) {
    const lines = Deno.readTextFileSync(join(dir, name)).split("\n").filter((l) => l.length > 0);
    if (header !== undefined && lines[0] !== header) {
      throw new UsageError(`${name} has another header than the other shards`);
    }
    header = lines[0];
    for (const row of lines.slice(1)) {
      const k = index.get(rowKey(row, grid.axes.length));
      if (k === undefined) {
        throw new UsageError(
          `${name} holds a point that is not on this sweep's grid: ${rowKey(row, grid.axes.length)}`,
        );
      }
      if (seen.has(k)) {
        throw new UsageError(
          `point ${rowKey(row, grid.axes.length)} appears twice (in ${name} and another shard)`,
        );
      }
      seen.set(k, row);
    }
  }
  const missing = [...Array(grid.size).keys()].filter((k) => !seen.has(k));
  if (missing.length > 0) {
    const shards = [...new Set(missing.map((k) => (k % n) + 1))].sort((a, b) => a - b);
    const shown = missing.slice(0, 5).map((k) =>
      pointValues(grid, k).map((v, a) => `${grid.axes[a]!.name}=${v}`).join(" ")
    );
    throw new UsageError(
      `${missing.length} of ${grid.size} points are missing (from shard${shards.length > 1 ? "s" : ""} ${
        shards.map((s) => `${s}/${n}`).join(", ")
      }), e.g. ${shown.join("; ")}; run those shards (with --resume if they started) and merge again`,
    );
  }
  const rows = [...seen.values()];
  writeSorted(join(dir, "points.csv"), header!, rows, grid);
  const { writeSweepReport } = await import("../report/sweep_maps.ts");
  await writeSweepReport(dir, grid, manifest, rows);
  return rows.length;
}

/**
 * Writes a Slurm job-array script that runs one shard per array task and a
 * dependent job that merges them.
 *
 * @param script the path to write
 * @param caseFile the case file (as the cluster will see it)
 * @param out the sweep folder
 * @param shards how many shards (array tasks)
 * @param extra further flags for every shard (e.g. --vary)
 */
export function emitArrayScript(
  script: string,
  caseFile: string,
  out: string,
  shards: number,
  extra: string[],
): void {
  const q = (s: string) => `'${s.replace(/'/g, `'\\''`)}'`;
  const flags = extra.map(q).join(" ");
  const text = `#!/usr/bin/env bash
# Submit with:  bash ${script}
# It submits a Slurm job array of ${shards} tasks, each running one shard of the
# sweep into ${out}, and a job that merges the shards once every task succeeded.
# Adjust the resources below to your cluster; ORDO may be set to the ordo command
# (default: deno task ordo, run from this repository).
set -euo pipefail
ORDO=\${ORDO:-"deno task --quiet ordo"}
CASE=${q(caseFile)}
OUT=${q(out)}

array_id=$(sbatch --parsable --array=1-${shards} --job-name=ordo-sweep --cpus-per-task=1 --time=02:00:00 <<EOF
#!/usr/bin/env bash
set -euo pipefail
\$ORDO sweep "\$CASE" --out "\$OUT" --shard "\\$SLURM_ARRAY_TASK_ID/${shards}" --workers 1 --resume --quiet ${flags}
EOF
)

sbatch --dependency=afterok:"\${array_id}" --job-name=ordo-merge --time=00:30:00 <<EOF
#!/usr/bin/env bash
set -euo pipefail
\$ORDO sweep --merge "\$OUT"
EOF
echo "submitted array \${array_id} (${shards} shards) and its merge job"
`;
  Deno.writeTextFileSync(script, text);
  Deno.chmodSync(script, 0o755);
}
