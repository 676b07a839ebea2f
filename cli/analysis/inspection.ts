/**
 * `ordo inspect CASE`: what the case describes, before any propagation —
 * dimension, H0 spectrum, the Bohr frequencies V couples, the phase per
 * integrator step with a suggested step count, the norm bound x = ∫‖λV‖dt,
 * and the memory a run will need.
 *
 * @module
 */

import type { AssembledTerm, BuiltCase } from "../case/build.ts";
import { ComplexMatrix } from "../case/complex_matrix.ts";
import { toComplex } from "../case/expression.ts";
import { eigh, type Engine, estimateMemory, schemeFor, stepsPerSample } from "../../engine/mod.ts";

/** Phase per step (largest Bohr frequency × h) that the 4th-order scheme handles to about 1e-8 per unit time. */
export const PHASE_PER_STEP = 0.25;

/** The facts `inspect` reports, also used by `run` for its header. */
export interface Inspection {
  dim: number;
  scheme: string;
  /** H0 eigenvalues at t_start (and t_end when H0 depends on time). */
  spectrum: { at: number; values: Float64Array; dominant: string[] }[];
  /** Bohr frequencies E_a − E_b > 0 of pairs that V couples, with their labels, largest coupling first. */
  bohr: { omega: number; upper: string; lower: string; coupling: number }[];
  /** Largest coupled |E_a − E_b| (the fastest interaction-picture phase). */
  omegaMax: number;
  /** Fastest relative rate of change of any coefficient, max |f'|/max |f|. */
  coefRate: number;
  /** Largest ‖λV(t)‖₂ bound over the window. */
  vMax: number;
  /** x = ∫‖λV(s)‖ds over the window (an upper bound from the triangle inequality over terms). */
  normIntegral: number;
  /** The same integral from t_start to each of `normTimes` (for the bound at earlier times). */
  normCumulative: Float64Array;
  /** The times of `normCumulative`, evenly spaced over the window. */
  normTimes: Float64Array;
  /** Integrator steps the run will take and its step size. */
  steps: number;
  stepSize: number;
  /** Suggested minimum steps for the 4th-order scheme. */
  suggestedSteps: number;
  memoryBytes: number;
  memoryLargest: string;
}

/** Hermitian part's spectrum with the dominant basis label of each eigenvector. */
function spectrum(engine: Engine, m: ComplexMatrix, labels: string[]) {
  const d = m.rows;
  const { values, vectors } = eigh(engine, m.data, d);
  const dominant = Array.from({ length: d }, (_, k) => {
    let best = 0, at = 0;
    for (let a = 0; a < d; a++) {
      const p = vectors[2 * (a * d + k)]! ** 2 +
        vectors[2 * (a * d + k) + 1]! ** 2;
      if (p > best) [best, at] = [p, a];
    }
    return labels[at]!;
  });
  return { values, vectors, dominant };
}

function assembleAt(
  terms: AssembledTerm[],
  d: number,
  t: number,
): ComplexMatrix {
  let sum = new ComplexMatrix(d, d);
  for (const term of terms) {
    let c = term.coef ? toComplex(term.coef.at(t)) : { re: 1, im: 0 };
    if (term.conjugate) c = { re: c.re, im: -c.im };
    sum = sum.add(term.matrix.scale(c));
  }
  return sum;
}

/**
 * Computes the inspection of a built case.
 *
 * @param engine a loaded engine (for the eigensolver)
 * @param built the case
 * @returns the facts to report
 */
