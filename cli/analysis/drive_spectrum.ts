/**
 * What each drive can excite: the spectrum of every time-dependent coefficient of V against the Bohr
 * frequencies V couples. To first order the amplitude of b → a is −i·V_ab·f̃(ω_ab), f̃(ω) = ∫f(t)e^{iωt}dt over
 * the window, so |f̃(ω_ab)|² is each transition's first-order spectral weight. A drive none of whose weight
 * reaches a coupled transition is, far more often than not, a frequency written without its 2π (cos(f·t) with
 * f in GHz is a drive at f rad per time unit, not at 2π·f).
 *
 * @module
 */

import { coefAt } from "../case/terms.ts";
import type { BuiltCase } from "../case/build.ts";
import type { Inspection } from "./inspection.ts";

/** The spectrum of one drive against the coupled transitions. */
export interface DriveSpectrum {
  /** Where the term sits in the case, e.g. "perturbation.terms[0]". */
  term: string;
  /** The frequency (rad per time unit, ≥ 0) where |f̃| peaks, and |f̃|² there. */
  peak: { omega: number; weight: number };
  /** |f̃(ω)|² at each coupled Bohr frequency (the first ones of the inspection, strongest coupling first). */
  transitions: { upper: string; lower: string; omega: number; weight: number }[];
  /** Some coupled transition gets at least 1e-3 of the peak weight. */
  reaches: boolean;
}

/** A transition counts as reached when its weight is at least this fraction of the peak. */
const REACH = 1e-3;

/**
 * The spectrum of every time-dependent coefficient of V.
 *
 * @param built the case
 * @param info its inspection (for the coupled Bohr frequencies)
 * @returns one entry per time-dependent term of V (a conjugate partner is its term's)
 */
export function driveSpectra(built: BuiltCase, info: Inspection): DriveSpectrum[] {
  const { tStart, tEnd } = built.model;
  const span = tEnd - tStart;
  const bohr = info.bohr.slice(0, 10);
  const highest = Math.max(info.omegaMax, info.coefRate, 1 / span);
  // samples: 16 per period of the fastest frequency that matters here, 2048 … 65536 (a power of 2, for the FFT)
  const wanted = Math.min(65536, Math.max(2048, Math.ceil(16 * span * 4 * highest / (2 * Math.PI))));
  const SAMPLES = 2 ** Math.ceil(Math.log2(wanted));
  const dt = span / (SAMPLES - 1);
  return built.terms.filter((t) => t.section === "perturbation" && t.coef?.usesTime && !t.conjugate).map(
    (term) => {
      const re = new Float64Array(SAMPLES), im = new Float64Array(SAMPLES);
      for (let k = 0; k < SAMPLES; k++) {
        const c = coefAt(term, tStart + k * dt);
        re[k] = c.re;
        im[k] = c.im;
      }
      // f̃(ω) = ∫ f(t) e^{iωt} dt, trapezoid rule; both signs of ω matter for a complex f.
      const weight = (omega: number) => {
        let sr = 0, si = 0;
        for (let k = 0; k < SAMPLES; k++) {
          const w = (k === 0 || k === SAMPLES - 1 ? 0.5 : 1) * dt, phase = omega * (tStart + k * dt);
          const c = Math.cos(phase), s = Math.sin(phase);
          sr += w * (re[k]! * c - im[k]! * s);
          si += w * (re[k]! * s + im[k]! * c);
        }
        return sr * sr + si * si;
      };
      // the peak, over every frequency the samples resolve: a zero-padded FFT of the same sum
      const peak = spectralPeak(re, im, dt);
      const transitions = bohr.map((b) => ({
        upper: b.upper,
        lower: b.lower,
        omega: b.omega,
        weight: Math.max(weight(b.omega), weight(-b.omega)),
      }));
      const reaches = transitions.length === 0 || transitions.some((t) => t.weight >= REACH * peak.weight);
      const path = term.path.map((p) => (typeof p === "number" ? `[${p}]` : `.${p}`)).join("").slice(1);
      return { term: path, peak, transitions, reaches };
    },
  );
}

/** The warning `run` prints when no drive reaches any coupled transition. */
export function driveWarning(built: BuiltCase, spectra: DriveSpectrum[]): string | undefined {
  if (spectra.length === 0 || spectra.some((s) => s.reaches)) return undefined;
  const unit = built.units.energy && !built.units.energy.startsWith("rad/") ? built.units.energy : "";
  const shown = (omega: number) =>
    unit ? `${(omega / built.units.energyFactor).toPrecision(4)} ${unit}` : `ω = ${omega.toPrecision(4)}`;
  const s = spectra[0]!, t = s.transitions[0]!;
  return `no drive has spectral weight at a transition V couples: ${s.term} peaks at ${
    shown(s.peak.omega)
  }, ` +
    `the strongest coupled transition ${t.upper} ↔ ${t.lower} is at ${shown(t.omega)} ` +
    `(weight ${
      (t.weight / s.peak.weight).toExponential(1)
    } of the peak). A frequency written without its 2π? ` +
    "In a coef, frequencies are angular (rad per time unit): write angular(f) for a frequency f in the case's " +
    "energy unit (cos(angular(f)*t) = cos(2π·f·t) for f in GHz)";
}

/**
 * Where |f̃(ω)|² peaks, from a radix-2 FFT of the samples zero-padded to twice their length (Cooley–Tukey;
 * common practice): bin k is ω_k = 2πk/(M·dt), the upper half the negative frequencies.
 */
function spectralPeak(re: Float64Array, im: Float64Array, dt: number): { omega: number; weight: number } {
  const m = 2 * re.length;
  const xr = new Float64Array(m), xi = new Float64Array(m);
  xr.set(re);
  xi.set(im);
  fft(xr, xi);
  let best = 0, weight = -1;
  for (let k = 0; k < m; k++) {
    const w = (xr[k]! * xr[k]! + xi[k]! * xi[k]!) * dt * dt;
    if (w > weight) [best, weight] = [k, w];
  }
  const signed = best <= m / 2 ? best : best - m;
  return { omega: Math.abs(2 * Math.PI * signed / (m * dt)), weight };
}

/** In-place radix-2 FFT with the e^{+iωt} sign of f̃ (length a power of 2). */
function fft(re: Float64Array, im: Float64Array): void {
  const n = re.length;
  for (let i = 1, j = 0; i < n; i++) {
    let bit = n >> 1;
    for (; j & bit; bit >>= 1) j ^= bit;
    j ^= bit;
    if (i < j) {
      [re[i], re[j]] = [re[j]!, re[i]!];
      [im[i], im[j]] = [im[j]!, im[i]!];
    }
  }
  for (let len = 2; len <= n; len <<= 1) {
    const angle = 2 * Math.PI / len, wr = Math.cos(angle), wi = Math.sin(angle);
    for (let i = 0; i < n; i += len) {
      let cr = 1, ci = 0;
      for (let k = 0; k < len / 2; k++) {
        const a = i + k, b = a + len / 2;
        const tr = re[b]! * cr - im[b]! * ci, ti = re[b]! * ci + im[b]! * cr;
        re[b] = re[a]! - tr;
        im[b] = im[a]! - ti;
        re[a] = re[a]! + tr;
        im[a] = im[a]! + ti;
        [cr, ci] = [cr * wr - ci * wi, cr * wi + ci * wr];
      }
    }
  }
}
