/**
 * Sparse complex matrices for assembling operators of large spaces: the same operations as ComplexMatrix
 * (sum, product, scale, adjoint, tensor product, power), with only the non-zero entries stored in compressed
 * rows (columns ascending within a row; about 20 bytes an entry). Sums of local terms on a space of d levels
 * have O(d) non-zeros, so assembly costs O(d) memory and time, never O(d²). Matrices are not changed in place
 * by the operations (each returns a new one).
 *
 * @module
 */

import { type Complex, ComplexMatrix, type Operator, powerBySquaring } from "./complex_matrix.ts";
import type { SparseMatrix as Csr } from "../../engine/model.ts";

/** The most non-zeros one assembled operator may hold (a few hundred MB of entries while it is being built). */
export const MAX_NON_ZEROS = 1e7;

/** Thrown when a product would hold more than {@link MAX_NON_ZEROS} entries. */
export class TooDenseError extends Error {}

/** Growable compressed rows, filled row by row. */
class RowsBuilder {
  rowStart: Int32Array;
  column: Int32Array;
  re: Float64Array;
  im: Float64Array;
  count = 0;
  row = 0;

  constructor(readonly rows: number, capacity: number) {
    this.rowStart = new Int32Array(rows + 1);
    this.column = new Int32Array(Math.max(capacity, 4));
    this.re = new Float64Array(Math.max(capacity, 4));
    this.im = new Float64Array(Math.max(capacity, 4));
  }

  /** Appends an entry to the current row (columns must come ascending). */
  push(j: number, re: number, im: number): void {
    if (re === 0 && im === 0) return;
    if (this.count === this.column.length) {
      if (this.count >= MAX_NON_ZEROS) {
        throw new TooDenseError(`an operator holds more than ${MAX_NON_ZEROS} non-zeros`);
      }
      const grow = (a: Int32Array | Float64Array) => {
        const b = new (a.constructor as Int32ArrayConstructor | Float64ArrayConstructor)(2 * a.length);
        b.set(a);
        return b;
      };
      this.column = grow(this.column) as Int32Array;
      this.re = grow(this.re) as Float64Array;
      this.im = grow(this.im) as Float64Array;
    }
    this.column[this.count] = j;
    this.re[this.count] = re;
    this.im[this.count] = im;
    this.count++;
  }

  /** Closes the current row. */
  endRow(): void {
    this.rowStart[++this.row] = this.count;
  }

  build(cols: number): SparseComplexMatrix {
    while (this.row < this.rows) this.endRow();
    const n = this.count;
    return new SparseComplexMatrix(this.rows, cols, {
      rowStart: this.rowStart,
      column: this.column.slice(0, n),
      re: this.re.slice(0, n),
      im: this.im.slice(0, n),
    });
  }
}

/** The compressed rows of a sparse matrix. */
interface Rows {
  rowStart: Int32Array;
  column: Int32Array;
  re: Float64Array;
  im: Float64Array;
}

/** A sparse complex matrix in compressed rows. */
export class SparseComplexMatrix {
  readonly store: Rows;

  /**
   * @param rows number of rows
   * @param cols number of columns
   * @param store the compressed rows (taken, not copied; empty when omitted)
   */
  constructor(readonly rows: number, readonly cols: number, store?: Rows) {
    this.store = store ?? {
      rowStart: new Int32Array(rows + 1),
      column: new Int32Array(0),
      re: new Float64Array(0),
      im: new Float64Array(0),
    };
  }

  /** The n×n identity. */
  static identity(n: number): SparseComplexMatrix {
    const b = new RowsBuilder(n, n);
    for (let i = 0; i < n; i++) {
      b.push(i, 1, 0);
      b.endRow();
    }
    return b.build(n);
  }

  /** The non-zeros of a dense interleaved matrix. */
  static fromDense(rows: number, cols: number, dense: Float64Array): SparseComplexMatrix {
    const b = new RowsBuilder(rows, rows);
    for (let i = 0; i < rows; i++) {
      for (let j = 0; j < cols; j++) b.push(j, dense[2 * (i * cols + j)]!, dense[2 * (i * cols + j) + 1]!);
      b.endRow();
    }
    return b.build(cols);
  }

  /**
   * A matrix given row by row: entries(i, push) pushes row i's entries (any column order; repeats are summed).
   *
   * @param rows number of rows
   * @param cols number of columns
   * @param entries called once per row
   * @returns the matrix
   */
  static fromRows(
    rows: number,
    cols: number,
    entries: (i: number, push: (j: number, re: number, im: number) => void) => void,
  ): SparseComplexMatrix {
    const b = new RowsBuilder(rows, rows);
    const acc = new Map<number, Complex>();
    for (let i = 0; i < rows; i++) {
      acc.clear();
      entries(i, (j, re, im) => {
        const z = acc.get(j);
        if (z) {
          z.re += re;
          z.im += im;
        } else acc.set(j, { re, im });
      });
      for (const j of [...acc.keys()].sort((x, y) => x - y)) b.push(j, acc.get(j)!.re, acc.get(j)!.im);
      b.endRow();
    }
    return b.build(cols);
  }

