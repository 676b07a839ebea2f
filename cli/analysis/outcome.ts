/**
 * `ordo run CASE`: the series and the exact propagation for one case, the
 * order-by-order table and verdict, and the JSON result.
 *
 * @module
 */

import { analyse, type Analysis } from "./verdict.ts";
import type { BuiltCase } from "../case/build.ts";
import { inspectCase, type Inspection, normIntegralAt } from "./inspection.ts";
import { type Engine, populationsAt, type Result, solve } from "../../engine/mod.ts";
import { VERSION } from "../base/version.ts";

/** A finished run with its analysis. */
export interface RunOutcome {
  built: BuiltCase;
  info: Inspection;
  result: Result;
  analysis: Analysis;
}

/**
 * Runs a built case.
 *
 * @param engine a loaded engine
 * @param built the case
 * @param at report at the recorded time nearest to this (default: the end)
 * @param onProgress progress callback (fraction done)
 * @returns the result and its analysis
 */
export function runCase(
  engine: Engine,
  built: BuiltCase,
  at?: number,
  onProgress?: (f: number) => void,
): RunOutcome {
  const info = inspectCase(engine, built);
  const result = solve(engine, built.model, onProgress);
  let sample = result.times.length - 1;
  if (at !== undefined) {
    let best = Infinity;
    result.times.forEach((t, k) => {
      if (Math.abs(t - at) < best) [best, sample] = [Math.abs(t - at), k];
    });
  }
  // The tail bound at the reported time uses x = ∫‖λV‖ds up to that time.
  const x = normIntegralAt(info, result.times[sample]!);
  const analysis = analyse(result, built.space.labels, built.targets, x, built.tolerance, sample);
  return { built, info, result, analysis };
}

function num(x: number, digits = 4): string {
  if (Number.isNaN(x)) return "—";
  if (x === 0) return "0";
  return x.toExponential(digits - 1);
}

/** A population with 8 significant digits, fixed or exponential by size. */
function pop(x: number): string {
  if (x === 0) return "0";
  return Math.abs(x) >= 1e-3 ? x.toPrecision(8) : x.toExponential(7);
}

/** The terminal report: header, one table per target, verdict. */
export function formatRun(
  { built, info, result, analysis }: RunOutcome,
): string {
  const out: string[] = [];
  const tu = built.units.time ? ` ${built.units.time}` : "";
  out.push(`ordo ${VERSION} · ${built.title}`);
  out.push(`units   ${built.units.description}`);
  const stepText = result.scheme === "time-independent"
    ? `no time steps (time-independent H: exact exponentials between ${result.times.length} samples)`
    : `${result.steps} steps of h = ${
      Number(result.stepSize.toPrecision(4))
    }${tu}, 4th-order commutator-free exponential integrator`;
  out.push(
    `scheme  ${result.scheme}; ${stepText}; Dyson order ≤ ${built.model.order}; λ = ${built.model.strength}`,
  );
  out.push(
    `window  t = ${built.model.tStart} … ${built.model.tEnd}${tu}; reporting t = ${
      Number(analysis.time.toPrecision(6))
    }${tu}; x = ∫‖λV‖dt ≤ ${num(normIntegralAt(info, analysis.time), 3)}`,
  );
  for (const target of analysis.targets) {
    out.push("");
    out.push(`population of ${target.label}: exact ${pop(target.exact)}`);
    out.push("  order  partial sum      error      bound      consistent     ‖ψn‖/‖ψn−1‖");
    for (const row of target.rows) {
      out.push(
        `  ${String(row.order).padStart(5)}  ${pop(row.population).padEnd(15)}  ${
          num(row.error).padStart(9)
        }  ${num(row.bound).padStart(9)}  ${pop(row.consistent).padStart(14)}  ${
          num(row.ratio, 3).padStart(9)
        }`,
      );
    }
  }
  out.push("");
  out.push(`verdict (tolerance ${num(analysis.tolerance, 2)} on populations)`);
  const refText = result.checkDivisor === 15
    ? "step doubling, |P(h) − P(2h)|/15"
    : "exact by eigen-decomposition vs by Taylor series";
  out.push(
    `  reference error ≈ ${num(analysis.referenceError, 2)} (${refText}): ` +
      (analysis.referenceOk
        ? "small enough to judge the orders"
        : "TOO LARGE to judge orders at this tolerance; raise [grid] steps or the tolerance"),
  );
  for (const t of analysis.targets) {
    const need = t.minOrder === null
      ? `no order up to ${built.model.order} meets the tolerance`
      : `order ${t.minOrder} meets the tolerance`;
    let first = "";
    const pct = (x: number) => `${(x * 100).toPrecision(3)}%`;
    const judge = (x: number) =>
      x <= 0.01
        ? `within 1% (${pct(x)})`
        : x <= 0.1
        ? `within 10% but not 1% (${pct(x)})`
        : `OFF by ${pct(x)}`;
    if (!Number.isNaN(t.firstOrderRelative)) first = `; first order is ${judge(t.firstOrderRelative)}`;
    if (t.leadingOrder !== null && t.leadingOrder > 1 && !Number.isNaN(t.leadingRelative)) {
      first += ` (it is zero here: the leading order is ${t.leadingOrder}, ${judge(t.leadingRelative)})`;
    }
    out.push(`  ${t.label}: ${need}${first}`);
  }
  if (analysis.growing) {
    out.push(
      "  WARNING: the Dyson terms grow with order here: the series diverges or is at best asymptotic for these parameters",
    );
  }
  for (const w of built.warnings) out.push(`  warning: ${w}`);
  return out.join("\n");
}

