/**
 * The norm bound x = ∫‖λV(s)‖ds (the n-th Dyson term is at most xⁿ/n!) as a
 * running integral over the window, and the fastest relative rate of change
 * of any coefficient.
 *
 * @module
 */

import { type AssembledTerm, coefAt } from "../case/terms.ts";
import { ComplexMatrix, type Operator } from "../case/complex_matrix.ts";
import { SparseComplexMatrix } from "../case/sparse_matrix.ts";
import { eigenvalues, type Engine, multiply } from "../../engine/mod.ts";
import type { Model } from "../../engine/model.ts";

/** The running norm integral and the coefficient rates over a window. */
export interface NormProfile {
  /** Largest ‖λV(t)‖₂ bound over the window. */
  vMax: number;
  /** x = ∫‖λV(s)‖ds over the window (an upper bound from the triangle inequality over terms). */
  normIntegral: number;
  /** The same integral from t_start to each of `normTimes` (for the bound at earlier times). */
  normCumulative: Float64Array;
  /** The times of `normCumulative`, evenly spaced over the window. */
  normTimes: Float64Array;
  /** Fastest relative rate of change of any coefficient, max |f'|/max |f|. */
  coefRate: number;
}

/**
 * ‖λV(t)‖ ≤ λ Σ_k |f_k(t)|·‖M_k‖₂, integrated by the trapezoid rule, and the coefficients' rates.
 *
 * @param engine a loaded engine (its eigensolver, for ‖M_k‖₂)
 * @param terms every assembled term (V's for the norm; all for the rates)
 * @param model the window, steps and λ
 * @returns the profile
 */
export function normProfile(engine: Engine, terms: AssembledTerm[], model: Model): NormProfile {
  const parts = boundParts(engine, terms.filter((t) => t.section === "perturbation"), model.dim);
  const points = profilePoints(model);
  const span = model.tEnd - model.tStart;
  const dt = span / (points - 1);
  let integral = 0, vMax = 0, previous = 0;
  const normTimes = new Float64Array(points), normCumulative = new Float64Array(points);
  const rates = coefficientRates(terms);
  for (let k = 0; k < points; k++) {
    const t = model.tStart + span * k / (points - 1);
    let norm = 0;
    for (const part of parts) norm += Math.abs(part.weight(t)) * part.norm;
    rates.sample(t, k > 0 ? dt : 0);
    norm *= Math.abs(model.strength);
    vMax = Math.max(vMax, norm);
    if (k > 0) integral += 0.5 * (norm + previous) * span / (points - 1);
    normTimes[k] = t;
    normCumulative[k] = integral;
    previous = norm;
  }
  return { vMax, normIntegral: integral, normCumulative, normTimes, coefRate: rates.fastest() };
}

/** Times the coefficients are sampled at for the norm profile and the rates: 4 per step, 4001 … 200001. */
function profilePoints(model: Model): number {
  return Math.min(200_001, Math.max(4001, 4 * model.steps + 1));
}

/** A piece of the bound ‖V(t)‖ ≤ Σ |weight(t)|·norm. */
interface BoundPart {
  norm: number;
  weight: (t: number) => number;
}

/**
 * The pieces of an upper bound on ‖V(t)‖₂ that is exact for constant V: the constant terms summed into one
 * matrix (its norm taken once); a time-dependent term with its conjugate partner, f·M + f*·M† =
 * Re f·(M + M†) + Im f·i(M − M†), as two Hermitian pieces (so a pair is not counted twice); any other term as
 * |f|·‖M‖₂. Norms by the engine's eigensolver.
 */
function boundParts(engine: Engine, vTerms: AssembledTerm[], d: number): BoundPart[] {
  const parts: BoundPart[] = [];
  // the zero matrix, stored as the terms are
  let constant: Operator = vTerms[0]?.matrix.scale({ re: 0, im: 0 }) ?? new ComplexMatrix(d, d);
  let anyConstant = false;
  for (let i = 0; i < vTerms.length; i++) {
    const term = vTerms[i]!;
    if (!term.coef?.usesTime) {
      constant = constant.add(term.matrix.scale(coefAt(term, 0)));
      anyConstant = true;
      continue;
    }
    if (vTerms[i + 1]?.conjugate) {
      i++;
      const m = term.matrix, dag = m.dagger();
      parts.push({ norm: hermitianNorm(engine, m.add(dag)), weight: (t) => coefAt(term, t).re });
      parts.push({
        norm: hermitianNorm(engine, m.sub(dag).scale({ re: 0, im: 1 })),
        weight: (t) => coefAt(term, t).im,
      });
      continue;
    }
    parts.push({
      norm: operatorNorm(engine, term.matrix),
      weight: (t) => Math.hypot(coefAt(term, t).re, coefAt(term, t).im),
    });
  }
  if (anyConstant) parts.push({ norm: operatorNorm(engine, constant), weight: () => 1 });
  return parts;
}

