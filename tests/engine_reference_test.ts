// The engine against mathjs, a general-purpose reference library: matrix
// exponentials (expm), the Van Loan block exponential, eigenvalues; and the
// SIMD micro-kernel against the scalar reference kernel and plain JS.
import { all, type Complex as MathComplex, create, type Matrix } from "mathjs";
import fc from "fast-check";
import { assert } from "./assert.ts";
import { assertClose, eigenResidual, randomHermitian, seeded, testEngine } from "./helpers.ts";
import { eigenvalues, eigh, multiply, solve } from "../engine/mod.ts";
import { constantModel } from "./engine_helpers.ts";

const math = create(all!);
const one = { kind: "constant", re: 1, im: 0 } as const;

function toMath(m: Float64Array, d: number): Matrix {
  return math.matrix(
    Array.from(
      { length: d },
      (_, i) =>
        Array.from(
          { length: d },
          (_, j) => math.complex(m[2 * (i * d + j)]!, m[2 * (i * d + j) + 1]!),
        ),
    ),
  );
}

function entry(m: Matrix, i: number, j: number): MathComplex {
  return math.complex(m.get([i, j]) as MathComplex);
}

Deno.test("time-independent d=5: Σψn matches mathjs expm(−iHt)ψ0 and each ψn the Van Loan block exponential, to 1e-10", async () => {
  const engine = await testEngine();
  const random = seeded(7);
  const d = 5, order = 5, t = 1.7;
  const h0 = randomHermitian(d, random, 1.0); // non-diagonal
  const v = randomHermitian(d, random, 0.1);
  const psi0 = new Float64Array(2 * d);
  psi0[0] = 0.6;
  psi0[3] = 0.8; // 0.6|0⟩ + 0.8i|1⟩
  const result = solve(engine, constantModel(h0, v, psi0, t, 2, order));
  assert(result.scheme === "time-independent");
  // Exact: expm(−iHt)ψ0 with H = H0 + V.
  const H = math.add(toMath(h0, d), toMath(v, d)) as Matrix;
  const U = math.expm(math.multiply(math.complex(0, -t), H) as Matrix);
  const psiVec = math.matrix(
    Array.from(
      { length: d },
      (_, a) => [math.complex(psi0[2 * a]!, psi0[2 * a + 1]!)],
    ),
  );
  const exact = math.multiply(U, psiVec) as Matrix;
  // Van Loan: A = I⊗H0 + S⊗V (lower block bidiagonal); exp(−iAt)(ψ0, 0, …, 0) has ψn in block n.
  const n1 = order + 1, D = d * n1;
  const A = math.zeros(D, D) as Matrix;
  for (let b = 0; b < n1; b++) {
    for (let i = 0; i < d; i++) {
      for (let j = 0; j < d; j++) {
        A.set(
          [b * d + i, b * d + j],
          math.complex(h0[2 * (i * d + j)]!, h0[2 * (i * d + j) + 1]!),
        );
        if (b > 0) {
          A.set(
            [b * d + i, (b - 1) * d + j],
            math.complex(v[2 * (i * d + j)]!, v[2 * (i * d + j) + 1]!),
          );
        }
      }
    }
  }
  const block = math.expm(math.multiply(math.complex(0, -t), A) as Matrix);
  const sum = new Float64Array(2 * d);
  for (let n = 0; n <= order; n++) {
    for (let a = 0; a < d; a++) {
      // column 0..d−1 of the block exponential applied to ψ0: Σ_j E[n·d+a, j]·ψ0_j
      let re = 0, im = 0;
      for (let j = 0; j < d; j++) {
        const e = entry(block, n * d + a, j);
        re += e.re * psi0[2 * j]! - e.im * psi0[2 * j + 1]!;
        im += e.re * psi0[2 * j + 1]! + e.im * psi0[2 * j]!;
      }
      assertClose(
        result.terms[n]![2 * (d + a)]!,
        re,
        { abs: 1e-10 },
        `ψ${n}[${a}] re`,
      );
      assertClose(
        result.terms[n]![2 * (d + a) + 1]!,
        im,
        { abs: 1e-10 },
        `ψ${n}[${a}] im`,
      );
      sum[2 * a]! += result.terms[n]![2 * (d + a)]!;
      sum[2 * a + 1]! += result.terms[n]![2 * (d + a) + 1]!;
    }
  }
  for (let a = 0; a < d; a++) {
    const e = math.complex(exact.get([a, 0]) as MathComplex);
    // ‖V‖t ≈ 0.5 here, so the tail beyond order 5 is about 0.5⁶/6! ≈ 2e-5: compare the engine's exact state,
    // and the partial sum to the same tail bound.
    assertClose(
      result.exact[2 * (d + a)]!,
      e.re,
      { abs: 1e-10 },
      `exact[${a}] re`,
    );
    assertClose(
      result.exact[2 * (d + a) + 1]!,
      e.im,
      { abs: 1e-10 },
      `exact[${a}] im`,
    );
    assertClose(sum[2 * a]!, e.re, { abs: 1e-4 }, `Σψn[${a}] re`);
  }
});