export function inspectCase(engine: Engine, built: BuiltCase): Inspection {
  const { model, space } = built;
  const d = model.dim;
  const h0Terms = built.terms.filter((t) => t.section === "unperturbed");
  const vTerms = built.terms.filter((t) => t.section === "perturbation");
  const scheme = schemeFor(model);
  const h0TimeDependent = scheme === "time-dependent-h0";
  const spectra = (h0TimeDependent ? [model.tStart, model.tEnd] : [model.tStart]).map((
    at,
  ) => ({
    at,
    ...spectrum(engine, assembleAt(h0Terms, d, at), space.labels),
  }));
  const { values, vectors, dominant } = spectra[0]!;
  const basis = new ComplexMatrix(d, d, vectors);
  const basisH = basis.dagger();

  // Couplings in the H0 eigenbasis: the largest |W_ab| over V's terms.
  const coupling = new Float64Array(d * d);
  for (const term of vTerms) {
    const w = basisH.mul(term.matrix).mul(basis);
    for (let k = 0; k < d * d; k++) {
      coupling[k] = Math.max(
        coupling[k]!,
        Math.hypot(w.data[2 * k]!, w.data[2 * k + 1]!),
      );
    }
  }
  const cutoff = 1e-12 * Math.max(...coupling, 1e-300);
  const bohr: Inspection["bohr"] = [];
  let omegaMax = 0;
  for (let a = 0; a < d; a++) {
    for (let b = 0; b < a; b++) {
      const c = Math.max(coupling[a * d + b]!, coupling[b * d + a]!);
      if (c <= cutoff) continue;
      const omega = values[a]! - values[b]!;
      omegaMax = Math.max(omegaMax, Math.abs(omega));
      bohr.push({
        omega,
        upper: dominant[a]!,
        lower: dominant[b]!,
        coupling: c,
      });
    }
  }
  bohr.sort((x, y) => y.coupling - x.coupling || y.omega - x.omega);
  if (h0TimeDependent) {
    for (const s of spectra) {
      omegaMax = Math.max(omegaMax, s.values[d - 1]! - s.values[0]!);
    }
  }

  // Norm bound: ‖λV(t)‖ ≤ λ Σ_k |f_k(t)|·‖M_k‖₂, integrated by the trapezoid rule.
  const termNorms = vTerms.map((t) => {
    const ev = eigh(engine, t.matrix.dagger().mul(t.matrix).data, d).values;
    return Math.sqrt(Math.max(0, ev[d - 1]!));
  });
  const points = Math.min(200_001, Math.max(4001, 4 * model.steps + 1));
  const span = model.tEnd - model.tStart;
  let integral = 0, vMax = 0, coefRate = 0;
  const normTimes = new Float64Array(points), normCumulative = new Float64Array(points);
  let previous = 0;
  const allCoefTerms = built.terms;
  const rateMax = new Float64Array(allCoefTerms.length),
    absMax = new Float64Array(allCoefTerms.length);
  const prevAll = new Float64Array(2 * allCoefTerms.length);
  for (let k = 0; k < points; k++) {
    const t = model.tStart + span * k / (points - 1);
    let norm = 0;
    vTerms.forEach((term, j) => {
      const c = term.coef ? toComplex(term.coef.at(t)) : { re: 1, im: 0 };
      const m = Math.hypot(c.re, c.im);
      norm += m * termNorms[j]!;
    });
    allCoefTerms.forEach((term, j) => {
      if (!term.coef?.usesTime) return;
      const c = toComplex(term.coef.at(t));
      if (k > 0) {
        const rate = Math.hypot(c.re - prevAll[2 * j]!, c.im - prevAll[2 * j + 1]!) /
          (span / (points - 1));
        rateMax[j] = Math.max(rateMax[j]!, rate);
      }
      absMax[j] = Math.max(absMax[j]!, Math.hypot(c.re, c.im));
      prevAll[2 * j] = c.re;
      prevAll[2 * j + 1] = c.im;
    });
    norm *= Math.abs(model.strength);
    vMax = Math.max(vMax, norm);
    if (k > 0) integral += 0.5 * (norm + previous) * span / (points - 1);
    normTimes[k] = t;
    normCumulative[k] = integral;
    previous = norm;
  }
  allCoefTerms.forEach((_t, j) => {
    if (absMax[j]! > 0) coefRate = Math.max(coefRate, rateMax[j]! / absMax[j]!);
  });

  const memory = estimateMemory(model);
  const timeIndependent = scheme === "time-independent";
  const per = timeIndependent ? 0 : stepsPerSample(model);
  const steps = per * (model.samples - 1);
  const fastest = Math.max(omegaMax, vMax, coefRate, 1 / span);
  return {
    dim: d,
    scheme,
    spectrum: spectra.map(({ at, values, dominant }) => ({
      at,
      values,
      dominant,
    })),
    bohr,
    omegaMax,
    coefRate,
    vMax,
    normIntegral: integral,
    normCumulative,
    normTimes,
    steps,
    stepSize: timeIndependent ? span / (model.samples - 1) : span / steps,
    suggestedSteps: timeIndependent ? 0 : Math.ceil(span * fastest / PHASE_PER_STEP),
    memoryBytes: memory.bytes,
    memoryLargest: memory.largest,
  };
}

function fmt(x: number, digits = 6): string {
  if (x === 0) return "0";
  const a = Math.abs(x);
  return a >= 1e-3 && a < 1e6 ? String(Number(x.toPrecision(digits))) : x.toExponential(digits - 1);
}

function bytes(n: number): string {
  const units = ["B", "KiB", "MiB", "GiB"];
  let k = 0;
  while (n >= 1024 && k < units.length - 1) [n, k] = [n / 1024, k + 1];
  return `${n.toFixed(k ? 1 : 0)} ${units[k]}`;
}