/** The stable JSON result (PRODUCT.md), plus the analysis. */
export function runJson({ built, result, analysis }: RunOutcome): unknown {
  const d = built.model.dim;
  const labels = built.targets;
  const index = labels.map((l) => built.space.labels.indexOf(l));
  const samples = result.times.length;
  const popsOf = (states: Float64Array) => {
    const perLabel: Record<string, number[]> = {};
    labels.forEach((l) => (perLabel[l] = []));
    for (let k = 0; k < samples; k++) {
      const p = populationsAt(states, d, k);
      labels.forEach((l, j) => perLabel[l]!.push(p[index[j]!]!));
    }
    return perLabel;
  };
  const partial = new Float64Array(result.exact.length);
  const series = result.terms.map((term) => {
    for (let k = 0; k < partial.length; k++) partial[k]! += term[k]!;
    return popsOf(partial);
  });
  const exact = popsOf(result.exact);
  const last = (m: Record<string, number[]>) =>
    Object.fromEntries(labels.map((l) => [l, m[l]![samples - 1]!]));
  return {
    ordo: VERSION,
    case: {
      title: built.title,
      file: built.source.file,
      sha256: built.source.sha256,
      params: Object.fromEntries(
        [...built.params].map((
          [k, v],
        ) => [k, typeof v === "number" ? v : [v.re, v.im]]),
      ),
    },
    method: {
      scheme: result.scheme,
      steps: result.steps,
      step_size: result.stepSize,
      order: built.model.order,
      strength: built.model.strength,
      reference_error: analysis.referenceError,
      units: built.units.description,
    },
    labels,
    basis: built.space.labels,
    times: Array.from(result.times),
    exact,
    series,
    final: { exact: last(exact), series: series.map(last) },
    warnings: built.warnings,
    analysis: {
      time: analysis.time,
      tolerance: analysis.tolerance,
      reference_ok: analysis.referenceOk,
      term_norms: analysis.termNorms,
      growing_terms: analysis.growing,
      targets: analysis.targets.map((t) => ({
        label: t.label,
        exact: t.exact,
        min_order: t.minOrder,
        leading_order: t.leadingOrder,
        first_order_relative_error: Number.isNaN(t.firstOrderRelative) ? null : t.firstOrderRelative,
        orders: t.rows.map((r) => ({
          order: r.order,
          population: r.population,
          error: r.error,
          bound: r.bound,
          consistent: r.consistent,
          ratio: Number.isNaN(r.ratio) ? null : r.ratio,
        })),
      })),
    },
  };
}