Deno.test("time-independent d=5 with ‖V‖t small: Σψn to order 12 matches mathjs expm to 1e-10", async () => {
  const engine = await testEngine();
  const random = seeded(11);
  const d = 5, t = 2.0;
  const h0 = randomHermitian(d, random, 1.0);
  const v = randomHermitian(d, random, 0.05); // x = ‖V‖t ≲ 0.3: tail after order 12 < 0.3¹³/13! ≈ 3e-17
  const psi0 = new Float64Array(2 * d);
  psi0[4] = 1;
  const result = solve(engine, constantModel(h0, v, psi0, t, 3, 12));
  const H = math.add(toMath(h0, d), toMath(v, d)) as Matrix;
  for (const k of [1, 2]) {
    const U = math.expm(
      math.multiply(math.complex(0, -result.times[k]!), H) as Matrix,
    );
    for (let a = 0; a < d; a++) {
      let re = 0, im = 0;
      for (const term of result.terms) {
        re += term[2 * (k * d + a)]!;
        im += term[2 * (k * d + a) + 1]!;
      }
      const e = entry(U, a, 2); // ψ0 = |2⟩
      assertClose(re, e.re, { abs: 1e-10 }, `re at k=${k}, a=${a}`);
      assertClose(im, e.im, { abs: 1e-10 }, `im at k=${k}, a=${a}`);
    }
  }
});

Deno.test("eigh() agrees with mathjs eigs on real symmetric matrices and has small residuals on complex Hermitian ones", async () => {
  const engine = await testEngine();
  const random = seeded(3);
  for (const d of [1, 2, 3, 5, 12, 40, 97]) {
    // Real symmetric: eigenvalues against mathjs.
    const real = randomHermitian(d, random, 1);
    for (let k = 1; k < real.length; k += 2) real[k] = 0;
    const mine = eigh(engine, real, d).values;
    const rows = Array.from(
      { length: d },
      (_, i) => Array.from({ length: d }, (_, j) => real[2 * (i * d + j)]!),
    );
    const theirs = (math.eigs(rows).values as number[]).slice().sort((a, b) => a - b);
    theirs.forEach((x, k) => assertClose(mine[k]!, x, { abs: 1e-12 * d }, `d=${d} eigenvalue ${k}`));
    // Complex Hermitian: residual ‖A z − λ z‖ and orthonormality Z†Z = I.
    const a = randomHermitian(d, random, 1);
    const { values, vectors } = eigh(engine, a, d);
    for (let k = 0; k < d; k++) {
      if (k > 0) assert(values[k]! >= values[k - 1]!, "ascending");
      for (let i = 0; i < d; i++) {
        let re = 0, im = 0;
        for (let j = 0; j < d; j++) {
          const ar = a[2 * (i * d + j)]!, ai = a[2 * (i * d + j) + 1]!;
          const zr = vectors[2 * (j * d + k)]!,
            zi = vectors[2 * (j * d + k) + 1]!;
          re += ar * zr - ai * zi;
          im += ar * zi + ai * zr;
        }
        assertClose(re, values[k]! * vectors[2 * (i * d + k)]!, {
          abs: 1e-12 * d,
        }, `residual re d=${d}`);
        assertClose(im, values[k]! * vectors[2 * (i * d + k) + 1]!, {
          abs: 1e-12 * d,
        }, `residual im d=${d}`);
      }
      for (let l = 0; l < d; l++) {
        let re = 0, im = 0;
        for (let j = 0; j < d; j++) {
          const xr = vectors[2 * (j * d + k)]!,
            xi = vectors[2 * (j * d + k) + 1]!;
          const yr = vectors[2 * (j * d + l)]!,
            yi = vectors[2 * (j * d + l) + 1]!;
          re += xr * yr + xi * yi;
          im += xr * yi - xi * yr;
        }
        assertClose(re, k === l ? 1 : 0, { abs: 1e-12 * d }, `Z†Z re d=${d}`);
        assertClose(im, 0, { abs: 1e-12 * d }, `Z†Z im d=${d}`);
      }
    }
  }
});

