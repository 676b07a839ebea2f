/**
 * The norm bound x = ∫‖λV(s)‖ds (the n-th Dyson term is at most xⁿ/n!) as a
 * running integral over the window, and the fastest relative rate of change
 * of any coefficient.
 *
 * @module
 */

import { type AssembledTerm, coefAt } from "../case/terms.ts";
import { eigh, type Engine, multiply } from "../../engine/mod.ts";
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
  const d = model.dim;
  const vTerms = terms.filter((t) => t.section === "perturbation");
  const termNorms = vTerms.map((t) => {
    const ev = eigh(engine, multiply(engine, t.matrix.dagger().data, t.matrix.data, d), d).values;
    return Math.sqrt(Math.max(0, ev[d - 1]!));
  });
  const points = Math.min(200_001, Math.max(4001, 4 * model.steps + 1));
  const span = model.tEnd - model.tStart;
  const dt = span / (points - 1);
  let integral = 0, vMax = 0, previous = 0;
  const normTimes = new Float64Array(points), normCumulative = new Float64Array(points);
  const rates = coefficientRates(terms);
  for (let k = 0; k < points; k++) {
    const t = model.tStart + span * k / (points - 1);
    let norm = 0;
    vTerms.forEach((term, j) => {
      const c = coefAt(term, t);
      norm += Math.hypot(c.re, c.im) * termNorms[j]!;
    });
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

/**
 * The fastest relative rate of change of any coefficient, max |f'|/max |f|, sampled as in {@link normProfile}.
 *
 * @param terms every assembled term
 * @param model the window and steps
 * @returns the rate (0 when no coefficient depends on t)
 */
export function coefficientRate(terms: AssembledTerm[], model: Model): number {
  if (!terms.some((t) => t.coef?.usesTime)) return 0;
  const points = Math.min(200_001, Math.max(4001, 4 * model.steps + 1));
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
