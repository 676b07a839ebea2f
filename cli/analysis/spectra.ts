/**
 * Spectra: the eigenvalues of H0 with the dominant basis label of each
 * eigenvector, and the Bohr frequencies E_a − E_b of the pairs that V
 * couples in H0's eigenbasis.
 *
 * @module
 */

import { ComplexMatrix, type Operator } from "../case/complex_matrix.ts";
import { forEachEntry, SparseComplexMatrix, toDense } from "../case/sparse_matrix.ts";
import type { AssembledTerm } from "../case/terms.ts";
import { eigh, type Engine, multiply } from "../../engine/mod.ts";

/** A Hermitian matrix's spectrum, its eigenvectors (columns), and the dominant label of each. */
export interface Spectrum {
  values: Float64Array;
  vectors: Float64Array;
  dominant: string[];
  /**
   * For sparse operators, which are never diagonalised: "diagonal" when H0 is (values are its diagonal,
   * ascending, and `vectors` is empty), or "bound" when it is not (values are the Gershgorin interval [lo, hi]
   * that holds its spectrum).
   */
  sparse?: "diagonal" | "bound";
}

/** A Bohr frequency that V couples. */
export interface BohrFrequency {
  omega: number;
  upper: string;
  lower: string;
  coupling: number;
}

/**
 * The spectrum of a Hermitian matrix, each eigenvector named by its largest component's label.
 *
 * @param engine a loaded engine (its eigensolver)
 * @param m the matrix
 * @param labels the basis labels
 * @returns eigenvalues (ascending), eigenvectors, dominant labels
 */
