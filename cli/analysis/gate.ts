/**
 * Propagator mode: the gate a run performs on a subspace of levels, order by order. One engine run follows the
 * start state and the propagator columns of the subspace (all columns, when the Magnus terms are wanted and the
 * space is small) together; from them, at the final time:
 *
 * - the average gate fidelity of each partial sum S_n against the exact propagator U on the subspace P:
 *   the Haar average over pure inputs ψ in the subspace of |⟨Uψ|S_nψ⟩|² is (Tr(M M†) + |Tr M|²) / (m(m+1))
 *   with M = (UP)†(S_nP) (Nielsen, Phys. Lett. A 303 (2002) 249; for an M that is not unitary, the same
 *   average: Pedersen, Møller & Mølmer, Phys. Lett. A 367 (2007) 47). A truncated sum is not unitary, so it is
 *   divided by the average of ‖S_nψ‖² over the same inputs, ‖S_nP‖²_F/m: F_n ≤ 1 (Cauchy–Schwarz, input by
 *   input), equal to Nielsen's F for a unitary S_n; a sum that only gains or loses norm keeps F = 1, and the
 *   norm error beside it shows that part;
 * - the operator-norm error ‖(U − S_n)P‖₂ (largest singular value);
 * - the leakage out of the subspace, averaged over its inputs: ‖QUP‖²_F/m, and ‖QS_nP‖²_F/m per order;
 * - the Magnus terms Ω_n of the interaction-picture propagator U_I = e^{iH0(t−t0)}U, from the λ-expansion of
 *   log U_I = log(I + Σ U_I,n) (Blanes, Casas, Oteo & Ros, Phys. Rep. 470 (2009) 151: Ω1 = U1,
 *   Ω2 = U2 − U1²/2, Ω3 = U3 − (U1U2 + U2U1)/2 + U1³/3, …), the error ‖(exp(Ω1+…+Ωn) − U_I)P‖₂ of the
 *   truncated Magnus propagator beside the truncated Dyson sum's, and the effective (average) Hamiltonian
 *   iΩ/(t − t0) on the subspace, in the case's energy unit.
 *
 * @module
 */

import { ComplexMatrix } from "../case/complex_matrix.ts";
import { WHOLE_PROPAGATOR_MAX_DIM } from "../case/start.ts";
import type { BuiltCase } from "../case/build.ts";
import { eigenvalues, type Engine, type Model, type Result, type Scheme } from "../../engine/mod.ts";

/** The largest space whose whole propagator a gate run follows (for the Magnus terms). */
export const MAGNUS_MAX_DIM = WHOLE_PROPAGATOR_MAX_DIM;

/** The gate a run performs on its subspace, at the final time. */
export interface Gate {
  labels: string[];
  time: number;
  /**
   * fidelity[n]: average gate fidelity of the partial sum to order n against the exact propagator, divided by
   * the partial sum's average squared norm on the subspace (≤ 1; Nielsen's F for a unitary sum).
   */
  fidelity: number[];
  /** normError[n]: ‖(U − S_n)P‖₂. */
  normError: number[];
  leakage: { exact: number; series: number[] };
  /** Present when the whole propagator was followed (constant H0, d ≤ MAGNUS_MAX_DIM). */
  magnus?: {
    /** error[n]: ‖(exp(Ω1+…+Ωn) − U_I)P‖₂, n = 0…N. */
    error: number[];
    /** iΩ/(t − t0) to order N on the subspace, in the case's energy unit (interaction picture). */
    effective: ComplexMatrix;
    unit: string;
  };
  /** Why the Magnus terms are absent, when they are (H0(t), a large space, or a divergent series). */
  magnusSkipped?: string;
}

/** Which propagator columns a run follows, after the start state (column 0). */
export interface Columns {
  levels: number[];
  /** Whether they are all the levels (the Magnus terms need the whole propagator). */
  whole: boolean;
}

/** Why a case's gate cannot have the Magnus terms (undefined when it can). */
export function magnusBlocker(built: BuiltCase, scheme: Scheme): string | undefined {
  if (scheme === "time-dependent-h0") return "H0 depends on t, so there is no interaction picture";
  if (built.space.storage === "sparse") return "sparse operators never diagonalise H0";
  if (built.model.dim > MAGNUS_MAX_DIM) {
    return `they need the whole propagator, followed only for d ≤ ${MAGNUS_MAX_DIM}`;
  }
  return undefined;
}

/** The columns a case's gate needs: all levels when the Magnus terms can be had, else the subspace's. */
export function gateColumns(built: BuiltCase, scheme: Scheme): Columns {
  if (magnusBlocker(built, scheme) === undefined) {
    return { levels: Array.from({ length: built.model.dim }, (_, k) => k), whole: true };
  }
  return { levels: built.subspace!.indices, whole: false };
}

/**
 * The model with the gate's columns beside the start state: one run propagates them all.
 *
 * @param model the engine model of the start state
 * @param columns the levels whose columns to add
 * @returns the model with `columns` = 1 + the number of levels
 */