/** max |(Z†Z − I)_kl| over all pairs of columns. */
function orthonormalityError(z: Float64Array, d: number): number {
  let worst = 0;
  for (let k = 0; k < d; k++) {
    for (let l = k; l < d; l++) {
      let re = 0, im = 0;
      for (let j = 0; j < d; j++) {
        const xr = z[2 * (j * d + k)]!,
          xi = z[2 * (j * d + k) + 1]!,
          yr = z[2 * (j * d + l)]!,
          yi = z[2 * (j * d + l) + 1]!;
        re += xr * yr + xi * yi;
        im += xr * yi - xi * yr;
      }
      worst = Math.max(worst, Math.hypot(re - (k === l ? 1 : 0), im));
    }
  }
  return worst;
}

// From d = 24 the tridiagonal's eigenvectors come from inverse iteration, checked by the engine itself (residuals,
// orthogonality) before it trusts them. Spectra that are hard for it: Wilkinson's W+ matrix (its largest
// eigenvalues come in pairs that agree to many digits: Wilkinson, The Algebraic Eigenvalue Problem (1965), §5.45),
// two identical decoupled blocks (every level exactly twofold), levels split only by 1e-10, a rank-one matrix (a
// (d−1)-fold zero) and the position operator of a truncated oscillator. Eigenvalues against mathjs eigs (its
// real symmetric solver) where the matrix is real, and the residual and Z†Z = I bars of the QL path.
Deno.test("eigh() from d = 24 takes inverse iteration and keeps close and degenerate levels orthonormal", async () => {
  const engine = await testEngine();
  const random = seeded(11);
  const cases: { name: string; d: number; entry: (i: number, j: number) => [number, number] }[] = [
    {
      name: "Wilkinson W+ (d = 41)",
      d: 41,
      entry: (i, j) => [i === j ? Math.abs(20 - i) : Math.abs(i - j) === 1 ? 1 : 0, 0],
    },
    {
      name: "oscillator position (d = 60)",
      d: 60,
      entry: (i, j) => [Math.abs(i - j) === 1 ? Math.sqrt(Math.max(i, j) / 2) : 0, 0],
    },
    { name: "all ones (d = 50)", d: 50, entry: () => [1, 0] },
  ];
  // twin blocks: kron(I₂, B) with B a random Hermitian 32×32 (complex)
  const b = randomHermitian(32, random, 1);
  cases.push({
    name: "two identical blocks (d = 64)",
    d: 64,
    entry: (i, j) =>
      (i < 32) === (j < 32)
        ? [b[2 * ((i % 32) * 32 + (j % 32))]!, b[2 * ((i % 32) * 32 + (j % 32)) + 1]!]
        : [0, 0],
  });
  // quartets of equal levels split by couplings of 1e-10 (complex)
  const split = randomHermitian(48, random, 1e-10);
  cases.push({
    name: "levels split by 1e-10 (d = 48)",
    d: 48,
    entry: (
      i,
      j,
    ) => [(i === j ? Math.floor(i / 4) : 0) + split[2 * (i * 48 + j)]!, split[2 * (i * 48 + j) + 1]!],
  });
  for (const { name, d, entry } of cases) {
    const a = new Float64Array(2 * d * d);
    for (let i = 0; i < d; i++) {
      for (let j = 0; j < d; j++) [a[2 * (i * d + j)], a[2 * (i * d + j) + 1]] = entry(i, j);
    }
    const { values, vectors } = eigh(engine, a.slice(), d);
    assert(
      engine.exports.lastEighByInverseIteration() === 1,
      `${name}: inverse iteration vouched for its vectors`,
    );
    let norm = 0;
    for (let k = 0; k < 2 * d * d; k++) norm = Math.max(norm, Math.abs(a[k]!));
    assertClose(eigenResidual(a, values, vectors, d), 0, { abs: 1e-13 * d * norm }, `${name}: ‖Az − λz‖`);
    assertClose(orthonormalityError(vectors, d), 0, { abs: 1e-13 * d }, `${name}: Z†Z = I`);
    if (a.every((x, k) => k % 2 === 0 || x === 0)) {
      const rows = Array.from(
        { length: d },
        (_, i) => Array.from({ length: d }, (_, j) => a[2 * (i * d + j)]!),
      );
      const theirs = (math.eigs(rows).values as number[]).slice().sort((x, y) => x - y);
      theirs.forEach((x, k) =>
        assertClose(values[k]!, x, { abs: 1e-12 * norm * d }, `${name}: eigenvalue ${k}`)
      );
    }
  }
});

