/**
 * `ordo run --out DIR`: the result as files — `result.json` (the JSON
 * contract), `populations.csv` (tidy: time, label, source, population) and
 * `report.html`, a self-contained page with SVG plots. Every file carries its
 * provenance: ordo version, case hash, parameters, scheme and steps.
 *
 * @module
 */

import { join } from "node:path";
import { lineSvg, type Point } from "./plots.ts";
import { escapeHtml } from "./html.ts";
import { csvField } from "../base/csv.ts";
import { Figures, slug } from "./figures.ts";
import type { RunOutcome } from "../analysis/outcome.ts";
import type { Gate } from "../analysis/gate.ts";
import { formatRun } from "../analysis/table.ts";
import { runJson } from "../analysis/result_json.ts";
import { VERSION } from "../base/version.ts";

/** The JSON result's shape, as far as the report reads it. */
interface ResultJson {
  labels: string[];
  times: number[];
  exact: Record<string, number[]>;
  series: Record<string, number[]>[];
  amplitudes: {
    picture: string;
    exact: Record<string, [number, number][]>;
    series: Record<string, [number, number][]>[];
  };
  analysis: {
    targets: {
      label: string;
      orders: { order: number; error: number; bound: number }[];
    }[];
  };
}

/** Targets beyond this many are left out of the plots (not of the data files). */
const MAX_PLOTTED_TARGETS = 12;

/** One line of provenance. */
export function provenance(outcome: RunOutcome): string {
  const { built, result } = outcome;
  const params = [...built.params].map(([k, v]) =>
    `${k}=${typeof v === "number" ? v : `${v.re}${v.im >= 0 ? "+" : ""}${v.im}i`}`
  )
    .join(" ");
  return `ordo ${VERSION}; case ${built.source.file} sha256 ${built.source.sha256}; params ${
    params || "(none)"
  }; ` +
    `scheme ${result.scheme}; steps ${result.steps}; order ${built.model.order}; λ ${built.model.strength}`;
}

/** The tidy CSV: its header first, then one row per (time, label, source); provenance is in result.json. */
export function populationsCsv(json: ResultJson): string {
  const lines = ["time,label,source,population"];
  json.times.forEach((t, k) => {
    for (const label of json.labels) {
      lines.push(`${t},${csvField(label)},exact,${json.exact[label]![k]}`);
      json.series.forEach((s, n) => lines.push(`${t},${csvField(label)},order${n},${s[label]![k]}`));
    }
  });
  return lines.join("\n") + "\n";
}

/**
 * The tidy amplitudes: header first, one row per (time, label, source) with the real and imaginary parts of the
 * amplitude, in the picture result.json names (Schrödinger: ψ(t) in the case's basis).
 */
export function amplitudesCsv(json: ResultJson): string {
  const lines = ["time,label,source,re,im"];
  json.times.forEach((t, k) => {
    for (const label of json.labels) {
      const [re, im] = json.amplitudes.exact[label]![k]!;
      lines.push(`${t},${csvField(label)},exact,${re},${im}`);
      json.amplitudes.series.forEach((s, n) => {
        const [sr, si] = s[label]![k]!;
        lines.push(`${t},${csvField(label)},order${n},${sr},${si}`);
      });
    }
  });
  return lines.join("\n") + "\n";
}

/** The gate per order (propagator mode): `order,fidelity,norm_error,leakage,magnus_error`; the exact row first. */
export function gateCsv(gate: Gate): string {
  const lines = ["order,fidelity,norm_error,leakage,magnus_error", `exact,1,0,${gate.leakage.exact},`];
  gate.fidelity.forEach((f, n) =>
    lines.push(
      `${n},${f},${gate.normError[n]},${gate.leakage.series[n]},${gate.magnus ? gate.magnus.error[n] : ""}`,
    )
  );
  return lines.join("\n") + "\n";
}

