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
}

/** n distinguishable colours along a hue sweep (blue → red), for ordered series. */
export function palette(n: number): string[] {
  return Array.from({ length: n }, (_, k) => {
    const hue = 240 - 240 * (n === 1 ? 0 : k / (n - 1));
    return `hsl(${hue.toFixed(0)}, 70%, ${k % 2 ? 38 : 48}%)`;
  });
}

/**
 * Renders a line plot (one line per series) to SVG.
 *
 * @param plot the data and labels
 * @returns SVG text
 */
export async function lineSvg(plot: LinePlot): Promise<string> {
  const floor = plot.floor ?? 0;
  const points = plot.logY
    ? plot.points.filter((p) => Number.isFinite(p.y)).map((p) => ({ ...p, y: Math.max(p.y, floor) }))
      .filter((p) => p.y > 0)
    : plot.points;
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
      x: { field: "x", type: "quantitative", title: plot.xTitle },
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
        condition: {
          test: `indexof(${JSON.stringify(plot.dashed ?? [])}, datum.series) >= 0`,
          value: [5, 3],
        },
        value: [1, 0],
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
