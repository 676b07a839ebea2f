/**
 * A sweep folder on disk: `sweep.json` (the manifest a resume must match),
 * `points.csv` (or one shard file per slice), rows appended as points finish
 * and put in grid order at the end, and shards merged back into one file.
 *
 * @module
 */

import { join } from "node:path";
import { UsageError } from "../case/errors.ts";
import type { BuildOptions } from "../case/build.ts";
import { type Grid, pointValues } from "./grid.ts";
import { rowKey } from "./point.ts";
import { VERSION } from "../base/version.ts";

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

/** Reads a folder's manifest, or undefined when there is none. */
export function readManifest(dir: string): Manifest | undefined {
  try {
    return JSON.parse(Deno.readTextFileSync(join(dir, "sweep.json")));
  } catch {
    return undefined;
  }
}

/** Writes a folder's manifest. */
export function writeManifest(dir: string, manifest: Manifest): void {
  Deno.writeTextFileSync(join(dir, "sweep.json"), JSON.stringify(manifest, null, 1) + "\n");
}

/** Reads the finished rows of a CSV, dropping a trailing partial line (a write cut by a kill). */
export function finishedRows(path: string, header: string): string[] {
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
export function writeSorted(path: string, header: string, rows: string[], grid: Grid): void {
  const index = keyIndex(grid);
  const sorted = rows.slice().sort((a, b) =>
    index.get(rowKey(a, grid.axes.length))! - index.get(rowKey(b, grid.axes.length))!
  );
  const tmp = `${path}.tmp`;
  Deno.writeTextFileSync(tmp, [header, ...sorted].join("\n") + "\n");
  Deno.renameSync(tmp, path);
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
  const files = [...Deno.readDirSync(dir)].map((e) => e.name).filter((n) =>
    /^points\.shard-\d+-of-\d+\.csv$/.test(n)
  ).sort();
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
    const lines = Deno.readTextFileSync(join(dir, name)).split("\n").filter((l) => l.length > 0);
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
