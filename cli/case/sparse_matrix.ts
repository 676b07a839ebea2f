/**
 * Sparse complex matrices for assembling operators of large spaces: the same operations as ComplexMatrix
 * (sum, product, scale, adjoint, tensor product, power), with only the non-zero entries stored, row by row.
 * Sums of local terms on a space of d levels have O(d) non-zeros, so assembly costs O(d), never O(d²).
 *
 * @module
 */

import { type Complex, ComplexMatrix, type Operator } from "./complex_matrix.ts";
import type { SparseMatrix as Csr } from "../../engine/model.ts";

/** The most non-zeros one assembled operator may hold (a few hundred MB of entries while it is being built). */
export const MAX_NON_ZEROS = 4e6;

/** Thrown when a product would hold more than {@link MAX_NON_ZEROS} entries. */
export class TooDenseError extends Error {}

type Row = Map<number, Complex>;

/** A sparse complex matrix: one map per row from column to entry (zeros are not stored). */
export class SparseComplexMatrix {
  readonly data: Row[];

  /**
   * @param rows number of rows
   * @param cols number of columns
   * @param data the rows (taken, not copied)
   */
  constructor(readonly rows: number, readonly cols: number, data?: Row[]) {
    this.data = data ?? Array.from({ length: rows }, () => new Map());
  }

  /** The n×n identity. */
  static identity(n: number): SparseComplexMatrix {
    const m = new SparseComplexMatrix(n, n);
    for (let i = 0; i < n; i++) m.data[i]!.set(i, { re: 1, im: 0 });
    return m;
  }

  /** The non-zeros of a dense interleaved matrix. */
  static fromDense(rows: number, cols: number, dense: Float64Array): SparseComplexMatrix {
    const m = new SparseComplexMatrix(rows, cols);
    for (let i = 0; i < rows; i++) {
      for (let j = 0; j < cols; j++) {
        const re = dense[2 * (i * cols + j)]!, im = dense[2 * (i * cols + j) + 1]!;
        if (re !== 0 || im !== 0) m.data[i]!.set(j, { re, im });
      }
    }
    return m;
  }

  /** Non-zeros stored. */
  get nonZeros(): number {
    return this.data.reduce((s, row) => s + row.size, 0);
  }

  /** Entry (i, j). */
  get(i: number, j: number): Complex {
    return this.data[i]!.get(j) ?? { re: 0, im: 0 };
  }

  /** Sets entry (i, j) (a zero removes it). */
  set(i: number, j: number, re: number, im = 0): void {
    if (re === 0 && im === 0) this.data[i]!.delete(j);
    else this.data[i]!.set(j, { re, im });
  }

  /** this + other (same shape). */
  add(other: SparseComplexMatrix): SparseComplexMatrix {
    const out = this.#copyRows();
    other.data.forEach((row, i) => {
      const o = out[i]!;
      for (const [j, b] of row) {
        const a = o.get(j);
        const z = a ? { re: a.re + b.re, im: a.im + b.im } : { re: b.re, im: b.im };
        if (z.re === 0 && z.im === 0) o.delete(j);
        else o.set(j, z);
      }
    });
    return new SparseComplexMatrix(this.rows, this.cols, out);
  }

  /** this − other (same shape). */
  sub(other: SparseComplexMatrix): SparseComplexMatrix {
    return this.add(other.scale({ re: -1, im: 0 }));
  }

  /** z·this. */
  scale(z: Complex): SparseComplexMatrix {
    if (z.re === 0 && z.im === 0) return new SparseComplexMatrix(this.rows, this.cols);
    const out = this.data.map((row) => {
      const o: Row = new Map();
      for (const [j, a] of row) o.set(j, { re: z.re * a.re - z.im * a.im, im: z.re * a.im + z.im * a.re });
      return o;
    });
    return new SparseComplexMatrix(this.rows, this.cols, out);
  }

  /** The matrix product this·other (row by row: each row of this combines rows of other). */
  mul(other: SparseComplexMatrix): SparseComplexMatrix {
    let total = 0;
    const out = this.data.map((row) => {
      const o: Row = new Map();
      for (const [k, a] of row) {
        for (const [j, b] of other.data[k]!) {
          const z = o.get(j);
          const re = a.re * b.re - a.im * b.im, im = a.re * b.im + a.im * b.re;
          if (z) {
            z.re += re;
            z.im += im;
          } else o.set(j, { re, im });
        }
      }
      for (const [j, z] of o) if (z.re === 0 && z.im === 0) o.delete(j);
      total += o.size;
      if (total > MAX_NON_ZEROS) {
        throw new TooDenseError(`a product holds more than ${MAX_NON_ZEROS} non-zeros`);
      }
      return o;
    });
    return new SparseComplexMatrix(this.rows, other.cols, out);
  }

  /** The conjugate transpose. */
  dagger(): SparseComplexMatrix {
    const out = new SparseComplexMatrix(this.cols, this.rows);
    this.data.forEach((row, i) => {
      for (const [j, a] of row) out.data[j]!.set(i, { re: a.re, im: -a.im });
    });
    return out;
  }

