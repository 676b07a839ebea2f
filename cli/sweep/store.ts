/**
 * A sweep folder on disk: `sweep.json` (the manifest a resume must match),
 * `points.csv` (or one shard file per slice), rows appended as points finish
 * and put in grid order at the end, and shards merged back into one file.
 * Finished rows are never overwritten: a folder that holds rows without a
 * readable manifest is refused, damaged rows are dropped (and recomputed) on
 * resume, and one sweep at a time may write a file (a lock beside it).
 *
 * @module
 */

import { join } from "node:path";
import { z } from "zod";
import { OutputError, UsageError } from "../case/errors.ts";
import type { BuildOptions } from "../case/build.ts";
import { type Grid, pointValues } from "./grid.ts";
import { rowKey } from "./point.ts";
import { VERSION } from "../base/version.ts";

const manifestSchema = z.object({
  ordo: z.string(),
  title: z.string(),
  case_sha256: z.string(),
  axes: z.array(z.object({ name: z.string(), values: z.array(z.number()) })),
  overrides: z.record(z.unknown()),
  targets: z.array(z.string()),
  order: z.number().int(),
  tolerance: z.number(),
});

/** The record of what a sweep folder holds; a resume must match it. */
export interface Manifest {
  ordo: string;
  title: string;
  case_sha256: string;
  axes: { name: string; values: number[] }[];
  overrides: BuildOptions;
  targets: string[];
  order: number;
  tolerance: number;
}

/** The manifest of a sweep. */
export function manifestOf(
  sha: string,
  grid: Grid,
  build: BuildOptions,
  base: { title: string; targets: string[]; order: number; tolerance: number },
): Manifest {
  return {
    ordo: VERSION,
    title: base.title,
    case_sha256: sha,
    axes: grid.axes.map((a) => ({ name: a.name, values: a.values })),
    overrides: build,
    targets: base.targets,
    order: base.order,
    tolerance: base.tolerance,
  };
}

/** The CSV file of a whole sweep or of one shard. */
export function shardFile(shard?: { k: number; n: number }): string {
  return shard ? `points.shard-${shard.k}-of-${shard.n}.csv` : "points.csv";
}

/** Every CSV file of sweep points in a folder. */
function pointFiles(dir: string): string[] {
  try {
    return [...Deno.readDirSync(dir)].map((e) => e.name).filter((n) =>
      /^points(\.shard-\d+-of-\d+)?\.csv$/.test(n)
    );
  } catch {
    return [];
  }
}

/**
 * Reads a folder's manifest: undefined when the folder holds neither a manifest nor any point file.
 *
 * @throws {UsageError} when the manifest is missing beside point files, or is empty or damaged
 */
export function readManifest(dir: string): Manifest | undefined {
  const path = join(dir, "sweep.json");
  let text: string;
  try {
    text = Deno.readTextFileSync(path);
  } catch {
    const files = pointFiles(dir);
    if (files.length === 0) return undefined;
    throw new UsageError(
      `${dir} holds ${
        files.join(", ")
      } but no sweep.json, so ordo cannot tell which sweep the rows belong to; ` +
        "nothing was overwritten: choose another --out, or move the point files away to start anew here",
    );
  }
  let parsed: unknown;
  try {
    parsed = JSON.parse(text);
  } catch (e) {
    throw damaged(path, (e as Error).message);
  }
  const checked = manifestSchema.safeParse(parsed);
  if (!checked.success) {
    const issue = checked.error.issues[0]!;
    throw damaged(path, `${issue.path.join(".") || "the top level"}: ${issue.message}`);
  }
  return checked.data as Manifest;
}

function damaged(path: string, why: string): UsageError {
  return new UsageError(
    `${path} is damaged (${why}); nothing was overwritten: restore it, or choose another --out and start anew`,
  );
}

/** Writes a folder's manifest. */
export function writeManifest(dir: string, manifest: Manifest): void {
  writeAtomically(join(dir, "sweep.json"), JSON.stringify(manifest, null, 1) + "\n", "the sweep manifest");
}

/** Rows read back for a resume: the sound ones, and what was dropped. */
export interface ResumedRows {
  rows: string[];
  dropped: number;
  /** One example of what was wrong, for the message. */
  example: string;
}

