/**
 * Small dense complex matrices for assembling operators on the TypeScript
 * side (the engine has its own kernels). Storage is row-major with real and
 * imaginary parts interleaved, the layout the engine reads.
 *
 * @module
 */

/** A complex number. */
export interface Complex {
  re: number;
  im: number;
}

/**
 * What the operator notation needs of a matrix, dense or sparse: a case's operators are all one or the other
 * (the space's storage), never mixed in one expression.
 */
export interface Operator {
  readonly rows: number;
  readonly cols: number;
  get(i: number, j: number): Complex;
  set(i: number, j: number, re: number, im?: number): void;
  add(other: Operator): Operator;
  sub(other: Operator): Operator;
  scale(z: Complex): Operator;
  mul(other: Operator): Operator;
  dagger(): Operator;
  kron(other: Operator): Operator;
  power(n: number): Operator;
  hermiticityDefect(): { value: number; row: number; col: number };
  maxAbs(): number;
}

/**
 * m·m·…·m (n ≥ 0 factors of a square matrix) by repeated squaring, starting from `identity` (of m's kind):
 * about 2·log₂ n products.
 */
export function powerBySquaring<M extends { mul(other: M): M }>(m: M, identity: M, n: number): M {
  let out = identity, square = m;
  for (let k = n; k > 0; k = Math.floor(k / 2)) {
    if (k % 2 === 1) out = out.mul(square);
    if (k > 1) square = square.mul(square);
  }
  return out;
}

/** A dense complex matrix, row-major, interleaved (re, im). */
export class ComplexMatrix {
  readonly data: Float64Array;

  /**
   * @param rows number of rows
   * @param cols number of columns
   * @param data optional storage of length 2·rows·cols (taken, not copied)
   */
  constructor(
    readonly rows: number,
    readonly cols: number,
    data?: Float64Array,
  ) {
    this.data = data ?? new Float64Array(2 * rows * cols);
  }

  /** The n×n identity. */
  static identity(n: number): ComplexMatrix {
    const m = new ComplexMatrix(n, n);
    for (let i = 0; i < n; i++) m.data[2 * (i * n + i)] = 1;
    return m;
  }

  /** Entry (i, j). */
  get(i: number, j: number): Complex {
    const k = 2 * (i * this.cols + j);
    return { re: this.data[k]!, im: this.data[k + 1]! };
  }

  /** Sets entry (i, j). */
  set(i: number, j: number, re: number, im = 0): void {
    const k = 2 * (i * this.cols + j);
    this.data[k] = re;
    this.data[k + 1] = im;
  }

  /** A copy. */
  clone(): ComplexMatrix {
    return new ComplexMatrix(this.rows, this.cols, this.data.slice());
  }

  /** this + other (same shape). */
  add(other: ComplexMatrix): ComplexMatrix {
    const out = this.clone();
    for (let k = 0; k < out.data.length; k++) out.data[k]! += other.data[k]!;
    return out;
  }

  /** this − other (same shape). */
  sub(other: ComplexMatrix): ComplexMatrix {
    return this.add(other.scale({ re: -1, im: 0 }));
  }

  /** z·this. */
  scale(z: Complex): ComplexMatrix {
    const out = new ComplexMatrix(this.rows, this.cols);
    const a = this.data, o = out.data;
    for (let k = 0; k < a.length; k += 2) {
      o[k] = z.re * a[k]! - z.im * a[k + 1]!;
      o[k + 1] = z.re * a[k + 1]! + z.im * a[k]!;
    }
    return out;
  }

  /** The matrix product this·other. */
  mul(other: ComplexMatrix): ComplexMatrix {
    const n = this.rows, m = this.cols, p = other.cols;
    const out = new ComplexMatrix(n, p);
    const a = this.data, b = other.data, o = out.data;
    for (let i = 0; i < n; i++) {
      for (let k = 0; k < m; k++) {
        const ar = a[2 * (i * m + k)]!, ai = a[2 * (i * m + k) + 1]!;
        if (ar === 0 && ai === 0) continue;
        for (let j = 0; j < p; j++) {
          const br = b[2 * (k * p + j)]!, bi = b[2 * (k * p + j) + 1]!;
          o[2 * (i * p + j)]! += ar * br - ai * bi;
          o[2 * (i * p + j) + 1]! += ar * bi + ai * br;
        }
      }
    }
    return out;
  }

  /** The conjugate transpose. */
  dagger(): ComplexMatrix {
    const out = new ComplexMatrix(this.cols, this.rows);
    for (let i = 0; i < this.rows; i++) {
      for (let j = 0; j < this.cols; j++) {
        const z = this.get(i, j);
        out.set(j, i, z.re, -z.im);
      }
    }
    return out;
  }

  /** The Kronecker (tensor) product this ⊗ other. */
  kron(other: ComplexMatrix): ComplexMatrix {
    const out = new ComplexMatrix(
      this.rows * other.rows,
      this.cols * other.cols,
    );
    for (let i = 0; i < this.rows; i++) {
      for (let j = 0; j < this.cols; j++) {
        const a = this.get(i, j);
        if (a.re === 0 && a.im === 0) continue;
        for (let k = 0; k < other.rows; k++) {
          for (let l = 0; l < other.cols; l++) {
            const b = other.get(k, l);
            out.set(
              i * other.rows + k,
              j * other.cols + l,
              a.re * b.re - a.im * b.im,
              a.re * b.im + a.im * b.re,
            );
          }
        }
      }
    }
    return out;
  }

  /** this·this·…·this (n ≥ 0 factors; square matrices only), by repeated squaring. */
  power(n: number): ComplexMatrix {
    return powerBySquaring<ComplexMatrix>(this, ComplexMatrix.identity(this.rows), n);
  }

  /** Largest |A_ij − conj(A_ji)| and where it occurs (square matrices). */
  hermiticityDefect(): { value: number; row: number; col: number } {
    let worst = { value: 0, row: 0, col: 0 };
    for (let i = 0; i < this.rows; i++) {
      for (let j = i; j < this.cols; j++) {
        const a = this.get(i, j), b = this.get(j, i);
        const value = Math.hypot(a.re - b.re, a.im + b.im);
        if (value > worst.value) worst = { value, row: i, col: j };
      }
    }
    return worst;
  }

  /** Largest modulus of any entry. */
  maxAbs(): number {
    let m = 0;
    for (let k = 0; k < this.data.length; k += 2) {
      m = Math.max(m, Math.hypot(this.data[k]!, this.data[k + 1]!));
    }
    return m;
  }
}
