/**
 * The validity maps of a sweep, `DIR/report.html`: for one swept parameter,
 * the error of every order against it; for two, heatmaps of the smallest order
 * within tolerance and of the first-order error, with the tolerance contour.
 *
 * @module
 */

import { join } from "node:path";
import type { TopLevelSpec } from "vega-lite";
import { lineSvg, palette, type Point, renderSvg } from "./plots.ts";
import { escapeHtml } from "./html.ts";
import { Figures, slug } from "./figures.ts";
import type { Grid } from "../sweep/grid.ts";
import { VERSION } from "../base/version.ts";

/** What the report needs to know of the sweep besides its rows. */
export interface SweepInfo {
  title: string;
  targets: string[];
  order: number;
  tolerance: number;
}

interface ParsedRow {
  values: number[];
  exact: number[];
  orders: number[][];
  minOrder: (number | null)[];
}

function parseRows(rows: string[], grid: Grid, info: SweepInfo): ParsedRow[] {
  const a = grid.axes.length, n1 = info.order + 1, t = info.targets.length;
  return rows.map((row) => {
    const cells = row.split(",");
    const cell = (k: number) => Number(cells[k]);
    const exact: number[] = [], orders: number[][] = [];
    for (let j = 0; j < t; j++) {
      const base = a + j * (n1 + 1);
      exact.push(cell(base));
      orders.push(Array.from({ length: n1 }, (_, n) => cell(base + 1 + n)));
    }
    const minOrder = Array.from({ length: t }, (_, j) => {
      const c = cells[a + t * (n1 + 1) + j]!;
      return c === "" ? null : Number(c);
    });
    return { values: cells.slice(0, a).map(Number), exact, orders, minOrder };
  });
}

/** Cell edges around the values of an axis (geometric means on a log axis). */
function edges(values: number[], log: boolean): number[] {
  const f = log ? Math.log : (x: number) => x, g = log ? Math.exp : (x: number) => x;
  const v = values.map(f);
  if (v.length === 1) return [g(v[0]! - 0.5), g(v[0]! + 0.5)];
  const mids = v.slice(1).map((x, k) => 0.5 * (x + v[k]!));
  return [2 * v[0]! - mids[0]!, ...mids, 2 * v[v.length - 1]! - mids[mids.length - 1]!].map(g);
}

/**
 * Segments of the contour where field = level on a grid (marching squares),
 * in the axes' own coordinates (interpolated linearly in log10 of the field
 * and in each axis, or its logarithm on a log axis).
 */
export function contourSegments(
  xs: number[],
  ys: number[],
  field: (i: number, j: number) => number,
  level: number,
  logX: boolean,
  logY: boolean,
): { x: number; y: number; x2: number; y2: number }[] {
  const out: { x: number; y: number; x2: number; y2: number }[] = [];
  const lx = (v: number) => (logX ? Math.log(v) : v), ly = (v: number) => (logY ? Math.log(v) : v);
  const ux = (v: number) => (logX ? Math.exp(v) : v), uy = (v: number) => (logY ? Math.exp(v) : v);
  const at = (i: number, j: number) => Math.log10(Math.max(field(i, j), 1e-300)) - Math.log10(level);
  for (let i = 0; i + 1 < xs.length; i++) {
    for (let j = 0; j + 1 < ys.length; j++) {
      const corners: [number, number][] = [[i, j], [i + 1, j], [i + 1, j + 1], [i, j + 1]];
      const crossings: { x: number; y: number }[] = [];
      for (let e = 0; e < 4; e++) {
        const [ai, aj] = corners[e]!, [bi, bj] = corners[(e + 1) % 4]!;
        const fa = at(ai, aj), fb = at(bi, bj);
        if ((fa < 0) !== (fb < 0)) {
          const s = fa / (fa - fb);
          crossings.push({
            x: ux(lx(xs[ai]!) + s * (lx(xs[bi]!) - lx(xs[ai]!))),
            y: uy(ly(ys[aj]!) + s * (ly(ys[bj]!) - ly(ys[aj]!))),
          });
        }
      }
      for (let c = 0; c + 1 < crossings.length; c += 2) {
        out.push({
          x: crossings[c]!.x,
          y: crossings[c]!.y,
          x2: crossings[c + 1]!.x,
          y2: crossings[c + 1]!.y,
        });
      }
    }
  }
  return out;
}

function isLog(values: number[]): boolean {
  if (values.length < 3 || values.some((v) => v <= 0)) return false;
  const r = values[1]! / values[0]!;
  return Math.abs(values[2]! / values[1]! - r) < 1e-9 * r && Math.abs(r - 1) > 1e-9 &&
    Math.abs((values[2]! - values[1]!) - (values[1]! - values[0]!)) >
      1e-9 * Math.abs(values[1]! - values[0]!);
}