// With no step after the growth test, inverse iteration's vectors are a little rough, and the engine's own checks
// reject them on large random matrices (seen at d = 128–300): the QL rotations then take over, from the
// tridiagonal as it was. The result must meet the same bars as ever.
Deno.test("eigh() falls back to the QL rotations when inverse iteration's checks reject its vectors", async () => {
  const engine = await testEngine();
  const random = seeded(5);
  const d = 160;
  const a = randomHermitian(d, random, 1);
  engine.exports.setInverseIterationExtraSteps(0);
  try {
    const { values, vectors } = eigh(engine, a.slice(), d);
    assert(engine.exports.lastEighByInverseIteration() === 0, "the checks rejected the rough vectors");
    assertClose(eigenResidual(a, values, vectors, d, 7), 0, { abs: 1e-12 * d }, "‖Az − λz‖");
    assertClose(orthonormalityError(vectors, d), 0, { abs: 1e-12 * d }, "Z†Z = I");
    const trace = Array.from({ length: d }, (_, i) => a[2 * (i * d + i)]!).reduce((s, x) => s + x, 0);
    assertClose(values.reduce((s, x) => s + x, 0), trace, { abs: 1e-11 * d }, "Σλ = tr A");
  } finally {
    engine.exports.setInverseIterationExtraSteps(1);
  }
});

