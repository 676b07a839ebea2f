/**
 * `ordo check --out DIR`: the check as files — `points.csv` (one row per formula and point: the swept values,
 * the formula's value, the exact population, the error, what is allowed, pass) and `report.html` with a
 * pass/fail map of every formula over the grid.
 *
 * @module
 */

import { join } from "node:path";
import type { TopLevelSpec } from "vega-lite";
import type { CheckReport } from "../sweep/approximations.ts";
import { renderSvg } from "./plots.ts";
import { escapeHtml } from "./html.ts";
import { Figures, slug } from "./figures.ts";
import { csvField } from "../base/csv.ts";
import { VERSION } from "../base/version.ts";

/** The points file: header first, one row per formula and point. */
export function checkCsv(report: CheckReport): string {
  const axes = report.grid.axes.map((a) => a.name);
  const lines = [["approximation", ...axes, "formula", "exact", "error", "allowed", "pass"].join(",")];
  for (const a of report.approximations) {
    for (const p of a.points) {
      lines.push([csvField(a.name), ...p.values, p.value, p.exact, p.error, p.allowed, p.pass].join(","));
    }
  }
  return lines.join("\n") + "\n";
}

/** The pass/fail map of one formula: cells over two axes, points along one (error against what is allowed). */
function passMap(report: CheckReport, k: number): Promise<string> | undefined {
  const { grid } = report, a = report.approximations[k]!;
  const verdict = (pass: boolean) => (pass ? "holds" : "fails");
  const color = {
    field: "verdict",
    type: "nominal",
    scale: { domain: ["holds", "fails"], range: ["#4c9a2a", "#c0392b"] },
  };
  if (grid.axes.length >= 2) {
    const [x, y] = [grid.axes[0]!, grid.axes[1]!];
    const fixed = a.points.filter((p) =>
      p.values.slice(2).every((v, i) => v === grid.axes[i + 2]!.values[0])
    );
    const spec = {
      $schema: "https://vega.github.io/schema/vega-lite/v5.json",
      title: `${a.name}: where it holds (${x.name} × ${y.name})`,
      width: 420,
      height: 300,
      data: { values: fixed.map((p) => ({ x: p.values[0], y: p.values[1], verdict: verdict(p.pass) })) },
      mark: { type: "rect" },
      encoding: {
        x: { field: "x", type: "ordinal", title: x.name, axis: { format: ".3g" } },
        y: { field: "y", type: "ordinal", title: y.name, sort: "descending", axis: { format: ".3g" } },
        color,
      },
    } as unknown as TopLevelSpec;
    return renderSvg(spec);
  }
  if (grid.axes.length === 1) {
    const x = grid.axes[0]!;
    const spec = {
      $schema: "https://vega.github.io/schema/vega-lite/v5.json",
      title: `${a.name}: error and what is allowed against ${x.name}`,
      width: 420,
      height: 260,
      data: {
        values: a.points.flatMap((p) => [
          { x: p.values[0], y: Math.max(p.error, 1e-300), verdict: verdict(p.pass), what: "error" },
          { x: p.values[0], y: Math.max(p.allowed, 1e-300), verdict: "allowed", what: "allowed" },
        ]),
      },
      layer: [
        {
          transform: [{ filter: "datum.what === 'allowed'" }],
          mark: { type: "line", color: "#555", strokeDash: [5, 3] },
          encoding: {
            x: { field: "x", type: "quantitative", title: x.name },
            y: { field: "y", type: "quantitative", scale: { type: "log" }, title: "|formula − exact|" },
          },
        },
        {
          transform: [{ filter: "datum.what === 'error'" }],
          mark: { type: "point", filled: true, size: 50 },
          encoding: {
            x: { field: "x", type: "quantitative", title: x.name },
            y: { field: "y", type: "quantitative", scale: { type: "log" } },
            color,
          },
        },
      ],
    } as unknown as TopLevelSpec;
    return renderSvg(spec);
  }
  return undefined;
}

/**
 * Writes points.csv and report.html of a check into dir.
 *
 * @param report the check
 * @param dir the folder (made and checked writable before the check ran)
 * @returns the paths written
 */
export async function writeCheckReport(report: CheckReport, dir: string): Promise<string[]> {
  const files = [join(dir, "points.csv"), join(dir, "report.html")];
  Deno.writeTextFileSync(files[0]!, checkCsv(report));
  const sections: string[] = [];
  const figures = new Figures(dir);
  for (const [k, a] of report.approximations.entries()) {
    const map = await passMap(report, k);
    if (map) {
      await figures.add(
        `pass-map-${slug(a.name)}`,
        await map,
        `where "${a.name}" holds (green) or fails (red) over the sweep grid, against the exact population of ` +
          `${a.target} at the final time.`,
      );
    }
    sections.push(
      `<h2>${a.pass ? "PASS" : "FAIL"}: ${escapeHtml(a.name)}</h2>\n<p>target ${
        escapeHtml(a.target)
      }; formula ` +
        `<code>${escapeHtml(a.formula)}</code>; holds at ${a.passed} of ${a.total} points.</p>` +
        (map ? `\n<figure>${await map}</figure>` : ""),
    );
  }
  const note = report.grid.axes.length > 2
    ? `<p>Maps show ${escapeHtml(report.grid.axes[0]!.name)} × ${
      escapeHtml(report.grid.axes[1]!.name)
    } at the first value of the other axes.</p>`
    : "";
  Deno.writeTextFileSync(
    files[1]!,
    `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><meta name="generator" content="ordo ${VERSION}">
<title>${escapeHtml(report.file)} — ordo check</title>
<style>body{font-family:system-ui,sans-serif;max-width:60rem;margin:2rem auto;padding:0 1rem;color:#222} figure{margin:1rem 0}</style>
</head><body>
<h1>ordo check: ${escapeHtml(report.file)}</h1>
${note}
${sections.join("\n")}
</body></html>
`,
  );
  return [...files, ...figures.finish(`ordo check ${report.file}`)];
}