async function heatmap(
  title: string,
  grid: Grid,
  cells: { x: number; y: number; value: number | string }[],
  color: Record<string, unknown>,
  contour?: { x: number; y: number; x2: number; y2: number }[],
): Promise<string> {
  const [ax, ay] = [grid.axes[0]!, grid.axes[1]!];
  const logX = isLog(ax.values), logY = isLog(ay.values);
  const ex = edges(ax.values, logX), ey = edges(ay.values, logY);
  // Each cell reaches 2% into its upper neighbours, hiding the seams renderers leave between adjacent cells.
  const widen = (e: number[], k: number, log: boolean) =>
    log ? e[k + 1]! * (e[k + 1]! / e[k]!) ** 0.02 : e[k + 1]! + 0.02 * (e[k + 1]! - e[k]!);
  const values = cells.map((c) => {
    const i = ax.values.indexOf(c.x), j = ay.values.indexOf(c.y);
    return {
      x: ex[i],
      x2: i + 1 < ax.values.length ? widen(ex, i, logX) : ex[i + 1],
      y: ey[j],
      y2: j + 1 < ay.values.length ? widen(ey, j, logY) : ey[j + 1],
      value: c.value,
    };
  });
  const scale = (log: boolean, e: number[]) => ({
    type: log ? "log" : "linear",
    domain: [e[0], e[e.length - 1]],
    nice: false,
    zero: false,
  });
  const layers: unknown[] = [{
    data: { values },
    mark: { type: "rect" },
    encoding: {
      x: { field: "x", type: "quantitative", title: ax.name, scale: scale(logX, ex) },
      x2: { field: "x2" },
      y: { field: "y", type: "quantitative", title: ay.name, scale: scale(logY, ey) },
      y2: { field: "y2" },
      color: { field: "value", ...color },
    },
  }];
  if (contour && contour.length > 0) {
    layers.push({
      data: { values: contour },
      mark: { type: "rule", color: "white", strokeWidth: 2.5 },
      encoding: {
        x: { field: "x", type: "quantitative" },
        y: { field: "y", type: "quantitative" },
        x2: { field: "x2" },
        y2: { field: "y2" },
      },
    });
  }
  return await renderSvg({
    $schema: "https://vega.github.io/schema/vega-lite/v5.json",
    title,
    width: 420,
    height: 360,
    background: "white",
    layer: layers,
  } as TopLevelSpec);
}

/**
 * Writes DIR/report.html for a finished sweep.
 *
 * @param dir the sweep folder
 * @param grid the grid
 * @param info targets, order, tolerance, title
 * @param rows the CSV rows (without header)
 * @returns the path written
 */
export async function writeSweepReport(
  dir: string,
  grid: Grid,
  info: SweepInfo,
  rows: string[],
): Promise<string> {
  const parsed = parseRows(rows, grid, info);
  const figures: string[] = [];
  const files = new Figures(dir);
  const note: string[] = [];
  const add = async (svg: string, name: string, caption: string) => {
    figures.push(svg);
    await files.add(name, svg, caption);
  };
  const tolerance = info.tolerance.toExponential(0);
  if (grid.axes.length === 1) {
    const axis = grid.axes[0]!.name;
    for (const [j, target] of info.targets.entries()) {
      await add(
        await errorAgainstAxis(grid, info, parsed, j, target),
        `error-vs-${slug(axis)}-${slug(target)}`,
        `population error |P_n − P_exact| of ${target} at the final time against ${axis}, one line per Dyson ` +
          `order n (colour by n, odd orders dashed), with the tolerance ${tolerance} (black, dashed).`,
      );
    }
  } else if (grid.axes.length >= 2) {
    if (grid.axes.length > 2) {
      note.push(
        `Maps show ${grid.axes[0]!.name} × ${grid.axes[1]!.name} with ${
          grid.axes.slice(2).map((a) => `${a.name} = ${a.values[0]}`).join(", ")
        }.`,
      );
    }
    const [x, y] = [grid.axes[0]!.name, grid.axes[1]!.name];
    const fixed = parsed.filter((r) => r.values.slice(2).every((v, k) => v === grid.axes[k + 2]!.values[0]));
    for (const [j, target] of info.targets.entries()) {
      await add(
        await minOrderMap(grid, info, fixed, j, target),
        `min-order-${slug(target)}`,
        `smallest Dyson order within ${tolerance} for ${target} over ${x} × ${y} (grey: none up to ${info.order}).`,
      );
      await add(
        await firstOrderMap(grid, info, fixed, j, target),
        `first-order-error-${slug(target)}`,
        `first-order population error |P_1 − P_exact| of ${target} over ${x} × ${y}, with the contour where it ` +
          `equals the tolerance ${tolerance}.`,
      );
    }
  }
  files.finish(info.title);
  const path = join(dir, "report.html");
  Deno.writeTextFileSync(
    path,
    `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><meta name="generator" content="ordo ${VERSION}">
<title>${escapeHtml(info.title)} — ordo sweep</title>
<style>body{font-family:system-ui,sans-serif;max-width:60rem;margin:2rem auto;padding:0 1rem;color:#222} figure{margin:1rem 0}</style>
</head><body>
<h1>${escapeHtml(info.title)}</h1>
<p>ordo ${VERSION}; ${parsed.length} points over ${
      escapeHtml(grid.axes.map((a) => `${a.name} (${a.values.length})`).join(" × ") || "one point")
    }; tolerance ${info.tolerance}.</p>
${note.map((n) => `<p>${escapeHtml(n)}</p>`).join("\n")}
${figures.map((f) => `<figure>${f}</figure>`).join("\n")}
</body></html>
`,
  );
  return path;
}

