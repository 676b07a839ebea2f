/**
 * The stable JSON result of a run (PRODUCT.md's contract), plus the analysis.
 *
 * @module
 */

import type { RunOutcome } from "./outcome.ts";
import { nonZerosOf, populationsAt } from "../../engine/mod.ts";
import { VERSION } from "../base/version.ts";
import type { Gate } from "./gate.ts";

/** The stable JSON result (PRODUCT.md), plus the analysis. */
export function runJson(outcome: RunOutcome): unknown {
  const { built, result, analysis, observed, amplitudes } = outcome;
  const d = built.model.dim;
  const labels = built.targets;
  const index = labels.map((l) => built.space.labels.indexOf(l));
  const samples = result.times.length;
  /** [re, im] of each target's amplitude at every recorded time. */
  const ampsOf = (states: Float64Array) => {
    const perLabel: Record<string, [number, number][]> = {};
    labels.forEach((l, j) => {
      const a = index[j]!;
      perLabel[l] = Array.from(
        { length: samples },
        (_, k) => [states[2 * (k * d + a)]!, states[2 * (k * d + a) + 1]!],
      );
    });
    return perLabel;
  };
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
  const partialAmplitude = new Float64Array(result.exact.length);
  const seriesAmplitudes = amplitudes.terms.map((term) => {
    for (let k = 0; k < partialAmplitude.length; k++) partialAmplitude[k]! += term[k]!;
    return ampsOf(partialAmplitude);
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
      stepping: result.method ?? null,
      operators: built.space.storage ?? "dense",
      non_zeros: built.space.storage === "sparse" ? nonZerosOf(built.model) : null,
      steps: result.steps,
      step_size: result.stepSize,
      accuracy: built.model.accuracy ?? null,
      order: built.model.order,
      strength: built.model.strength,
      reference_error: analysis.referenceError,
      units: built.units.description,
    },
    labels,
    basis: built.basis,
    levels: built.space.labels,
    times: Array.from(result.times),
    exact,
    series,
    final: { exact: last(exact), series: series.map(last) },
    observables: Object.fromEntries(
      observed.map((e) => [e.name, { exact: e.exact, series: e.series, consistent: e.consistent }]),
    ),
    amplitudes: {
      // schrodinger: ψ(t) itself, phases of the free evolution included; interaction: e^{iH0(t−t0)}ψ(t)
      picture: built.picture,
      exact: ampsOf(amplitudes.exact),
      series: seriesAmplitudes,
    },
    ...(outcome.gate ? { gate: gateJson(outcome.gate) } : {}),
    warnings: built.warnings,
    analysis: analysisJson(analysis),
  };
}

/** The gate part of the JSON result (propagator mode), at the final time. */
function gateJson(gate: Gate): Record<string, unknown> {
  const matrix = gate.magnus?.effective;
  return {
    subspace: gate.labels,
    time: gate.time,
    fidelity: gate.fidelity,
    norm_error: gate.normError,
    leakage: { exact: gate.leakage.exact, series: gate.leakage.series },
    magnus: gate.magnus
      ? {
        error: gate.magnus.error,
        effective_hamiltonian: {
          picture: "interaction",
          unit: gate.magnus.unit,
          labels: gate.labels,
          matrix: Array.from(
            { length: matrix!.rows },
            (_, i) =>
              Array.from({ length: matrix!.cols }, (_, j) => [matrix!.get(i, j).re, matrix!.get(i, j).im]),
          ),
        },
      }
      : null,
    ...(gate.magnusSkipped ? { magnus_skipped: gate.magnusSkipped } : {}),
  };
}

/** The analysis part of the JSON result. */
function analysisJson(analysis: RunOutcome["analysis"]): Record<string, unknown> {
  return {
    time: analysis.time,
    tolerance: analysis.tolerance,
    relative_tolerance: analysis.relative,
    reference_ok: analysis.referenceOk,
    untrusted: analysis.untrusted,
    norm_drift: analysis.normDrift,
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
  };
}