  /** Non-zeros stored. */
  get nonZeros(): number {
    return this.store.column.length;
  }

  /** Calls visit(j, re, im) for the stored entries of row i, columns ascending. */
  forEachInRow(i: number, visit: (j: number, re: number, im: number) => void): void {
    const { rowStart, column, re, im } = this.store;
    for (let k = rowStart[i]!; k < rowStart[i + 1]!; k++) visit(column[k]!, re[k]!, im[k]!);
  }

  /** Entry (i, j) (a binary search in row i). */
  get(i: number, j: number): Complex {
    const { rowStart, column, re, im } = this.store;
    let lo = rowStart[i]!, hi = rowStart[i + 1]! - 1;
    while (lo <= hi) {
      const mid = (lo + hi) >> 1, c = column[mid]!;
      if (c === j) return { re: re[mid]!, im: im[mid]! };
      if (c < j) lo = mid + 1;
      else hi = mid - 1;
    }
    return { re: 0, im: 0 };
  }

  /** Sets entry (i, j): rebuilds the rows (for the occasional single entry, e.g. a ket-bra). */
  set(i: number, j: number, re: number, im = 0): void {
    const next = SparseComplexMatrix.fromRows(this.rows, this.cols, (row, push) => {
      this.forEachInRow(row, (c, a, b) => {
        if (row !== i || c !== j) push(c, a, b);
      });
      if (row === i) push(j, re, im);
    });
    (this as { store: Rows }).store = next.store;
  }

  /** this + other (same shape): rows merged by column. */
  add(other: SparseComplexMatrix): SparseComplexMatrix {
    const a = this.store, b = other.store;
    const out = new RowsBuilder(this.rows, this.nonZeros + other.nonZeros);
    for (let i = 0; i < this.rows; i++) {
      let p = a.rowStart[i]!, q = b.rowStart[i]!;
      const pe = a.rowStart[i + 1]!, qe = b.rowStart[i + 1]!;
      while (p < pe || q < qe) {
        const cp = p < pe ? a.column[p]! : Infinity, cq = q < qe ? b.column[q]! : Infinity;
        if (cp === cq) {
          out.push(cp, a.re[p]! + b.re[q]!, a.im[p]! + b.im[q]!);
          p++;
          q++;
        } else if (cp < cq) {
          out.push(cp, a.re[p]!, a.im[p]!);
          p++;
        } else {
          out.push(cq, b.re[q]!, b.im[q]!);
          q++;
        }
      }
      out.endRow();
    }
    return out.build(this.cols);
  }

  /** this − other (same shape). */
  sub(other: SparseComplexMatrix): SparseComplexMatrix {
    return this.add(other.scale({ re: -1, im: 0 }));
  }

  /** z·this. */
  scale(z: Complex): SparseComplexMatrix {
    if (z.re === 0 && z.im === 0) return new SparseComplexMatrix(this.rows, this.cols);
    const { rowStart, column, re, im } = this.store;
    const r2 = new Float64Array(re.length), i2 = new Float64Array(im.length);
    for (let k = 0; k < re.length; k++) {
      r2[k] = z.re * re[k]! - z.im * im[k]!;
      i2[k] = z.re * im[k]! + z.im * re[k]!;
    }
    return new SparseComplexMatrix(this.rows, this.cols, { rowStart, column, re: r2, im: i2 });
  }

  /** The matrix product this·other (a dense accumulator over one output row at a time). */
  mul(other: SparseComplexMatrix): SparseComplexMatrix {
    const a = this.store, b = other.store;
    const accRe = new Float64Array(other.cols), accIm = new Float64Array(other.cols);
    const mark = new Int32Array(other.cols).fill(-1);
    const touched: number[] = [];
    const out = new RowsBuilder(this.rows, this.nonZeros + other.nonZeros);
    for (let i = 0; i < this.rows; i++) {
      touched.length = 0;
      for (let p = a.rowStart[i]!; p < a.rowStart[i + 1]!; p++) {
        const k = a.column[p]!, xr = a.re[p]!, xi = a.im[p]!;
        for (let q = b.rowStart[k]!; q < b.rowStart[k + 1]!; q++) {
          const j = b.column[q]!;
          if (mark[j] !== i) {
            mark[j] = i;
            accRe[j] = 0;
            accIm[j] = 0;
            touched.push(j);
          }
          accRe[j]! += xr * b.re[q]! - xi * b.im[q]!;
          accIm[j]! += xr * b.im[q]! + xi * b.re[q]!;
        }
      }
      touched.sort((x, y) => x - y);
      for (const j of touched) out.push(j, accRe[j]!, accIm[j]!);
      out.endRow();
    }
    return out.build(other.cols);
  }

