/**
 * Plots for reports: vega-lite specifications compiled and rendered to SVG
 * headless (no browser, no network).
 *
 * @module
 */

import * as vega from "vega";
import { compile, type TopLevelSpec } from "vega-lite";

/** One point of a line plot. */
export interface Point {
  x: number;
  y: number;
  series: string;
}

/** What a line plot shows. */
export interface LinePlot {
  title: string;
  xTitle: string;
  yTitle: string;
  logY?: boolean;
  points: Point[];
  /** Series drawn dashed (e.g. a bound). */
  dashed?: string[];
  /** Series order for the legend and colours. */
  order?: string[];
  /** Series drawn in black (e.g. the exact solution). */
  black?: string[];
  /** Lower end of a log axis: values below it are clipped to it (round-off floor). */
  floor?: number;
  /** A logarithmic x axis (a log-spaced sweep). */
  logX?: boolean;
  /** Series named "order n" with odd n are drawn dashed, so that neighbouring orders differ in two ways. */
  dashOdd?: boolean;
}

/** Anchors of the viridis scale (a sequential, perceptually even scheme; common practice), dark to light. */
const VIRIDIS = ["#440154", "#414487", "#2a788e", "#22a884", "#7ad151", "#d2e21b"];

/** n colours in order along a sequential scale (viridis, stopping short of its palest yellow), for orders. */
export function palette(n: number): string[] {
  return Array.from({ length: n }, (_, k) => {
    const f = n === 1 ? 0 : k / (n - 1);
    const x = f * (VIRIDIS.length - 1), i = Math.min(Math.floor(x), VIRIDIS.length - 2), u = x - i;
    const [a, b] = [VIRIDIS[i]!, VIRIDIS[i + 1]!].map((c) =>
      [1, 3, 5].map((p) => parseInt(c.slice(p, p + 2), 16))
    );
    const mix = a!.map((v, j) => Math.round(v + (b![j]! - v) * u));
    return `#${mix.map((v) => v.toString(16).padStart(2, "0")).join("")}`;
  });
}

/** Whether a series is drawn dashed: named dashed, or an odd order when orders alternate. */
function dashedSeries(plot: LinePlot, series: string): boolean {
  if (plot.dashed?.includes(series)) return true;
  const order = /^order (\d+)$/.exec(series);
  return Boolean(plot.dashOdd && order && Number(order[1]) % 2 === 1);
}

/**
 * Renders a line plot (one line per series) to SVG.
 *
 * @param plot the data and labels
 * @returns SVG text
 */
export async function lineSvg(plot: LinePlot): Promise<string> {
  const floor = plot.floor ?? 0;
  const shown = plot.logY
    ? plot.points.filter((p) => Number.isFinite(p.y)).map((p) => ({ ...p, y: Math.max(p.y, floor) }))
      .filter((p) => p.y > 0)
    : plot.points;
  const points = shown.map((p) => ({ ...p, dash: dashedSeries(plot, p.series) ? "dashed" : "solid" }));
  const series = plot.order ?? [...new Set(points.map((p) => p.series))];
  const black = plot.black ?? [];
  const colours = palette(series.length - black.filter((b) => series.includes(b)).length);
  let next = 0;
  const range = series.map((s) => (black.includes(s) ? "black" : colours[next++]!));
  const spec: TopLevelSpec = {
    $schema: "https://vega.github.io/schema/vega-lite/v5.json",
    title: plot.title,
    width: 520,
    height: 280,
    background: "white",
    data: { values: points },
    mark: { type: "line", point: false, strokeWidth: 1.6 },
    encoding: {
      x: {
        field: "x",
        type: "quantitative",
        title: plot.xTitle,
        ...(plot.logX ? { scale: { type: "log" }, axis: { format: ".1e" } } : {}),
      },
      y: {
        field: "y",
        type: "quantitative",
        title: plot.yTitle,
        scale: plot.logY ? { type: "log", ...(floor > 0 ? { domainMin: floor } : {}) } : { zero: false },
        axis: plot.logY ? { format: ".0e" } : {},
      },
      color: {
        field: "series",
        type: "nominal",
        title: "",
        scale: { domain: series, range },
        legend: { orient: "right" },
      },
      strokeDash: {
        field: "dash",
        type: "nominal",
        scale: { domain: ["solid", "dashed"], range: [[1, 0], [6, 3]] },
        legend: null,
      },
    },
  };
  return await renderSvg(spec);
}

/**
 * Renders a vega-lite spec to SVG text, headless. The compiler's notes on the spec (such as a log scale dropping
 * its zero) go to a silent logger, not to the user's terminal.
 */
export async function renderSvg(spec: TopLevelSpec): Promise<string> {
  const quiet = vega.logger(vega.None);
  const view = new vega.View(vega.parse(compile(spec, { logger: quiet }).spec), {
    renderer: "none",
    logger: quiet,
  });
  const svg = await view.toSVG();
  view.finalize();
  return svg;
}