/**
 * Reads the finished rows of a CSV for a resume. A trailing partial line (a write cut by a kill), Windows line
 * ends, rows with the wrong number of cells, cells that are not numbers, points off the grid and duplicated
 * points are dropped (they will be recomputed); the file is rewritten with the sound rows only.
 *
 * @param path the CSV file
 * @param header the header this sweep writes
 * @param grid the sweep's grid
 * @param shape how many targets and the highest order (a row has the swept values, then per target the exact
 *   and every order's population, then per target the smallest order within tolerance, which may be empty)
 * @returns the sound rows and how many were dropped
 * @throws {UsageError} when the file's header is another sweep's
 */
export function finishedRows(
  path: string,
  header: string,
  grid: Grid,
  shape: { targets: number; order: number; gate?: number },
): ResumedRows {
  let text: string;
  try {
    text = Deno.readTextFileSync(path);
  } catch {
    return { rows: [], dropped: 0, example: "" };
  }
  const complete = text.slice(0, text.lastIndexOf("\n") + 1);
  const lines = complete.split("\n").map((l) => l.replace(/\r$/, "")).filter((l) => l.length > 0);
  if (lines.length === 0) return { rows: [], dropped: 0, example: "" };
  if (lines[0] !== header) {
    throw new UsageError(
      `${path} has another header than this sweep, so it belongs to another sweep; nothing was overwritten`,
    );
  }
  const keys = keyIndex(grid);
  const numbers = grid.axes.length + shape.targets * (shape.order + 2);
  const columns = numbers + shape.targets + (shape.gate ?? 0);
  const seen = new Set<string>();
  const rows: string[] = [];
  let dropped = complete.length === text.length ? 0 : 1;
  let example = dropped ? "the last line was cut short" : "";
  lines.slice(1).forEach((row, k) => {
    const why = rowProblem(
      row,
      { numbers, orders: shape.targets, columns, axes: grid.axes.length },
      keys,
      seen,
    );
    if (why) {
      dropped++;
      example ||= `line ${k + 2}: ${why}`;
    } else {
      seen.add(rowKey(row, grid.axes.length));
      rows.push(row);
    }
  });
  if (dropped > 0 || complete.length !== text.length || text.includes("\r")) {
    writeAtomically(path, [header, ...rows].join("\n") + "\n", "the points file");
  }
  return { rows, dropped, example };
}

/** What is wrong with a row, or undefined when it is sound. */
function rowProblem(
  row: string,
  shape: { numbers: number; orders: number; columns: number; axes: number },
  keys: Map<string, number>,
  seen: Set<string>,
): string | undefined {
  const cells = row.split(",");
  if (cells.length !== shape.columns) return `${cells.length} cells, expected ${shape.columns}`;
  const bad = cells.findIndex((c, k) =>
    k < shape.numbers || k >= shape.numbers + shape.orders
      ? !(c !== "" && Number.isFinite(Number(c)))
      : !(c === "" || /^\d+$/.test(c))
  );
  if (bad >= 0) return `cell ${bad + 1} is not a number: "${cells[bad]!.slice(0, 20)}"`;
  const key = rowKey(row, shape.axes);
  if (!keys.has(key)) return `the point ${key} is not on this sweep's grid`;
  if (seen.has(key)) return `the point ${key} appears twice`;
  return undefined;
}

/** Grid index of every point key (swept values joined as in CSV rows). */
function keyIndex(grid: Grid): Map<string, number> {
  const map = new Map<string, number>();
  for (let k = 0; k < grid.size; k++) map.set(pointValues(grid, k).map(String).join(","), k);
  return map;
}

/**
 * Writes a file through a temporary file and a rename, so that a failure (a full disk) leaves the old file
 * whole and no temporary file behind.
 *
 * @throws {OutputError} with the reason, when the file cannot be written
 */
export function writeAtomically(
  path: string,
  text: string,
  what: string,
  kept = "the previous file is unchanged",
): void {
  const tmp = `${path}.tmp`;
  try {
    Deno.writeTextFileSync(tmp, text);
    Deno.renameSync(tmp, path);
  } catch (e) {
    try {
      Deno.removeSync(tmp);
    } catch { /* it was never made */ }
    throw new OutputError(`cannot write ${what} ${path}: ${(e as Error).message}; ${kept}`);
  }
}

/** Rewrites a CSV with its rows in grid order. */
export function writeSorted(path: string, header: string, rows: string[], grid: Grid): void {
  const index = keyIndex(grid);
  const sorted = rows.slice().sort((a, b) =>
    index.get(rowKey(a, grid.axes.length))! - index.get(rowKey(b, grid.axes.length))!
  );
  writeAtomically(
    path,
    [header, ...sorted].join("\n") + "\n",
    "the points file",
    "every finished point is still in it (unsorted): make room, then run the sweep again with --resume",
  );
}