  /** The conjugate transpose (a counting sort by column). */
  dagger(): SparseComplexMatrix {
    const { rowStart, column, re, im } = this.store;
    const n = column.length, start = new Int32Array(this.cols + 1);
    for (let k = 0; k < n; k++) start[column[k]! + 1]!++;
    for (let j = 0; j < this.cols; j++) start[j + 1]! += start[j]!;
    const next = start.slice(0, this.cols);
    const c2 = new Int32Array(n), r2 = new Float64Array(n), i2 = new Float64Array(n);
    for (let i = 0; i < this.rows; i++) {
      for (let k = rowStart[i]!; k < rowStart[i + 1]!; k++) {
        const at = next[column[k]!]!++;
        c2[at] = i;
        r2[at] = re[k]!;
        i2[at] = -im[k]!;
      }
    }
    return new SparseComplexMatrix(this.cols, this.rows, { rowStart: start, column: c2, re: r2, im: i2 });
  }

  /** The Kronecker (tensor) product this ⊗ other. */
  kron(other: SparseComplexMatrix): SparseComplexMatrix {
    if (this.nonZeros * other.nonZeros > MAX_NON_ZEROS) {
      throw new TooDenseError(`a tensor product holds more than ${MAX_NON_ZEROS} non-zeros`);
    }
    const out = new RowsBuilder(this.rows * other.rows, this.nonZeros * other.nonZeros);
    for (let i = 0; i < this.rows; i++) {
      for (let k = 0; k < other.rows; k++) {
        this.forEachInRow(i, (j, ar, ai) => {
          other.forEachInRow(
            k,
            (l, br, bi) => out.push(j * other.cols + l, ar * br - ai * bi, ar * bi + ai * br),
          );
        });
        out.endRow();
      }
    }
    return out.build(this.cols * other.cols);
  }

  /** this·this·…·this (n ≥ 0 factors; square matrices only), by repeated squaring. */
  power(n: number): SparseComplexMatrix {
    return powerBySquaring<SparseComplexMatrix>(this, SparseComplexMatrix.identity(this.rows), n);
  }

  /** Largest |A_ij − conj(A_ji)| and where it occurs (square matrices). */
  hermiticityDefect(): { value: number; row: number; col: number } {
    let worst = { value: 0, row: 0, col: 0 };
    for (let i = 0; i < this.rows; i++) {
      this.forEachInRow(i, (j, re, im) => {
        const b = this.get(j, i);
        const value = Math.hypot(re - b.re, im + b.im);
        if (value > worst.value) worst = { value, row: Math.min(i, j), col: Math.max(i, j) };
      });
    }
    return worst;
  }

  /** Largest modulus of any entry. */
  maxAbs(): number {
    let m = 0;
    const { re, im } = this.store;
    for (let k = 0; k < re.length; k++) m = Math.max(m, Math.hypot(re[k]!, im[k]!));
    return m;
  }

  /** The largest row sum of moduli (bounds the 2-norm of a Hermitian matrix). */
  normInf(): number {
    let m = 0;
    for (let i = 0; i < this.rows; i++) {
      let s = 0;
      this.forEachInRow(i, (_j, re, im) => (s += Math.hypot(re, im)));
      m = Math.max(m, s);
    }
    return m;
  }

  /** Whether every entry is on the diagonal. */
  isDiagonal(): boolean {
    const { rowStart, column } = this.store;
    for (let i = 0; i < this.rows; i++) {
      for (let k = rowStart[i]!; k < rowStart[i + 1]!; k++) if (column[k] !== i) return false;
    }
    return true;
  }

  /** The engine's compressed sparse rows (values interleaved). */
  toCsr(): Csr {
    const { rowStart, column, re, im } = this.store;
    const values = new Float64Array(2 * re.length);
    for (let k = 0; k < re.length; k++) {
      values[2 * k] = re[k]!;
      values[2 * k + 1] = im[k]!;
    }
    return { rowStart: rowStart.slice(), column: column.slice(), values };
  }

  /** y = this·x for a complex vector (interleaved). */
  apply(x: Float64Array): Float64Array {
    const y = new Float64Array(2 * this.rows);
    for (let i = 0; i < this.rows; i++) {
      let sr = 0, si = 0;
      this.forEachInRow(i, (j, re, im) => {
        sr += re * x[2 * j]! - im * x[2 * j + 1]!;
        si += re * x[2 * j + 1]! + im * x[2 * j]!;
      });
      y[2 * i] = sr;
      y[2 * i + 1] = si;
    }
    return y;
  }
}

/** Calls visit(i, j, z) for every non-zero entry of a dense or sparse operator. */
export function forEachEntry(m: Operator, visit: (i: number, j: number, z: Complex) => void): void {
  if (m instanceof SparseComplexMatrix) {
    for (let i = 0; i < m.rows; i++) m.forEachInRow(i, (j, re, im) => visit(i, j, { re, im }));
    return;
  }
  const data = (m as ComplexMatrix).data;
  for (let k = 0; k < data.length; k += 2) {
    const re = data[k]!, im = data[k + 1]!;
    if (re !== 0 || im !== 0) visit(Math.floor(k / 2 / m.cols), (k / 2) % m.cols, { re, im });
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