export function withColumns(model: Model, columns: Columns): Model {
  const d = model.dim, count = 1 + columns.levels.length;
  const initial = new Float64Array(2 * d * count);
  initial.set(model.initial);
  columns.levels.forEach((level, j) => (initial[2 * (d * (j + 1) + level)] = 1));
  return { ...model, initial, columns: count };
}

/**
 * The d×c matrix whose columns are the given run columns of `states` (the exact states, or one Dyson term's) at
 * the final time, read in place from the run's column-interleaved layout.
 */
function finalBlock(result: Result, d: number, runColumns: number[], states: Float64Array): ComplexMatrix {
  const out = new ComplexMatrix(d, runColumns.length);
  const last = result.times.length - 1, m = result.columns;
  runColumns.forEach((c, j) => {
    const at = 2 * d * (last * m + c);
    for (let i = 0; i < d; i++) out.set(i, j, states[at + 2 * i]!, states[at + 2 * i + 1]!);
  });
  return out;
}

/** The partial sums S_0 … S_N of the run columns at the final time. */
function partialBlocks(result: Result, d: number, runColumns: number[]): ComplexMatrix[] {
  const sums: ComplexMatrix[] = [];
  result.terms.forEach((term, n) => {
    const block = finalBlock(result, d, runColumns, term);
    sums.push(n === 0 ? block : sums[n - 1]!.add(block));
  });
  return sums;
}

const trace = (m: ComplexMatrix) => {
  let re = 0, im = 0;
  for (let k = 0; k < Math.min(m.rows, m.cols); k++) {
    re += m.get(k, k).re;
    im += m.get(k, k).im;
  }
  return { re, im };
};

const frobenius2 = (m: ComplexMatrix) => m.data.reduce((s, x) => s + x * x, 0);

/**
 * Average gate fidelity of Y against X on an m-dimensional subspace: (Tr(MM†) + |Tr M|²)/(m(m+1)), M = X†Y
 * (X, Y: d×m, their columns the images of the subspace's basis).
 *
 * @param x the reference's columns (e.g. the exact propagator's)
 * @param y the columns to judge
 * @returns the Haar average of |⟨Xψ|Yψ⟩|² over unit ψ in the subspace
 */
export function averageFidelity(x: ComplexMatrix, y: ComplexMatrix): number {
  const m = x.cols;
  const overlap = x.dagger().mul(y);
  const t = trace(overlap);
  return (frobenius2(overlap) + t.re * t.re + t.im * t.im) / (m * (m + 1));
}

/**
 * The largest singular value of a d×m matrix, from the largest eigenvalue of its m×m Gram matrix.
 *
 * @param engine a loaded engine (for the eigensolver)
 * @param a the matrix
 * @returns ‖a‖₂
 */
export function spectralNorm(engine: Engine, a: ComplexMatrix): number {
  const gram = a.dagger().mul(a);
  const values = eigenvalues(engine, gram.data, gram.rows);
  return Math.sqrt(Math.max(0, values[values.length - 1]!));
}

/** The rows outside the subspace. */
function outside(a: ComplexMatrix, inside: Set<number>): number {
  let s = 0;
  for (let i = 0; i < a.rows; i++) {
    if (inside.has(i)) continue;
    for (let j = 0; j < a.cols; j++) {
      s += a.data[2 * (i * a.cols + j)]! ** 2 + a.data[2 * (i * a.cols + j) + 1]! ** 2;
    }
  }
  return s;
}

/**
 * exp(A) for a small complex square matrix: Taylor to round-off on A/2^s with ‖A/2^s‖₁ ≤ 1/2, then s squarings.
 *
 * @param a the matrix
 * @returns its exponential
 */
export function expm(a: ComplexMatrix): ComplexMatrix {
  const n = a.rows;
  let norm = 0;
  for (let j = 0; j < n; j++) {
    let s = 0;
    for (let i = 0; i < n; i++) s += Math.hypot(a.get(i, j).re, a.get(i, j).im);
    norm = Math.max(norm, s);
  }
  const squarings = norm > 0.5 ? Math.ceil(Math.log2(norm / 0.5)) : 0;
  const scaled = a.scale({ re: 2 ** -squarings, im: 0 });
  let sum = ComplexMatrix.identity(n), term = ComplexMatrix.identity(n);
  for (let k = 1; k <= 30; k++) {
    term = term.mul(scaled).scale({ re: 1 / k, im: 0 });
    sum = sum.add(term);
    if (term.data.every((x) => Math.abs(x) < 1e-18)) break;
  }
  for (let s = 0; s < squarings; s++) sum = sum.mul(sum);
  return sum;
}

/**
 * The Magnus terms Ω_1…Ω_N from the Dyson terms U_1…U_N of the same propagator: the λ-expansion of
 * log(I + X), X = Σ U_n, i.e. Ω_n = Σ_k (−1)^{k+1}/k · [X^k]_n, where [X^k]_n collects the products of k terms
 * whose orders add up to n.
 *
 * @param terms U_1…U_N (terms[0] is U_1)
 * @returns Ω_1…Ω_N
 */