export function spectrum(engine: Engine, m: ComplexMatrix, labels: string[]): Spectrum {
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

/**
 * The Bohr frequencies of pairs that V couples in H0's eigenbasis, strongest coupling first: the strongest
 * {@link BOHR_LISTED} listed, the count and the fastest over all of them (a dense case couples up to d(d−1)/2
 * pairs; only the listed ones become objects).
 *
 * @param engine a loaded engine (its kernel does the change of basis)
 * @param h0 H0's spectrum
 * @param vTerms V's terms (each at its full matrix; coefficients are not applied)
 * @returns the listed pairs, how many pairs are coupled, and the largest |E_a − E_b| among them
 */
export function bohrFrequencies(
  engine: Engine,
  h0: Spectrum,
  vTerms: AssembledTerm[],
): { bohr: BohrFrequency[]; pairs: number; omegaMax: number } {
  const { values, vectors, dominant } = h0;
  const d = values.length;
  const basisH = new ComplexMatrix(d, d, vectors).dagger().data;
  // Couplings in the H0 eigenbasis: the largest |W_ab| over V's terms.
  const coupling = new Float64Array(d * d);
  let largest = 0;
  for (const term of vTerms) {
    const w = multiply(engine, basisH, multiply(engine, toDense(term.matrix).data, vectors, d), d);
    for (let k = 0; k < d * d; k++) {
      coupling[k] = Math.max(coupling[k]!, Math.hypot(w[2 * k]!, w[2 * k + 1]!));
      largest = Math.max(largest, coupling[k]!);
    }
  }
  const cutoff = 1e-12 * Math.max(largest, 1e-300);
  // the coupled pairs a > b (their couplings, in the order a, then b), and the fastest phase over all of them
  const strengths: number[] = [];
  let omegaMax = 0;
  for (let a = 0; a < d; a++) {
    for (let b = 0; b < a; b++) {
      const c = Math.max(coupling[a * d + b]!, coupling[b * d + a]!);
      if (c <= cutoff) continue;
      strengths.push(c);
      omegaMax = Math.max(omegaMax, Math.abs(values[a]! - values[b]!));
    }
  }
  // only pairs at least as strong as the BOHR_LISTED-th strongest can be listed
  const floor = strengths.length <= BOHR_LISTED
    ? 0
    : Float64Array.from(strengths).sort()[strengths.length - BOHR_LISTED]!;
  const bohr: BohrFrequency[] = [];
  for (let a = 0; a < d; a++) {
    for (let b = 0; b < a; b++) {
      const c = Math.max(coupling[a * d + b]!, coupling[b * d + a]!);
      if (c <= cutoff || c < floor) continue;
      bohr.push({ omega: values[a]! - values[b]!, upper: dominant[a]!, lower: dominant[b]!, coupling: c });
    }
  }
  bohr.sort((x, y) => y.coupling - x.coupling || y.omega - x.omega);
  return { bohr: bohr.slice(0, BOHR_LISTED), pairs: strengths.length, omegaMax };
}

/** The most coupled pairs a case lists (the count and the fastest phase are taken over all of them). */
export const BOHR_LISTED = 1000;

/**
 * H0's spectrum for sparse operators, without an eigensolver: its diagonal when H0 is diagonal, else the
 * Gershgorin interval (every eigenvalue lies within a_ii ± Σ_{j≠i}|a_ij| for some i).
 *
 * @param h0 H0 at one time
 * @param labels the basis labels
 * @returns the spectrum, marked as diagonal or bound
 */
export function sparseSpectrum(h0: SparseComplexMatrix, labels: string[]): Spectrum {
  const d = h0.rows;
  if (h0.isDiagonal()) {
    const order = Array.from({ length: d }, (_, k) => k).sort((a, b) => h0.get(a, a).re - h0.get(b, b).re);
    return {
      values: Float64Array.from(order, (k) => h0.get(k, k).re),
      vectors: new Float64Array(0),
      dominant: order.map((k) => labels[k]!),
      sparse: "diagonal",
    };
  }
  let lo = Infinity, hi = -Infinity;
  for (let i = 0; i < d; i++) {
    let radius = 0;
    h0.forEachInRow(i, (j, re, im) => {
      if (j !== i) radius += Math.hypot(re, im);
    });
    const centre = h0.get(i, i).re;
    lo = Math.min(lo, centre - radius);
    hi = Math.max(hi, centre + radius);
  }
  return {
    values: Float64Array.from([lo, hi]),
    vectors: new Float64Array(0),
    dominant: ["", ""],
    sparse: "bound",
  };
}

/**
 * The Bohr frequencies V couples, for sparse operators: with a diagonal H0, E_a − E_b over V's non-zeros (the
 * strongest {@link BOHR_LISTED} listed, the count and the fastest over all); otherwise none can be listed and the
 * fastest is bounded by the width of H0's Gershgorin interval.
 *
 * @param h0 H0's sparse spectrum at t_start
 * @param diagonal H0's diagonal by level (when it is diagonal)
 * @param vTerms V's terms
 * @param labels the basis labels
 * @returns the listed pairs, how many are coupled, and the largest |E_a − E_b| (or its bound)
 */
export function sparseBohrFrequencies(
  h0: Spectrum,
  diagonal: Float64Array,
  vTerms: { matrix: Operator }[],
  labels: string[],
): { bohr: BohrFrequency[]; pairs: number; omegaMax: number } {
  if (h0.sparse === "bound") return { bohr: [], pairs: 0, omegaMax: h0.values[1]! - h0.values[0]! };
  const coupling = new Map<number, number>();
  const d = diagonal.length;
  for (const term of vTerms) {
    forEachEntry(term.matrix, (a, b, z) => {
      if (a === b) return;
      const key = Math.max(a, b) * d + Math.min(a, b);
      coupling.set(key, Math.max(coupling.get(key) ?? 0, Math.hypot(z.re, z.im)));
    });
  }
  let omegaMax = 0;
  const bohr: BohrFrequency[] = [];
  for (const [key, c] of coupling) {
    const a = Math.floor(key / d), b = key % d;
    const [upper, lower] = diagonal[a]! >= diagonal[b]! ? [a, b] : [b, a];
    const omega = diagonal[upper]! - diagonal[lower]!;
    omegaMax = Math.max(omegaMax, omega);
    bohr.push({ omega, upper: labels[upper]!, lower: labels[lower]!, coupling: c });
  }
  bohr.sort((x, y) => y.coupling - x.coupling || y.omega - x.omega);
  return { bohr: bohr.slice(0, BOHR_LISTED), pairs: coupling.size, omegaMax };
}