/** The tidy observables: header first, one row per (time, observable, source): exact, order<n>, consistent<n>. */
export function observablesCsv(outcome: RunOutcome, times: number[]): string {
  const lines = ["time,observable,source,value"];
  times.forEach((t, k) => {
    for (const o of outcome.observed) {
      const name = csvField(o.name);
      lines.push(`${t},${name},exact,${o.exact[k]}`);
      o.series.forEach((s, n) => lines.push(`${t},${name},order${n},${s[k]}`));
      o.consistent.forEach((s, n) => lines.push(`${t},${name},consistent${n},${s[k]}`));
    }
  });
  return lines.join("\n") + "\n";
}

/** ⟨O⟩ of an observable against time: exact and per partial sum. */
function observablePlot(
  outcome: RunOutcome,
  times: number[],
  o: RunOutcome["observed"][number],
): Promise<string> {
  const unit = outcome.built.units.time ? ` (${outcome.built.units.time})` : "";
  const orders = o.series.map((_, n) => `order ${n}`);
  const points: Point[] = [];
  o.series.forEach((values, n) =>
    times.forEach((t, k) => points.push({ x: t, y: values[k]!, series: `order ${n}` }))
  );
  times.forEach((t, k) => points.push({ x: t, y: o.exact[k]!, series: "exact" }));
  return lineSvg({
    title: `⟨${o.name}⟩: exact and partial sums`,
    xTitle: `time${unit}`,
    yTitle: `⟨${o.name}⟩`,
    points,
    order: ["exact", ...orders],
    black: ["exact"],
    dashed: ["exact"],
    dashOdd: true,
  });
}

/** The plots of one target: populations, error against order, error against time. */
async function targetPlots(outcome: RunOutcome, json: ResultJson, label: string): Promise<string[]> {
  const unit = outcome.built.units.time ? ` (${outcome.built.units.time})` : "";
  const orders = json.series.map((_, n) => `order ${n}`);
  const populations: Point[] = [];
  // Exact last, so that its dashed black line is drawn over the partial sums.
  json.series.forEach((s, n) =>
    json.times.forEach((t, k) => populations.push({ x: t, y: s[label]![k]!, series: `order ${n}` }))
  );
  json.times.forEach((t, k) => populations.push({ x: t, y: json.exact[label]![k]!, series: "exact" }));
  const analysis = json.analysis.targets.find((t) => t.label === label)!;
  const byOrder: Point[] = analysis.orders.flatMap((o) => [
    { x: o.order, y: o.error, series: "error" },
    { x: o.order, y: o.bound, series: "a-priori bound" },
  ]);
  const overTime: Point[] = [];
  json.series.forEach((s, n) =>
    json.times.forEach((t, k) =>
      overTime.push({ x: t, y: Math.abs(s[label]![k]! - json.exact[label]![k]!), series: `order ${n}` })
    )
  );
  return [
    await lineSvg({
      title: `population of ${label}: exact and partial sums`,
      xTitle: `time${unit}`,
      yTitle: "population",
      points: populations,
      order: ["exact", ...orders],
      black: ["exact"],
      dashed: ["exact"],
      dashOdd: true,
    }),
    await lineSvg({
      title: `population error of ${label} at t = ${
        Number(outcome.analysis.time.toPrecision(6))
      } against order`,
      xTitle: "Dyson order n",
      yTitle: "|P_n − P_exact|",
      logY: true,
      points: byOrder,
      dashed: ["a-priori bound"],
      order: ["error", "a-priori bound"],
      floor: 1e-16,
    }),
    await lineSvg({
      title: `population error of ${label} against time, per order`,
      xTitle: `time${unit}`,
      yTitle: "|P_n − P_exact|",
      logY: true,
      points: overTime,
      order: orders,
      dashOdd: true,
      floor: 1e-16,
    }),
  ];
}

/**
 * Writes result.json, populations.csv and report.html into dir.
 *
 * @param outcome a finished run
 * @param dir the output folder (created if missing)
 * @returns the paths written
 */
