/**
 * Spectra: the eigenvalues of H0 with the dominant basis label of each
 * eigenvector, and the Bohr frequencies E_a − E_b of the pairs that V
 * couples in H0's eigenbasis.
 *
 * @module
 */

import { ComplexMatrix } from "../case/complex_matrix.ts";
import type { AssembledTerm } from "../case/terms.ts";
import { eigh, type Engine, multiply } from "../../engine/mod.ts";

/** A Hermitian matrix's spectrum, its eigenvectors (columns), and the dominant label of each. */
export interface Spectrum {
  values: Float64Array;
  vectors: Float64Array;
  dominant: string[];
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
 * The Bohr frequencies of pairs that V couples in H0's eigenbasis, strongest coupling first.
 *
 * @param engine a loaded engine (its kernel does the change of basis)
 * @param h0 H0's spectrum
 * @param vTerms V's terms (each at its full matrix; coefficients are not applied)
 * @returns the coupled pairs and the largest |E_a − E_b| among them
 */
export function bohrFrequencies(
  engine: Engine,
  h0: Spectrum,
  vTerms: AssembledTerm[],
): { bohr: BohrFrequency[]; omegaMax: number } {
  const { values, vectors, dominant } = h0;
  const d = values.length;
  const basisH = new ComplexMatrix(d, d, vectors).dagger().data;
  // Couplings in the H0 eigenbasis: the largest |W_ab| over V's terms.
  const coupling = new Float64Array(d * d);
  let largest = 0;
  for (const term of vTerms) {
    const w = multiply(engine, basisH, multiply(engine, term.matrix.data, vectors, d), d);
    for (let k = 0; k < d * d; k++) {
      coupling[k] = Math.max(coupling[k]!, Math.hypot(w[2 * k]!, w[2 * k + 1]!));
      largest = Math.max(largest, coupling[k]!);
    }
  }
  const cutoff = 1e-12 * Math.max(largest, 1e-300);
  const bohr: BohrFrequency[] = [];
  let omegaMax = 0;
  for (let a = 0; a < d; a++) {
    for (let b = 0; b < a; b++) {
      const c = Math.max(coupling[a * d + b]!, coupling[b * d + a]!);
      if (c <= cutoff) continue;
      const omega = values[a]! - values[b]!;
      omegaMax = Math.max(omegaMax, Math.abs(omega));
      bohr.push({ omega, upper: dominant[a]!, lower: dominant[b]!, coupling: c });
    }
  }
  bohr.sort((x, y) => y.coupling - x.coupling || y.omega - x.omega);
  return { bohr, omegaMax };
}