// A = U·diag(E)·U† with U a product of random Householder reflectors (unitary to rounding) has the spectrum E
// whatever U is: a unitary similarity keeps eigenvalues (common practice). The spectra are drawn with clusters:
// levels repeated exactly, or split by 1e-13…1e-6, on a spread that may be wide or narrow. Whichever path eigh
// takes (inverse iteration, or the QL rotations when its checks refuse), the values must be E and the vectors an
// orthonormal eigenbasis.
Deno.test("eigh() on random clustered spectra (fast-check): the known eigenvalues, residuals, orthonormality", async () => {
  const engine = await testEngine();
  const d = 32;
  const spectrum = fc.array(
    fc.record({
      level: fc.double({ min: -5, max: 5, noNaN: true }),
      copies: fc.integer({ min: 1, max: 6 }),
      split: fc.constantFrom(0, 1e-13, 1e-10, 1e-6),
    }),
    { minLength: 1, maxLength: 12 },
  );
  fc.assert(
    fc.property(spectrum, fc.integer({ min: 1, max: 1 << 30 }), (groups, seed) => {
      const energies: number[] = [];
      for (const { level, copies, split } of groups) {
        for (let c = 0; c < copies && energies.length < d; c++) energies.push(level + c * split);
      }
      while (energies.length < d) energies.push(energies.length % 3); // fill with a threefold-ish remainder
      const random = seeded(seed);
      // U = H_1 ⋯ H_6, H = I − 2vv†/‖v‖²: apply to diag(E) from both sides, A = U E U†
      const a = new Float64Array(2 * d * d);
      energies.forEach((e, k) => (a[2 * (k * d + k)] = e));
      for (let r = 0; r < 6; r++) {
        const v = Array.from({ length: 2 * d }, () => random() - 0.5);
        const norm2 = v.reduce((s, x) => s + x * x, 0);
        // A ← H A H: first rows (H A), then columns ((H A) H)
        for (const side of ["left", "right"] as const) {
          for (let o = 0; o < d; o++) {
            // w = v†·(column o of A) on the left, (row o of A)·v on the right
            let wr = 0, wi = 0;
            for (let i = 0; i < d; i++) {
              const [x, y] = side === "left" ? [i, o] : [o, i];
              const ar = a[2 * (x * d + y)]!,
                ai = a[2 * (x * d + y) + 1]!,
                vr = v[2 * i]!,
                vi = v[2 * i + 1]!;
              if (side === "left") {
                wr += vr * ar + vi * ai;
                wi += vr * ai - vi * ar;
              } else {
                wr += ar * vr - ai * vi;
                wi += ar * vi + ai * vr;
              }
            }
            for (let i = 0; i < d; i++) {
              const [x, y] = side === "left" ? [i, o] : [o, i];
              const vr = v[2 * i]!, vi = side === "left" ? v[2 * i + 1]! : -v[2 * i + 1]!;
              const k = 2 * (x * d + y);
              a[k] = a[k]! - (2 / norm2) * (vr * wr - vi * wi);
              a[k + 1] = a[k + 1]! - (2 / norm2) * (vr * wi + vi * wr);
            }
          }
        }
      }
      const { values, vectors } = eigh(engine, a.slice(), d);
      const sorted = energies.slice().sort((x, y) => x - y);
      sorted.forEach((e, k) => assertClose(values[k]!, e, { abs: 1e-12 }, `eigenvalue ${k}`));
      assertClose(eigenResidual(a, values, vectors, d), 0, { abs: 1e-12 }, "‖Az − λz‖");
      assertClose(orthonormalityError(vectors, d), 0, { abs: 1e-12 }, "Z†Z = I");
    }),
    { numRuns: 60, seed: 20261202 },
  );
});

Deno.test("eigh() handles degenerate and diagonal matrices", async () => {
  const engine = await testEngine();
  const d = 4;
  const diag = new Float64Array(2 * d * d);
  [3, -1, 3, 0].forEach((e, k) => (diag[2 * (k * d + k)] = e));
  const { values } = eigh(engine, diag, d);
  [-1, 0, 3, 3].forEach((e, k) => assertClose(values[k]!, e, { abs: 1e-15 }));
});