/**
 * Takes the lock of a points file (`FILE.lock`, holding the PID and host), so that two sweeps never write one
 * file at once. A lock left by a process that no longer runs on this host is taken over.
 *
 * @param csvPath the points file
 * @returns a function that releases the lock
 * @throws {UsageError} when another sweep holds the lock
 */
export function lockPoints(csvPath: string): () => void {
  const path = `${csvPath}.lock`;
  const host = Deno.hostname();
  const mine = JSON.stringify({ pid: Deno.pid, host });
  for (let attempt = 0; attempt < 2; attempt++) {
    try {
      Deno.writeTextFileSync(path, mine, { createNew: true });
      return () => {
        try {
          Deno.removeSync(path);
        } catch { /* already gone */ }
      };
    } catch (e) {
      if (!(e instanceof Deno.errors.AlreadyExists)) {
        throw new OutputError(`cannot make the lock file ${path}: ${(e as Error).message}`);
      }
    }
    const holder = readLock(path);
    if (holder && (holder.host !== host || processRuns(holder.pid))) {
      throw new UsageError(
        `another sweep (process ${holder.pid} on ${holder.host}) is writing ${csvPath}; wait for it, or, if no ` +
          `sweep is running there, delete ${path}`,
      );
    }
    Deno.removeSync(path); // stale: its process is gone
  }
  throw new UsageError(`cannot take the lock ${path}; delete it if no sweep is running`);
}

function readLock(path: string): { pid: number; host: string } | undefined {
  try {
    const lock = JSON.parse(Deno.readTextFileSync(path));
    return typeof lock.pid === "number" && typeof lock.host === "string" ? lock : undefined;
  } catch {
    return undefined;
  }
}

/** Whether a process runs on this host (Linux /proc; elsewhere assume it does). */
function processRuns(pid: number): boolean {
  try {
    Deno.statSync("/proc/self");
  } catch {
    return true;
  }
  try {
    Deno.statSync(`/proc/${pid}`);
    return true;
  } catch {
    return false;
  }
}

/**
 * Merges the shard files in dir into points.csv, checking that every point is present exactly once.
 *
 * @param dir the sweep folder
 * @returns the grid, manifest and rows merged (for the report)
 * @throws {UsageError} naming missing or duplicated points
 */
export function mergeShardFiles(dir: string): { grid: Grid; manifest: Manifest; rows: string[] } {
  const manifest = readManifest(dir);
  if (!manifest) {
    throw new UsageError(
      `${dir} has no sweep.json: it is not a sweep folder (run \`ordo sweep CASE --out ${dir} --shard k/n\` first)`,
    );
  }
  const grid: Grid = {
    axes: manifest.axes.map((a) => ({ ...a, scale: "values" as const })),
    size: manifest.axes.reduce((n, a) => n * a.values.length, 1),
  };
  const files = pointFiles(dir).filter((n) => n !== "points.csv").sort();
  if (files.length === 0) throw new UsageError(`${dir} holds no shard files (points.shard-K-of-N.csv)`);
  const n = Number(/of-(\d+)/.exec(files[0]!)![1]);
  const { header, seen } = collectShards(dir, files, grid);
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
  writeSorted(join(dir, "points.csv"), header, rows, grid);
  return { grid, manifest, rows };
}

/** Every row of the shard files by grid index, refusing foreign headers, off-grid points and duplicates. */
function collectShards(
  dir: string,
  files: string[],
  grid: Grid,
): { header: string; seen: Map<number, string> } {
  let header: string | undefined;
  const seen = new Map<number, string>();
  const index = keyIndex(grid);
  for (const name of files) {
    const lines = Deno.readTextFileSync(join(dir, name)).split("\n").map((l) => l.replace(/\r$/, ""))
      .filter((l) => l.length > 0);
    if (header !== undefined && lines[0] !== header) {
      throw new UsageError(`${name} has another header than the other shards`);
    }
    header = lines[0];
    for (const row of lines.slice(1)) {
      const key = rowKey(row, grid.axes.length);
      const k = index.get(key);
      if (k === undefined) {
        throw new UsageError(`${name} holds a point that is not on this sweep's grid: ${key}`);
      }
      if (seen.has(k)) {
        throw new UsageError(`point ${key} appears twice (in ${name} and another shard)`);
      }
      seen.set(k, row);
    }
  }
  return { header: header ?? "", seen };
}