type Row = ReturnType<typeof parseRows>[number];

/** One swept parameter: the population error of every order against it, with the tolerance. */
function errorAgainstAxis(
  grid: Grid,
  info: SweepInfo,
  parsed: Row[],
  j: number,
  target: string,
): Promise<string> {
  const axis = grid.axes[0]!;
  const points: Point[] = [];
  for (const r of parsed) {
    r.orders[j]!.forEach((p, n) =>
      points.push({ x: r.values[0]!, y: Math.abs(p - r.exact[j]!), series: `order ${n}` })
    );
    points.push({ x: r.values[0]!, y: info.tolerance, series: "tolerance" });
  }
  const orders = Array.from({ length: info.order + 1 }, (_, n) => `order ${n}`);
  return lineSvg({
    title: `population error of ${target} against ${axis.name}, per order`,
    xTitle: axis.name,
    yTitle: "|P_n − P_exact| at the final time",
    logY: true,
    floor: 1e-16,
    points,
    order: [...orders, "tolerance"],
    dashed: ["tolerance"],
    black: ["tolerance"],
    dashOdd: true,
    logX: grid.axes[0]!.scale === "log" || isLog(grid.axes[0]!.values),
  });
}

/** Two swept parameters: the smallest order within tolerance at each point. */
function minOrderMap(grid: Grid, info: SweepInfo, fixed: Row[], j: number, target: string): Promise<string> {
  const labels = [...Array.from({ length: info.order + 1 }, (_, n) => String(n)), "none"];
  return heatmap(
    `smallest order within ${info.tolerance.toExponential(0)} for ${target}`,
    grid,
    fixed.map((r) => ({
      x: r.values[0]!,
      y: r.values[1]!,
      value: r.minOrder[j] === null ? "none" : String(r.minOrder[j]),
    })),
    {
      type: "ordinal",
      title: "order",
      scale: { domain: labels, range: [...palette(labels.length - 1), "#bbbbbb"] },
    },
  );
}

/** Two swept parameters: the first-order population error, with the tolerance contour. */
function firstOrderMap(
  grid: Grid,
  info: SweepInfo,
  fixed: Row[],
  j: number,
  target: string,
): Promise<string> {
  const error = new Map(
    fixed.map((r) => [`${r.values[0]},${r.values[1]}`, Math.abs(r.orders[j]![1]! - r.exact[j]!)]),
  );
  const [ax, ay] = [grid.axes[0]!, grid.axes[1]!];
  const contour = contourSegments(
    ax.values,
    ay.values,
    (i, k) => error.get(`${ax.values[i]},${ay.values[k]}`) ?? NaN,
    info.tolerance,
    isLog(ax.values),
    isLog(ay.values),
  );
  const within = [...error.values()].filter((e) => e <= info.tolerance).length;
  const where = within === 0
    ? "nowhere within"
    : within === error.size
    ? "everywhere within"
    : "white: the contour of";
  return heatmap(
    `first-order population error of ${target} (${where} the tolerance ${info.tolerance.toExponential(0)})`,
    grid,
    fixed.map((r) => ({
      x: r.values[0]!,
      y: r.values[1]!,
      value: Math.max(error.get(`${r.values[0]},${r.values[1]}`)!, 1e-16),
    })),
    { type: "quantitative", title: "|P₁ − P|", scale: { type: "log", scheme: "viridis" } },
    contour,
  );
}