/**
 * ‖H‖₂ = max |eigenvalue| of a Hermitian matrix (the eigenvalues alone: exact, where a few power iterations
 * would only approach it from below, and a bound must not be too small); for a sparse one the bound ‖H‖∞ (no
 * eigensolver on O(d²)).
 */
function hermitianNorm(engine: Engine, h: Operator): number {
  if (h instanceof SparseComplexMatrix) return h.normInf();
  const dense = h as ComplexMatrix;
  const values = eigenvalues(engine, dense.data, dense.rows);
  return Math.max(Math.abs(values[0]!), Math.abs(values[values.length - 1]!));
}

/** ‖M‖₂: as {@link hermitianNorm} when M is Hermitian, else √(largest eigenvalue of M†M); for a sparse M the
 * bound √(‖M‖₁‖M‖∞). */
function operatorNorm(engine: Engine, m: Operator): number {
  if (m instanceof SparseComplexMatrix) return Math.sqrt(m.normInf() * m.dagger().normInf());
  const dense = m as ComplexMatrix;
  if (isHermitian(dense)) return hermitianNorm(engine, dense);
  const values = eigenvalues(
    engine,
    multiply(engine, dense.dagger().data, dense.data, dense.rows),
    dense.rows,
  );
  return Math.sqrt(Math.max(0, values[values.length - 1]!));
}

/** Whether a dense matrix equals its adjoint exactly (as written Hermitian matrices do). */
function isHermitian(m: ComplexMatrix): boolean {
  const d = m.rows, a = m.data;
  for (let i = 0; i < d; i++) {
    for (let j = i; j < d; j++) {
      if (a[2 * (i * d + j)] !== a[2 * (j * d + i)] || a[2 * (i * d + j) + 1] !== -a[2 * (j * d + i) + 1]!) {
        return false;
      }
    }
  }
  return true;
}

/**
 * The fastest relative rate of change of any coefficient, max |f'|/max |f|, sampled as in {@link normProfile}.
 *
 * @param terms every assembled term
 * @param model the window and steps
 * @returns the rate (0 when no coefficient depends on t)
 */
export function coefficientRate(terms: AssembledTerm[], model: Model): number {
  if (!terms.some((t) => t.coef?.usesTime)) return 0;
  const points = profilePoints(model);
  const span = model.tEnd - model.tStart;
  const rates = coefficientRates(terms);
  for (let k = 0; k < points; k++) {
    rates.sample(model.tStart + span * k / (points - 1), k > 0 ? span / (points - 1) : 0);
  }
  return rates.fastest();
}

/** Tracks max |f'| (by differences) and max |f| of every time-dependent coefficient. */
function coefficientRates(terms: AssembledTerm[]) {
  const rateMax = new Float64Array(terms.length), absMax = new Float64Array(terms.length);
  const previous = new Float64Array(2 * terms.length);
  return {
    sample(t: number, dt: number) {
      terms.forEach((term, j) => {
        if (!term.coef?.usesTime) return;
        const c = coefAt(term, t);
        if (dt > 0) {
          const rate = Math.hypot(c.re - previous[2 * j]!, c.im - previous[2 * j + 1]!) / dt;
          rateMax[j] = Math.max(rateMax[j]!, rate);
        }
        absMax[j] = Math.max(absMax[j]!, Math.hypot(c.re, c.im));
        previous[2 * j] = c.re;
        previous[2 * j + 1] = c.im;
      });
    },
    fastest(): number {
      let rate = 0;
      terms.forEach((_t, j) => {
        if (absMax[j]! > 0) rate = Math.max(rate, rateMax[j]! / absMax[j]!);
      });
      return rate;
    },
  };
}

/** x = ∫‖λV‖ds from t_start to t, interpolated from a profile's cumulative integral. */
export function normIntegralAt(profile: NormProfile, t: number): number {
  const { normTimes: ts, normCumulative: xs } = profile;
  if (t >= ts[ts.length - 1]!) return xs[xs.length - 1]!;
  if (t <= ts[0]!) return 0;
  const step = (ts[ts.length - 1]! - ts[0]!) / (ts.length - 1);
  const k = Math.min(ts.length - 2, Math.floor((t - ts[0]!) / step));
  // x grows monotonically; take the larger neighbour so the bound stays a bound
  return xs[k + 1]!;
}