  /** The Kronecker (tensor) product this ⊗ other. */
  kron(other: SparseComplexMatrix): SparseComplexMatrix {
    const out = new SparseComplexMatrix(this.rows * other.rows, this.cols * other.cols);
    if (this.nonZeros * other.nonZeros > MAX_NON_ZEROS) {
      throw new TooDenseError(`a tensor product holds more than ${MAX_NON_ZEROS} non-zeros`);
    }
    this.data.forEach((row, i) => {
      for (const [j, a] of row) {
        other.data.forEach((orow, k) => {
          const o = out.data[i * other.rows + k]!;
          for (const [l, b] of orow) {
            o.set(j * other.cols + l, { re: a.re * b.re - a.im * b.im, im: a.re * b.im + a.im * b.re });
          }
        });
      }
    });
    return out;
  }

  /** this·this·…·this (n ≥ 0 factors; square matrices only), by repeated squaring. */
  power(n: number): SparseComplexMatrix {
    let out = SparseComplexMatrix.identity(this.rows);
    let square = new SparseComplexMatrix(this.rows, this.cols, this.#copyRows());
    for (let k = n; k > 0; k = Math.floor(k / 2)) {
      if (k % 2 === 1) out = out.mul(square);
      if (k > 1) square = square.mul(square);
    }
    return out;
  }

  /** Largest |A_ij − conj(A_ji)| and where it occurs (square matrices). */
  hermiticityDefect(): { value: number; row: number; col: number } {
    let worst = { value: 0, row: 0, col: 0 };
    this.data.forEach((row, i) => {
      for (const [j, a] of row) {
        const b = this.get(j, i);
        const value = Math.hypot(a.re - b.re, a.im + b.im);
        if (value > worst.value) worst = { value, row: Math.min(i, j), col: Math.max(i, j) };
      }
    });
    return worst;
  }

  /** Largest modulus of any entry. */
  maxAbs(): number {
    let m = 0;
    for (const row of this.data) for (const a of row.values()) m = Math.max(m, Math.hypot(a.re, a.im));
    return m;
  }

  /** The largest row sum of moduli (bounds the 2-norm of a Hermitian matrix). */
  normInf(): number {
    let m = 0;
    for (const row of this.data) {
      let s = 0;
      for (const a of row.values()) s += Math.hypot(a.re, a.im);
      m = Math.max(m, s);
    }
    return m;
  }

  /** Whether every entry is on the diagonal. */
  isDiagonal(): boolean {
    return this.data.every((row, i) => row.size === 0 || (row.size === 1 && row.has(i)));
  }

  /** The engine's compressed sparse rows (columns ascending within a row). */
  toCsr(): Csr {
    const rowStart = new Int32Array(this.rows + 1);
    const nnz = this.nonZeros;
    const column = new Int32Array(nnz), values = new Float64Array(2 * nnz);
    let at = 0;
    this.data.forEach((row, i) => {
      for (const j of [...row.keys()].sort((a, b) => a - b)) {
        const z = row.get(j)!;
        column[at] = j;
        values[2 * at] = z.re;
        values[2 * at + 1] = z.im;
        at++;
      }
      rowStart[i + 1] = at;
    });
    return { rowStart, column, values };
  }

  /** y = this·x for a complex vector (interleaved). */
  apply(x: Float64Array): Float64Array {
    const y = new Float64Array(2 * this.rows);
    this.data.forEach((row, i) => {
      let re = 0, im = 0;
      for (const [j, a] of row) {
        re += a.re * x[2 * j]! - a.im * x[2 * j + 1]!;
        im += a.re * x[2 * j + 1]! + a.im * x[2 * j]!;
      }
      y[2 * i] = re;
      y[2 * i + 1] = im;
    });
    return y;
  }

  #copyRows(): Row[] {
    return this.data.map((row) => {
      const o: Row = new Map();
      for (const [j, a] of row) o.set(j, { re: a.re, im: a.im });
      return o;
    });
  }
}

/** Calls visit(i, j, z) for every non-zero entry of a dense or sparse operator. */
export function forEachEntry(m: Operator, visit: (i: number, j: number, z: Complex) => void): void {
  if (m instanceof SparseComplexMatrix) {
    m.data.forEach((row, i) => row.forEach((z, j) => visit(i, j, z)));
    return;
  }
  for (let i = 0; i < m.rows; i++) {
    for (let j = 0; j < m.cols; j++) {
      const z = m.get(i, j);
      if (z.re !== 0 || z.im !== 0) visit(i, j, z);
    }
  }
}

/** y = m·x for a dense or sparse operator and an interleaved complex vector. */
export function applyOperator(m: Operator, x: Float64Array): Float64Array {
  if (m instanceof SparseComplexMatrix) return m.apply(x);
  const d = m.rows, a = (m as ComplexMatrix).data, y = new Float64Array(2 * d);
  for (let i = 0; i < d; i++) {
    let re = 0, im = 0;
    for (let j = 0; j < m.cols; j++) {
      const ar = a[2 * (i * m.cols + j)]!, ai = a[2 * (i * m.cols + j) + 1]!;
      re += ar * x[2 * j]! - ai * x[2 * j + 1]!;
      im += ar * x[2 * j + 1]! + ai * x[2 * j]!;
    }
    y[2 * i] = re;
    y[2 * i + 1] = im;
  }
  return y;
}

/** A dense copy of an operator (for the small spaces that need one). */
export function toDense(m: Operator): ComplexMatrix {
  if (m instanceof ComplexMatrix) return m;
  const out = new ComplexMatrix(m.rows, m.cols);
  forEachEntry(m, (i, j, z) => out.set(i, j, z.re, z.im));
  return out;
}