/** The inspection as text for the terminal. */
export function formatInspection(built: BuiltCase, info: Inspection): string {
  const lines: string[] = [];
  const { model, space } = built;
  const timeUnit = built.units.time ?? "";
  const tu = timeUnit ? ` ${timeUnit}` : "";
  const freq = built.units.time ? ` rad/${built.units.time}` : "";
  lines.push(`${built.title}`);
  lines.push(
    `  file       ${built.source.file} (sha256 ${built.source.sha256.slice(0, 12)})`,
  );
  lines.push(`  units      ${built.units.description}`);
  const subs = space.subsystems.length > 1 || space.subsystems[0]!.name !== "levels"
    ? ` = ${
      space.subsystems.map((s) => `${s.name} (${s.kind}, ${s.labels.length})`)
        .join(" ⊗ ")
    }`
    : "";
  lines.push(`  dimension  ${info.dim}${subs}`);
  lines.push(
    `  labels     ${space.labels.slice(0, 24).join(", ")}${space.labels.length > 24 ? ", …" : ""}`,
  );
  lines.push(`  scheme     ${info.scheme}`);
  if (built.params.size) {
    lines.push(
      `  params     ${
        [...built.params].map(([k, v]) =>
          `${k} = ${
            typeof v === "number" ? fmt(v) : `${fmt(v.re)}${v.im < 0 ? "-" : "+"}${fmt(Math.abs(v.im))}i`
          }`
        ).join(", ")
      }`,
    );
  }
  for (const s of info.spectrum) {
    const shown = Array.from(
      s.values.slice(0, 16),
      (e, k) => `${fmt(e)} (${s.dominant[k]})`,
    ).join(", ");
    lines.push(
      `  H0 spectrum${info.spectrum.length > 1 ? ` at t = ${fmt(s.at)}` : ""} [${freq.trim() || "angular"}]`,
    );
    lines.push(
      `             ${shown}${s.values.length > 16 ? `, … (${s.values.length} levels)` : ""}`,
    );
  }
  lines.push(
    `  Bohr frequencies coupled by V (E_a − E_b, strongest coupling first):`,
  );
  if (info.bohr.length === 0) {
    lines.push("             none: V is diagonal in H0's eigenbasis");
  }
  for (const b of info.bohr.slice(0, 10)) {
    lines.push(
      `             ${b.upper} ↔ ${b.lower}: ω = ${fmt(b.omega)}${freq}, |V| = ${fmt(b.coupling, 4)}`,
    );
  }
  if (info.bohr.length > 10) {
    lines.push(`             … and ${info.bohr.length - 10} more pairs`);
  }
  lines.push(
    `  norm bound x = ∫‖λV(t)‖dt ≤ ${fmt(info.normIntegral, 4)}  (‖λV‖ ≤ ${
      fmt(info.vMax, 4)
    }${freq}; the n-th Dyson term is at most xⁿ/n!)`,
  );
  if (info.scheme === "time-independent") {
    lines.push(
      `  steps      none: H is time-independent, propagated exactly between ${model.samples} samples (interval ${
        fmt(info.stepSize)
      }${tu})`,
    );
  } else {
    const phase = info.omegaMax * info.stepSize;
    lines.push(
      `  steps      ${info.steps} of h = ${fmt(info.stepSize)}${tu}` +
        (info.steps !== model.steps
          ? ` (${model.steps} asked; rounded up to an even number per sample interval)`
          : ""),
    );
    lines.push(
      `             largest |E_a − E_b|·h = ${fmt(phase, 3)} rad per step; fastest coefficient rate × h = ${
        fmt(info.coefRate * info.stepSize, 3)
      }`,
    );
    const verdict = info.steps >= info.suggestedSteps ? "enough" : "too few: raise [grid] steps";
    lines.push(
      `             suggested ≥ ${info.suggestedSteps} steps (phase per step ≤ ${PHASE_PER_STEP}); ${verdict}`,
    );
  }
  lines.push(
    `  memory     about ${bytes(info.memoryBytes)} (largest part: ${info.memoryLargest})`,
  );
  for (const w of built.warnings) lines.push(`  warning    ${w}`);
  return lines.join("\n");
}

/** x = ∫‖λV‖ds from t_start to t, interpolated from the inspection's cumulative integral. */
export function normIntegralAt(info: Inspection, t: number): number {
  const { normTimes: ts, normCumulative: xs } = info;
  if (t >= ts[ts.length - 1]!) return xs[xs.length - 1]!;
  if (t <= ts[0]!) return 0;
  const step = (ts[ts.length - 1]! - ts[0]!) / (ts.length - 1);
  const k = Math.min(ts.length - 2, Math.floor((t - ts[0]!) / step));
  // x grows monotonically; take the larger neighbour so the bound stays a bound
  return xs[k + 1]!;
}
