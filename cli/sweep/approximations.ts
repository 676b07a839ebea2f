/**
 * The verdict on the user's own approximate formulas (`[[approx]]`) over a sweep grid: per formula and point
 * the formula's value, the exact population, the error and what is allowed; PASS or FAIL; the worst point;
 * where it holds, said in a way that is true for any shape of region; and the Dyson order it follows, when
 * one does.
 *
 * @module
 */

import type { Grid } from "./grid.ts";
import type { PointResult } from "./point.ts";

/** One formula as written in the case. */
export interface Approximation {
  name: string;
  target: string;
  formula: string;
  abs?: number;
  rel?: number;
}

/** One formula at one point. */
export interface ApproxPoint {
  values: number[];
  value: number;
  exact: number;
  error: number;
  allowed: number;
  pass: boolean;
}

/** The verdict on one formula. */
export interface ApproxVerdict {
  name: string;
  target: string;
  formula: string;
  tolerance: { abs: number | null; rel: number | null };
  pass: boolean;
  /** Points within tolerance, of all. */
  passed: number;
  total: number;
  /** The point with the largest error relative to what is allowed. */
  worst: ApproxPoint;
  /**
   * Where the formula holds: on a box of the grid (the passing points are exactly every combination of one
   * interval of values per axis), everywhere, nowhere, or a region of another shape (then only its size).
   */
  region: {
    kind: "everywhere" | "nowhere" | "box" | "other";
    box?: { axis: string; from: number; to: number }[];
  };
  /** The Dyson order whose partial sum the formula follows within its tolerance at every point, if any. */
  tracks: { order: number; deviation: number } | null;
  points: ApproxPoint[];
}

/** The whole check. */
export interface CheckReport {
  file: string;
  grid: Grid;
  approximations: ApproxVerdict[];
}

/** What a formula is allowed to miss a value by: within abs or rel, whichever is larger. */
function allowance(a: Approximation, value: number): number {
  return Math.max(a.abs ?? 0, (a.rel ?? 0) * Math.abs(value));
}

/**
 * The verdict on formula k (on target column j) over all points, in grid order.
 *
 * @param a the formula as written
 * @param k its index among the case's formulas
 * @param results every point, in grid order
 * @param grid the grid
 * @param j the target's column in the point results
 * @param order the highest Dyson order
 * @returns the verdict
 */
export function verdictOf(
  a: Approximation,
  k: number,
  results: PointResult[],
  grid: Grid,
  j: number,
  order: number,
): ApproxVerdict {
  const points = results.map((r): ApproxPoint => {
    const exact = r.exact[j]!, value = r.formulas[k]!;
    const error = Math.abs(value - exact), allowed = allowance(a, exact);
    return { values: r.values, value, exact, error, allowed, pass: error <= allowed };
  });
  let worst = points[0]!, worstRatio = -1;
  for (const p of points) {
    const ratio = p.allowed > 0 ? p.error / p.allowed : p.error > 0 ? Infinity : 0;
    if (ratio > worstRatio) [worstRatio, worst] = [ratio, p];
  }
  const passed = points.filter((p) => p.pass).length;
  return {
    name: a.name,
    target: a.target,
    formula: a.formula,
    tolerance: { abs: a.abs ?? null, rel: a.rel ?? null },
    pass: passed === points.length,
    passed,
    total: points.length,
    worst,
    region: regionOf(grid, points.map((p) => p.pass)),
    tracks: trackedOrder(a, k, results, j, order),
    points,
  };
}

/**
 * Where a formula holds. A box needs every combination of its per-axis intervals to pass and nothing outside
 * them: then "holds on g ∈ [a, b], δ ∈ [c, d]" is true; for any other shape only the count is said.
 */
export function regionOf(grid: Grid, pass: boolean[]): ApproxVerdict["region"] {
  const count = pass.filter(Boolean).length;
  if (count === pass.length) return { kind: "everywhere" };
  if (count === 0) return { kind: "nowhere" };
  const stride = grid.axes.map((_, a) => grid.axes.slice(a + 1).reduce((n, x) => n * x.values.length, 1));
  const index = (k: number, a: number) => Math.floor(k / stride[a]!) % grid.axes[a]!.values.length;
  const lo = grid.axes.map(() => Infinity), hi = grid.axes.map(() => -Infinity);
  pass.forEach((ok, k) => {
    if (!ok) return;
    grid.axes.forEach((_, a) => {
      lo[a] = Math.min(lo[a]!, index(k, a));
      hi[a] = Math.max(hi[a]!, index(k, a));
    });
  });
  const inside = (k: number) => grid.axes.every((_, a) => index(k, a) >= lo[a]! && index(k, a) <= hi[a]!);
  const isBox = pass.every((ok, k) => ok === inside(k));
  if (!isBox) return { kind: "other" };
  return {
    kind: "box",
    box: grid.axes.map((axis, a) => ({
      axis: axis.name,
      from: axis.values[lo[a]!]!,
      to: axis.values[hi[a]!]!,
    })),
  };
}

/** The order whose partial sum is within the formula's tolerance of it at every point, the closest such. */
function trackedOrder(
  a: Approximation,
  k: number,
  results: PointResult[],
  j: number,
  order: number,
): ApproxVerdict["tracks"] {
  let best: ApproxVerdict["tracks"] = null;
  for (let n = 0; n <= order; n++) {
    let deviation = 0, within = true;
    for (const r of results) {
      const partial = r.orders[j]![n]!, gap = Math.abs(r.formulas[k]! - partial);
      deviation = Math.max(deviation, gap);
      if (!(gap <= allowance(a, partial))) within = false;
    }
    if (within && (best === null || deviation < best.deviation)) best = { order: n, deviation };
  }
  return best;
}