export async function writeReport(outcome: RunOutcome, dir: string): Promise<string[]> {
  Deno.mkdirSync(dir, { recursive: true });
  const json = runJson(outcome) as ResultJson & Record<string, unknown>;
  const files = [
    join(dir, "result.json"),
    join(dir, "populations.csv"),
    join(dir, "report.html"),
    join(dir, "amplitudes.csv"),
  ];
  Deno.writeTextFileSync(
    files[0]!,
    JSON.stringify({ ...json, provenance: provenance(outcome) }, null, 1) + "\n",
  );
  Deno.writeTextFileSync(files[1]!, populationsCsv(json));
  Deno.writeTextFileSync(files[3]!, amplitudesCsv(json));
  if (outcome.observed.length > 0) {
    const path = join(dir, "observables.csv");
    files.push(path);
    Deno.writeTextFileSync(path, observablesCsv(outcome, json.times));
  }
  if (outcome.gate) {
    const path = join(dir, "gate.csv");
    files.push(path);
    Deno.writeTextFileSync(path, gateCsv(outcome.gate));
  }
  const sections: string[] = [];
  const plotted = json.labels.slice(0, MAX_PLOTTED_TARGETS);
  if (plotted.length < json.labels.length) {
    sections.push(
      `<p>Plots for the first ${MAX_PLOTTED_TARGETS} of ${json.labels.length} targets; the rest are in result.json and populations.csv (choose targets with --targets).</p>`,
    );
  }
  const figures = new Figures(dir);
  const time = outcome.built.units.time ? `t in ${outcome.built.units.time}` : "t in the case's time unit";
  for (const label of plotted) {
    const svgs = await targetPlots(outcome, json, label);
    sections.push(
      `<h2>target ${escapeHtml(label)}</h2>\n${svgs.map((s) => `<figure>${s}</figure>`).join("\n")}`,
    );
    const captions = [
      `population of ${label} against time (${time}): exact (black, dashed) and the partial sums ψ0 + … + ψn ` +
      "of the Dyson series, colour by order n (odd orders dashed).",
      `population error |P_n − P_exact| of ${label} at t = ${
        Number(outcome.analysis.time.toPrecision(6))
      } against the ` +
      "Dyson order n, with the a-priori bound from x = ∫‖λV‖dt (dashed).",
      `population error |P_n − P_exact| of ${label} against time (${time}), one line per order n.`,
    ];
    const names = ["populations", "error-by-order", "error-by-time"];
    for (const [k, svg] of svgs.entries()) await figures.add(`${slug(label)}-${names[k]}`, svg, captions[k]!);
  }
  for (const o of outcome.observed.slice(0, MAX_PLOTTED_TARGETS)) {
    const svg = await observablePlot(outcome, json.times, o);
    sections.push(`<h2>observable ${escapeHtml(o.name)}</h2>\n<figure>${svg}</figure>`);
    await figures.add(
      `observable-${slug(o.name)}`,
      svg,
      `⟨${o.name}⟩ against time (${time}): exact (black, dashed) and for the partial sums ψ0 + … + ψn, colour by ` +
        "order n (odd orders dashed).",
    );
  }
  const html = `<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="generator" content="ordo ${VERSION}">
<title>${escapeHtml(outcome.built.title)} — ordo report</title>
<style>
body { font-family: system-ui, sans-serif; max-width: 60rem; margin: 2rem auto; padding: 0 1rem; color: #222; }
pre { background: #f6f6f6; padding: 0.8rem; overflow-x: auto; font-size: 0.8rem; }
figure { margin: 1rem 0; }
.provenance { font-size: 0.8rem; color: #555; }
</style>
</head>
<body>
<h1>${escapeHtml(outcome.built.title)}</h1>
<p class="provenance">${escapeHtml(provenance(outcome))}</p>
<pre>${escapeHtml(formatRun(outcome))}</pre>
${sections.join("\n")}
</body>
</html>
`;
  Deno.writeTextFileSync(files[2]!, html);
  return [...files, ...figures.finish(outcome.built.title)];
}
