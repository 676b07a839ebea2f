/**
 * Sweep grids: axes from a case's `[sweep]` table and `--vary` flags, their
 * outer product, and deterministic shards of it.
 *
 * @module
 */

import { CaseError, UsageError } from "../case/errors.ts";
import type { CaseSpec } from "../case/schema.ts";
import { STRENGTH } from "../case/params.ts";

/** One swept quantity and its values. */
export interface Axis {
  name: string;
  values: number[];
  scale: "linear" | "log" | "values";
}

/** A sweep grid: the outer product of its axes, the first axis varying slowest. */
export interface Grid {
  axes: Axis[];
  /** Number of points. */
  size: number;
}

/** The most points one sweep may have (a sweep folder indexes every point; split larger studies into several). */
export const MAX_POINTS = 2_000_000;

/** Evenly spaced values from `from` to `to` (ends included), linearly or logarithmically. */
export function axisValues(from: number, to: number, count: number, scale: "linear" | "log"): number[] {
  if (count === 1) return [from];
  return Array.from({ length: count }, (_, k) => {
    if (k === count - 1) return to;
    const f = k / (count - 1);
    return scale === "log" ? from * (to / from) ** f : from + (to - from) * f;
  });
}

type AxisSpec = NonNullable<CaseSpec["sweep"]>[string];

function axisFrom(name: string, spec: AxisSpec, fail: (msg: string, fix: string) => never): Axis {
  if (spec.values) {
    if (
      spec.from !== undefined || spec.to !== undefined || spec.count !== undefined || spec.scale !== undefined
    ) {
      fail("give either values or from/to/count, not both", `e.g. ${name} = { values = [0.1, 0.2] }`);
    }
    if (spec.values.length === 0) fail("values is empty", "list at least one value");
    return { name, values: spec.values, scale: "values" };
  }
  const { from, to, count } = spec;
  if (count !== undefined && count > MAX_POINTS) {
    fail(`count = ${count} is more than the ${MAX_POINTS} points a sweep may have`, "use fewer points");
  }
  if (from === undefined || to === undefined || count === undefined) {
    return fail(
      "needs from, to and count (or values)",
      `e.g. ${name} = { from = 0.01, to = 0.1, count = 10 }`,
    );
  }
  const scale = spec.scale ?? "linear";
  if (scale === "log" && !(from > 0 && to > 0)) {
    fail("a log axis needs from > 0 and to > 0", "use positive ends or a linear axis");
  }
  if (!Number.isFinite(from) || !Number.isFinite(to)) {
    fail("from and to must be finite", "give finite numbers");
  }
  return { name, values: axisValues(from, to, count, scale), scale };
}

/**
 * Parses a `--vary name=from:to:count[:log]` flag.
 *
 * @param flag the flag's value
 * @returns the axis
 * @throws {UsageError} when the flag is malformed
 */
export function parseVary(flag: string): Axis {
  const m = /^([A-Za-z_][A-Za-z0-9_]*)=([^:]+):([^:]+):([^:]+)(?::(log|linear))?$/.exec(flag.trim());
  const from = Number(m?.[2]), to = Number(m?.[3]), count = Number(m?.[4]);
  if (!m || !Number.isFinite(from) || !Number.isFinite(to) || !Number.isInteger(count) || count < 1) {
    throw new UsageError(`--vary takes name=from:to:count[:log], e.g. g=0.01:0.1:20:log; got "${flag}"`);
  }
  if (count > MAX_POINTS) throw new UsageError(`--vary ${m[1]}: ${count} values is more than ${MAX_POINTS}`);
  const scale = (m[5] ?? "linear") as "linear" | "log";
  if (scale === "log" && !(from > 0 && to > 0)) {
    throw new UsageError(`--vary ${m[1]}: a log axis needs positive ends`);
  }
  return { name: m[1]!, values: axisValues(from, to, count, scale), scale };
}

/**
 * The grid of a case: its `[sweep]` axes, with `--vary` axes replacing or adding to them.
 *
 * @param spec the case
 * @param vary axes from the command line
 * @returns the grid (a single point when nothing is swept)
 */
export function buildGrid(spec: CaseSpec, vary: Axis[] = []): Grid {
  const axes: Axis[] = [];
  for (const [name, axis] of Object.entries(spec.sweep ?? {})) {
    axes.push(axisFrom(name, axis, (msg, fix) => {
      throw new CaseError(msg, ["sweep", name], fix);
    }));
  }
  for (const axis of vary) {
    const at = axes.findIndex((a) => a.name === axis.name);
    if (at >= 0) axes[at] = axis;
    else axes.push(axis);
  }
  const params = Object.keys(spec.params ?? {});
  for (const axis of axes) {
    if (axis.name !== STRENGTH && !params.includes(axis.name)) {
      throw new CaseError(
        `cannot sweep "${axis.name}": it is not a param of this case`,
        ["sweep", axis.name],
        `sweep one of: ${[...params, STRENGTH].join(", ")} (${STRENGTH} is λ)`,
      );
    }
  }
  const size = axes.reduce((n, a) => n * a.values.length, 1);
  if (size > MAX_POINTS) {
    throw new CaseError(
      `the grid has ${size.toPrecision(3)} points (${
        axes.map((a) => `${a.name}: ${a.values.length}`).join(" × ")
      }), ` +
        `more than the ${MAX_POINTS} a sweep may have`,
      ["sweep"],
      "use fewer values per axis, or split the study into several sweeps",
    );
  }
  return { axes, size };
}

/** The swept values of point k (first axis slowest). */
export function pointValues(grid: Grid, k: number): number[] {
  const out = new Array<number>(grid.axes.length);
  for (let a = grid.axes.length - 1; a >= 0; a--) {
    const n = grid.axes[a]!.values.length;
    out[a] = grid.axes[a]!.values[k % n]!;
    k = Math.floor(k / n);
  }
  return out;
}

/** The points of shard k of n (1-based k): every n-th point starting at k−1, so shards balance. */
export function shardPoints(grid: Grid, k: number, n: number): number[] {
  const out: number[] = [];
  for (let p = k - 1; p < grid.size; p += n) out.push(p);
  return out;
}

/** Parses `--shard k/n`. */
export function parseShard(flag: string): { k: number; n: number } {
  const m = /^(\d+)\/(\d+)$/.exec(flag.trim());
  const k = Number(m?.[1]), n = Number(m?.[2]);
  if (!m || n < 1 || k < 1 || k > n) {
    throw new UsageError(`--shard takes k/n with 1 ≤ k ≤ n, e.g. 2/8; got "${flag}"`);
  }
  return { k, n };
}