// A = U·diag(E)·U† with a threefold degenerate E and U a mathjs expm of a random anti-Hermitian matrix: eigh must
// return E (mathjs's own arithmetic builds A) and eigenvectors with A z = E z and Z†Z = I to round-off.
Deno.test("eigh() on a complex Hermitian matrix with a degenerate level: values, residuals, orthonormality", async () => {
  const engine = await testEngine();
  const random = seeded(21);
  const d = 12;
  const energies = [-2, 0.5, 0.5, 0.5, 1, 1.5, 2, 2.5, 3, 3.5, 4, 4.5];
  const k = math.matrix(Array.from({ length: d }, () => Array.from({ length: d }, () => math.complex(0, 0))));
  for (let i = 0; i < d; i++) {
    for (let j = i; j < d; j++) {
      // small entries keep mathjs's Padé expm unitary to ~1e-15, so A's spectrum is E to that
      const re = 0.2 * (random() - 0.5), im = 0.2 * (random() - 0.5);
      k.set([i, j], math.complex(i === j ? 0 : re, im));
      k.set([j, i], math.complex(i === j ? 0 : -re, im));
    }
  }
  const u = math.expm(k);
  const a = math.multiply(math.multiply(u, math.diag(energies)), math.ctranspose(u)) as Matrix;
  const flat = new Float64Array(2 * d * d);
  for (let i = 0; i < d; i++) {
    for (let j = 0; j < d; j++) {
      const c = math.complex(a.get([i, j]) as MathComplex);
      flat[2 * (i * d + j)] = c.re;
      flat[2 * (i * d + j) + 1] = c.im;
    }
  }
  const { values, vectors } = eigh(engine, flat.slice(), d);
  energies.forEach((e, n) => assertClose(values[n]!, e, { abs: 1e-13 }, `eigenvalue ${n}`));
  const z = (i: number, n: number) => [vectors[2 * (i * d + n)]!, vectors[2 * (i * d + n) + 1]!] as const;
  for (let n = 0; n < d; n++) {
    for (let i = 0; i < d; i++) {
      let sr = 0, si = 0;
      for (let j = 0; j < d; j++) {
        const [ar, ai] = [flat[2 * (i * d + j)]!, flat[2 * (i * d + j) + 1]!], [zr, zi] = z(j, n);
        sr += ar * zr - ai * zi;
        si += ar * zi + ai * zr;
      }
      const [zr, zi] = z(i, n);
      assertClose(sr, values[n]! * zr, { abs: 1e-13 }, `(Az − Ez)_${i} for level ${n}, real part`);
      assertClose(si, values[n]! * zi, { abs: 1e-13 }, `(Az − Ez)_${i} for level ${n}, imaginary part`);
    }
    for (let m = 0; m < d; m++) {
      let sr = 0, si = 0;
      for (let i = 0; i < d; i++) {
        const [ar, ai] = z(i, m), [br, bi] = z(i, n);
        sr += ar * br + ai * bi;
        si += ar * bi - ai * br;
      }
      assertClose(sr, m === n ? 1 : 0, { abs: 1e-13 }, `(Z†Z)_${m}${n}`);
      assertClose(si, 0, { abs: 1e-13 }, `Im (Z†Z)_${m}${n}`);
    }
  }
});

Deno.test("the SIMD and packed kernels agree with the reference kernel to 1e-14 relative, and all with plain JS", async () => {
  const { exports: e } = await testEngine();
  const random = seeded(5);
  for (const d of [1, 2, 3, 8, 17, 64]) {
    for (const r of [1, 2, 3, 4, 5, 7, 8, 9, 13]) {
      e.arenaReset();
      const a = e.arenaAlloc(16 * d * d),
        x = e.arenaAlloc(16 * d * r),
        y1 = e.arenaAlloc(16 * d * r),
        y2 = e.arenaAlloc(16 * d * r),
        y3 = e.arenaAlloc(16 * d * r),
        scratch = e.arenaAlloc(e.packedScratchBytes(d, r));
      const view = (p: number, n: number) => new Float64Array(e.memory.buffer, p, n);
      const A = view(a, 2 * d * d), X = view(x, 2 * d * r);
      A.forEach((_, k) => (A[k] = 2 * random() - 1));
      X.forEach((_, k) => (X[k] = 2 * random() - 1));
      const y0 = Float64Array.from(
        { length: 2 * d * r },
        () => 2 * random() - 1,
      );
      view(y1, 2 * d * r).set(y0);
      view(y2, 2 * d * r).set(y0);
      view(y3, 2 * d * r).set(y0);
      const [ar, ai] = [0.3, -1.7];
      e.zgemvRef(a, d, x, y1, r, ar, ai);
      e.zgemvSimd(a, d, x, y2, r, ar, ai);
      e.zgemvPacked(a, d, x, y3, r, ar, ai, scratch);
      const Y1 = view(y1, 2 * d * r), Y2 = view(y2, 2 * d * r), Y3 = view(y3, 2 * d * r);
      for (let v = 0; v < r; v++) {
        for (let i = 0; i < d; i++) {
          // plain JS: y += α Σ_j A_ij x_j
          let sr = 0, si = 0;
          for (let j = 0; j < d; j++) {
            const pr = A[2 * (i * d + j)]!, pi = A[2 * (i * d + j) + 1]!;
            const xr = X[2 * (v * d + j)]!, xi = X[2 * (v * d + j) + 1]!;
            sr += pr * xr - pi * xi;
            si += pr * xi + pi * xr;
          }
          const k = 2 * (v * d + i);
          const js = [
            y0[k]! + ar * sr - ai * si,
            y0[k + 1]! + ar * si + ai * sr,
          ];
          const scale = Math.max(1, Math.hypot(js[0]!, js[1]!));
          for (const c of [0, 1]) {
            assertClose(Y2[k + c]!, Y1[k + c]!, {
              abs: 1e-14 * scale * Math.sqrt(d),
            }, `simd vs ref d=${d} r=${r}`);
            assertClose(Y3[k + c]!, Y1[k + c]!, {
              abs: 1e-14 * scale * Math.sqrt(d),
            }, `packed vs ref d=${d} r=${r}`);
            assertClose(Y1[k + c]!, js[c]!, {
              abs: 1e-14 * scale * Math.sqrt(d),
            }, `ref vs JS d=${d} r=${r}`);
          }
        }
      }
    }
  }
});