export function magnusTerms(terms: ComplexMatrix[]): ComplexMatrix[] {
  const order = terms.length, d = terms[0]?.rows ?? 0;
  // powers[k][n]: [X^k]_n, for n ≥ k
  let power: (ComplexMatrix | undefined)[] = [undefined, ...terms];
  const omega = terms.map(() => new ComplexMatrix(d, d));
  for (let k = 1; k <= order; k++) {
    const sign = (k % 2 === 1 ? 1 : -1) / k;
    for (let n = k; n <= order; n++) omega[n - 1] = omega[n - 1]!.add(power[n]!.scale({ re: sign, im: 0 }));
    const next: (ComplexMatrix | undefined)[] = new Array(order + 1).fill(undefined);
    for (let n = k + 1; n <= order; n++) {
      let sum = new ComplexMatrix(d, d);
      for (let j = 1; j <= n - k; j++) sum = sum.add(power[n - j]!.mul(terms[j - 1]!));
      next[n] = sum;
    }
    power = next;
  }
  return omega;
}

/**
 * The gate of a run that followed the start state and the columns `columns` (run columns 1…).
 *
 * @param engine a loaded engine
 * @param built the case (its subspace, units)
 * @param result the run
 * @param columns which levels the run's columns 1… start from
 * @param eigen H0's eigen-decomposition (for the interaction picture of the Magnus terms), if H0 is constant
 * @returns fidelity, norm error and leakage per order, and the Magnus comparison when it could be had
 */
export function gateOf(
  engine: Engine,
  built: BuiltCase,
  result: Result,
  columns: Columns,
  eigen?: { values: Float64Array; vectors: Float64Array },
): Gate {
  const d = built.model.dim, sub = built.subspace!;
  const runColumns = sub.indices.map((level) => 1 + columns.levels.indexOf(level));
  const exact = finalBlock(result, d, runColumns, result.exact);
  const inside = new Set(sub.indices), m = sub.indices.length;
  const partial = partialBlocks(result, d, runColumns);
  const gate: Gate = {
    labels: sub.labels,
    time: result.times[result.times.length - 1]!,
    // a partial sum that vanishes on the subspace reproduces nothing of the gate: fidelity 0, not 0/0
    fidelity: partial.map((s) => frobenius2(s) > 0 ? averageFidelity(exact, s) / (frobenius2(s) / m) : 0),
    normError: partial.map((s) => spectralNorm(engine, exact.sub(s))),
    leakage: { exact: outside(exact, inside) / m, series: partial.map((s) => outside(s, inside) / m) },
  };
  const blocker = magnusBlocker(built, result.scheme);
  if (!columns.whole || !eigen || blocker) {
    gate.magnusSkipped = blocker ?? `they need the whole propagator, followed only for d ≤ ${MAGNUS_MAX_DIM}`;
    return gate;
  }
  // the interaction picture: U_I,n = e^{iH0τ}·U_n, with e^{iH0τ} = Z e^{iEτ} Z†
  const tau = gate.time - built.model.tStart;
  const z = new ComplexMatrix(d, d, eigen.vectors.slice());
  const phases = new ComplexMatrix(d, d);
  eigen.values.forEach((e, a) => phases.set(a, a, Math.cos(e * tau), Math.sin(e * tau)));
  const rotate = z.mul(phases).mul(z.dagger());
  const all = Array.from({ length: d }, (_, k) => 1 + k);
  const terms = result.terms.map((term) => rotate.mul(finalBlock(result, d, all, term)));
  const exactI = rotate.mul(finalBlock(result, d, all, result.exact));
  const omega = magnusTerms(terms.slice(1));
  const pick = (a: ComplexMatrix) => {
    const out = new ComplexMatrix(a.rows, m);
    sub.indices.forEach((level, j) => {
      for (let i = 0; i < a.rows; i++) out.set(i, j, a.get(i, level).re, a.get(i, level).im);
    });
    return out;
  };
  let sum = new ComplexMatrix(d, d);
  const error = [spectralNorm(engine, pick(ComplexMatrix.identity(d).sub(exactI)))];
  for (const [k, o] of omega.entries()) {
    sum = sum.add(o);
    const propagator = expm(sum);
    if (!propagator.data.every(Number.isFinite)) {
      // past its radius of convergence the Magnus series grows without bound: no number to report
      gate.magnusSkipped = `the Magnus series diverges here: exp(Ω1+…+Ω${k + 1}) overflows`;
      return gate;
    }
    error.push(spectralNorm(engine, pick(propagator.sub(exactI))));
  }
  // iΩ/τ in rad per time unit, then in the case's energy unit
  const factor = built.units.energyFactor;
  const effective = new ComplexMatrix(m, m);
  sub.indices.forEach((row, i) =>
    sub.indices.forEach((col, j) => {
      const w = sum.get(row, col);
      effective.set(i, j, -w.im / tau / factor, w.re / tau / factor);
    })
  );
  gate.magnus = { error, effective, unit: built.units.energy ?? "rad per time unit" };
  return gate;
}