Deno.test("the selected kernel does not change results: a run with the reference kernel matches the SIMD run", async () => {
  const engine = await testEngine();
  const random = seeded(9);
  const d = 6;
  const model = {
    dim: d,
    unperturbed: [{ matrix: randomHermitian(d, random, 1), coefficient: one }],
    perturbation: [{
      matrix: randomHermitian(d, random, 0.2),
      coefficient: {
        kind: "sampled" as const,
        sample: (ts: Float64Array, out: Float64Array) =>
          ts.forEach((
            t,
            k,
          ) => ((out[2 * k] = Math.cos(t)), (out[2 * k + 1] = 0))),
      },
    }],
    strength: 1,
    initial: Float64Array.from({ length: 2 * d }, (_, k) => (k === 0 ? 1 : 0)),
    tStart: 0,
    tEnd: 5,
    steps: 200,
    samples: 3,
    order: 4,
  };
  const simd = solve(engine, model);
  engine.exports.useSimd(0);
  try {
    const ref = solve(engine, model);
    simd.exact.forEach((x, k) => assertClose(x, ref.exact[k]!, { abs: 1e-13 }));
    simd.terms[4]!.forEach((x, k) => assertClose(x, ref.terms[4]![k]!, { abs: 1e-13 }));
  } finally {
    engine.exports.useSimd(1);
  }
});

Deno.test("multiply() of two complex 7×7 matrices equals mathjs multiply to 1e-14", async () => {
  const engine = await testEngine();
  const random = seeded(11);
  const d = 7;
  const a = Float64Array.from({ length: 2 * d * d }, () => random() - 0.5);
  const b = Float64Array.from({ length: 2 * d * d }, () => random() - 0.5);
  const mine = multiply(engine, a, b, d);
  const ref = math.multiply(toMath(a, d), toMath(b, d)) as Matrix;
  for (let i = 0; i < d; i++) {
    for (let j = 0; j < d; j++) {
      const z = entry(ref, i, j);
      assertClose(mine[2 * (i * d + j)]!, z.re, { abs: 1e-14 }, `re (${i},${j})`);
      assertClose(mine[2 * (i * d + j) + 1]!, z.im, { abs: 1e-14 }, `im (${i},${j})`);
    }
  }
});

Deno.test("eigh of a rank-8 Hermitian matrix (d = 128, a 120-fold eigenvalue 0) converges: rank–nullity, residuals, Σλ = tr A", async () => {
  // facts of linear algebra: A = Σ_k u_k u_k† has rank 8, so 120 eigenvalues are 0 (to ε‖A‖) and 8 are positive
  const engine = await testEngine();
  const d = 128, rank = 8, random = seeded(21);
  const a = new Float64Array(2 * d * d);
  for (let k = 0; k < rank; k++) {
    const u = Array.from({ length: d }, () => [random() - 0.5, random() - 0.5] as const);
    for (let i = 0; i < d; i++) {
      for (let j = 0; j < d; j++) {
        const [ar, ai] = u[i]!, [br, bi] = u[j]!;
        a[2 * (i * d + j)]! += ar * br + ai * bi; // u_i·conj(u_j)
        a[2 * (i * d + j) + 1]! += ai * br - ar * bi;
      }
    }
  }
  const { values, vectors } = eigh(engine, a, d);
  let trace = 0, norm = 0;
  for (let i = 0; i < d; i++) trace += a[2 * (i * d + i)]!;
  values.forEach((x) => (norm = Math.max(norm, Math.abs(x))));
  const zeros = values.filter((x) => Math.abs(x) < 1e-12 * norm).length;
  assertClose(zeros, d - rank, { abs: 0 }, "eigenvalues at 0");
  assertClose(values.reduce((s, x) => s + x, 0), trace, { abs: 1e-11 * norm }, "Σλ = tr A");
  assertClose(eigenResidual(a, values, vectors, d, 9), 0, { abs: 1e-12 * norm }, "‖Az − λz‖");
});

Deno.test("eigenvalues() (no eigenvectors) of complex Hermitian matrices agree with mathjs eigs on their real 2d×2d form", async () => {
  // A fact of linear algebra: A = X + iY Hermitian ⇔ [[X, −Y], [Y, X]] real symmetric, with every eigenvalue
  // of A twice.
  const engine = await testEngine();
  const random = seeded(31);
  for (const d of [1, 2, 5, 12, 30]) {
    const a = randomHermitian(d, random, 1);
    const mine = eigenvalues(engine, a, d);
    const real = Array.from(
      { length: 2 * d },
      (_, i) =>
        Array.from({ length: 2 * d }, (_, j) => {
          const [r, c] = [i % d, j % d], x = a[2 * (r * d + c)]!, y = a[2 * (r * d + c) + 1]!;
          return i < d === j < d ? x : i < d ? -y : y;
        }),
    );
    const theirs = (math.eigs(real).values as number[]).slice().sort((p, q) => p - q);
    mine.forEach((x, k) => {
      assertClose(x, theirs[2 * k]!, { abs: 1e-11 * d }, `d=${d} eigenvalue ${k}`);
      assertClose(x, theirs[2 * k + 1]!, { abs: 1e-11 * d }, `d=${d} eigenvalue ${k} (its twin)`);
    });
  }
});

Deno.test("the engine's phases agree with Math.cos and Math.sin to 3e-16 at any size of argument, NaN stays NaN", async () => {
  // the reference: the host's own Math.cos and Math.sin (correctly rounded or within an ulp in V8)
  const { exports: e } = await testEngine();
  const random = seeded(11);
  for (const scale of [1e-8, 1, 10, 1e3, 1e5, 8e5, 1e6, 1e9, 1e15]) {
    const n = 2001; // odd: the last argument takes the one-at-a-time path
    e.arenaReset();
    const x = e.arenaAlloc(8 * n), out = e.arenaAlloc(16 * n);
    const theta = new Float64Array(e.memory.buffer, x, n);
    theta.forEach((_, k) => (theta[k] = (2 * random() - 1) * scale));
    // exact multiples of π/2 and quadrant edges, where the reduction matters most
    if (scale === 10) {
      theta.set([0, Math.PI / 2, Math.PI, 1.5 * Math.PI, 2 * Math.PI, Math.PI / 4, -Math.PI / 4]);
    }
    e.phasesOf(out, x, n);
    const phase = new Float64Array(e.memory.buffer, out, 2 * n);
    for (let k = 0; k < n; k++) {
      assertClose(phase[2 * k]!, Math.cos(theta[k]!), { abs: 3e-16 }, `cos(${theta[k]})`);
      assertClose(phase[2 * k + 1]!, Math.sin(theta[k]!), { abs: 3e-16 }, `sin(${theta[k]})`);
    }
  }
  e.arenaReset();
  const x = e.arenaAlloc(8 * 2), out = e.arenaAlloc(16 * 2);
  new Float64Array(e.memory.buffer, x, 2).set([NaN, Infinity]);
  e.phasesOf(out, x, 2);
  assert(
    new Float64Array(e.memory.buffer, out, 4).every((v) => Number.isNaN(v)),
    "NaN and ∞ give NaN phases",
  );
});
