import { arg, argF, blockSize, runShared, setArg, setArgF, sharing } from "./share";

// Complex matrix–multi-vector micro-kernels.
// Contract: Y[v] := Y[v] + α·A·X[v] for v < r, where A is d×d complex
// (row-major, interleaved re/im) and X[v], Y[v] are complex d-vectors laid
// out one after another (vector v at X + v·16d). No checks, no edge cases
// beyond the block: the drivers own those. The SIMD kernel reads each row of
// A once for up to four vectors; the reference kernel is the plain loop.

/**
 * a·b + c, two lanes: a fused multiply-add in the relaxed-SIMD builds (one instruction where the processor has
 * one; the host decides, the same way for every call on one machine), else a multiply and an add (plain SIMD: the
 * portable build, which runs wherever WebAssembly SIMD does).
 */
@inline export function madd(a: v128, b: v128, c: v128): v128 {
  if (ASC_FEATURE_RELAXED_SIMD) return f64x2.relaxed_madd(a, b, c);
  return f64x2.add(f64x2.mul(a, b), c);
}

/** Whether this build fuses its multiply-adds (relaxed SIMD; 0 in the portable build). */
export function fusedMultiplyAdd(): bool {
  return ASC_FEATURE_RELAXED_SIMD;
}

/** c − a·b, two lanes (fused in the relaxed-SIMD builds, as {@link madd}). */
@inline export function nmadd(a: v128, b: v128, c: v128): v128 {
  if (ASC_FEATURE_RELAXED_SIMD) return f64x2.relaxed_nmadd(a, b, c);
  return f64x2.sub(c, f64x2.mul(a, b));
}

/** Reference kernel: one vector at a time, scalar arithmetic. */
export function zgemvRef(a: usize, d: i32, x: usize, y: usize, r: i32, ar: f64, ai: f64): void {
  const stride = <usize>d << 4;
  for (let v = 0; v < r; v++) {
    const xv = x + <usize>v * stride, yv = y + <usize>v * stride;
    for (let i = 0; i < d; i++) {
      const row = a + <usize>i * stride;
      let sr = 0.0, si = 0.0;
      for (let j = 0; j < d; j++) {
        const p = row + (<usize>j << 4), q = xv + (<usize>j << 4);
        const pr = load<f64>(p), pi = load<f64>(p, 8);
        const xr = load<f64>(q), xi = load<f64>(q, 8);
        sr += pr * xr - pi * xi;
        si += pr * xi + pi * xr;
      }
      const o = yv + (<usize>i << 4);
      store<f64>(o, load<f64>(o) + ar * sr - ai * si);
      store<f64>(o, load<f64>(o, 8) + ar * si + ai * sr, 8);
    }
  }
}

// s = (Σ ar·xr − ai·xi, Σ ai·xr + ar·xi) from accA = Σ a·xr, accB = Σ swap(a)·xi.
@inline function finish(accA: v128, accB: v128, y: usize, ar: f64, ai: f64): void {
  const s = f64x2.add(accA, f64x2.mul(accB, f64x2(-1.0, 1.0)));
  const sr = f64x2.extract_lane(s, 0), si = f64x2.extract_lane(s, 1);
  store<f64>(y, load<f64>(y) + ar * sr - ai * si);
  store<f64>(y, load<f64>(y, 8) + ar * si + ai * sr, 8);
}

@inline function rows4(a: usize, d: i32, x: usize, y: usize, ar: f64, ai: f64): void {
  const stride = <usize>d << 4;
  const x1 = x + stride, x2 = x1 + stride, x3 = x2 + stride;
  for (let i = 0; i < d; i++) {
    const row = a + <usize>i * stride;
    let a0 = f64x2.splat(0), b0 = f64x2.splat(0), a1 = f64x2.splat(0), b1 = f64x2.splat(0);
    let a2 = f64x2.splat(0), b2 = f64x2.splat(0), a3 = f64x2.splat(0), b3 = f64x2.splat(0);
    for (let j = 0; j < d; j++) {
      const o = <usize>j << 4;
      const m = v128.load(row + o);
      const w = v128.shuffle<f64>(m, m, 1, 0);
      a0 = madd(m, v128.load64_splat(x + o), a0);
      b0 = madd(w, v128.load64_splat(x + o, 8), b0);
      a1 = madd(m, v128.load64_splat(x1 + o), a1);
      b1 = madd(w, v128.load64_splat(x1 + o, 8), b1);
      a2 = madd(m, v128.load64_splat(x2 + o), a2);
      b2 = madd(w, v128.load64_splat(x2 + o, 8), b2);
      a3 = madd(m, v128.load64_splat(x3 + o), a3);
      b3 = madd(w, v128.load64_splat(x3 + o, 8), b3);
    }
    const yo = y + (<usize>i << 4);
    finish(a0, b0, yo, ar, ai);
    finish(a1, b1, yo + stride, ar, ai);
    finish(a2, b2, yo + 2 * stride, ar, ai);
    finish(a3, b3, yo + 3 * stride, ar, ai);
  }
}

@inline function rows2(a: usize, d: i32, x: usize, y: usize, ar: f64, ai: f64): void {
  const stride = <usize>d << 4;
  const x1 = x + stride;
  for (let i = 0; i < d; i++) {
    const row = a + <usize>i * stride;
    let a0 = f64x2.splat(0), b0 = f64x2.splat(0), a1 = f64x2.splat(0), b1 = f64x2.splat(0);
    for (let j = 0; j < d; j++) {
      const o = <usize>j << 4;
      const m = v128.load(row + o);
      const w = v128.shuffle<f64>(m, m, 1, 0);
      a0 = madd(m, v128.load64_splat(x + o), a0);
      b0 = madd(w, v128.load64_splat(x + o, 8), b0);
      a1 = madd(m, v128.load64_splat(x1 + o), a1);
      b1 = madd(w, v128.load64_splat(x1 + o, 8), b1);
    }
    const yo = y + (<usize>i << 4);
    finish(a0, b0, yo, ar, ai);
    finish(a1, b1, yo + stride, ar, ai);
  }
}

@inline function rows1(a: usize, d: i32, x: usize, y: usize, ar: f64, ai: f64): void {
  const stride = <usize>d << 4;
  for (let i = 0; i < d; i++) {
    const row = a + <usize>i * stride;
    let a0 = f64x2.splat(0), b0 = f64x2.splat(0), a1 = f64x2.splat(0), b1 = f64x2.splat(0);
    // Two accumulator pairs over even/odd j shorten the dependency chain.
    let j = 0;
    for (; j + 1 < d; j += 2) {
      const o = <usize>j << 4;
      const m = v128.load(row + o), n = v128.load(row + o, 16);
      a0 = madd(m, v128.load64_splat(x + o), a0);
      b0 = madd(v128.shuffle<f64>(m, m, 1, 0), v128.load64_splat(x + o, 8), b0);
      a1 = madd(n, v128.load64_splat(x + o, 16), a1);
      b1 = madd(v128.shuffle<f64>(n, n, 1, 0), v128.load64_splat(x + o, 24), b1);
    }
    if (j < d) {
      const o = <usize>j << 4;
      const m = v128.load(row + o);
      a0 = madd(m, v128.load64_splat(x + o), a0);
      b0 = madd(v128.shuffle<f64>(m, m, 1, 0), v128.load64_splat(x + o, 8), b0);
    }
    finish(f64x2.add(a0, a1), f64x2.add(b0, b1), y + (<usize>i << 4), ar, ai);
  }
}

/** SIMD kernel (f64x2, no fused multiply-add): same contract as zgemvRef. */
export function zgemvSimd(a: usize, d: i32, x: usize, y: usize, r: i32, ar: f64, ai: f64): void {
  const stride = <usize>d << 4;
  let v = 0;
  for (; v + 4 <= r; v += 4) rows4(a, d, x + <usize>v * stride, y + <usize>v * stride, ar, ai);
  if (v + 2 <= r) {
    rows2(a, d, x + <usize>v * stride, y + <usize>v * stride, ar, ai);
    v += 2;
  }
  if (v < r) rows1(a, d, x + <usize>v * stride, y + <usize>v * stride, ar, ai);
}

// ------------------------------------------------------------------ packed kernel
// X is first repacked so that, for each j, the real parts of all vectors lie side by side, then their imaginary
// parts (padded to an even count): a pair of vectors is then one f64x2 load, and each matrix element is
// splatted once for all of them. Per matrix element and pair of vectors: two loads, four multiply-adds. An odd
// count's last vector sits alone in its pair's real slot as (re, im) (its imaginary slot unused): one load and two
// multiply-adds, where padding it with a zero vector would cost four (an eighth of the work for 7 vectors).

/** Bytes of scratch {@link zgemvPacked} needs for d-vectors, r of them. */
export function packedScratchBytes(d: i32, r: i32): usize {
  return <usize>d * <usize>((r + 1) & ~1) << 4;
}

// One output entry y[v][i] from its sum s = sr + i·si: y += α·s, or, in the rate form (ph ≠ 0: the row's phase
// e^{iE_iτ} at ph), y = −i·ph·(α·s), overwritten. The rate form gives the interaction-picture derivative straight
// from the product (no zeroed buffer, no second pass over it); its operations are those of that second pass.
@inline function put(o: usize, sr: f64, si: f64, ar: f64, ai: f64, ph: usize): void {
  if (ph == 0) {
    store<f64>(o, load<f64>(o) + ar * sr - ai * si);
    store<f64>(o, load<f64>(o, 8) + ar * si + ai * sr, 8);
  } else {
    putRate(o, ar * sr - ai * si, ar * si + ai * sr, ph);
  }
}

// y = −i·p·w for one entry, with the phase p at ph: (pr·wi + pi·wr, −pr·wr + pi·wi).
@inline function putRate(o: usize, wr: f64, wi: f64, ph: usize): void {
  const pr = load<f64>(ph), pi = load<f64>(ph, 8);
  store<f64>(o, pr * wi + pi * wr);
  store<f64>(o, -pr * wr + pi * wi, 8);
}

// One row i's entries of a pair (lanes: vectors v and v+1) into y (see put).
@inline function finishPair(re: v128, im: v128, y: usize, v: i32, r: i32, stride: usize, ar: f64, ai: f64, ph: usize): void {
  const o = y + <usize>v * stride;
  put(o, f64x2.extract_lane(re, 0), f64x2.extract_lane(im, 0), ar, ai, ph);
  if (v + 1 < r) put(o + stride, f64x2.extract_lane(re, 1), f64x2.extract_lane(im, 1), ar, ai, ph);
}

// One row i's entry of a vector alone in its pair: a = Σ mr·(xr, xi), b = Σ mi·(xr, xi), so the sum is
// (a.re − b.im) + i·(a.im + b.re).
@inline function finishSingle(a: v128, b: v128, y: usize, v: i32, stride: usize, ar: f64, ai: f64, ph: usize): void {
  const sr = f64x2.extract_lane(a, 0) - f64x2.extract_lane(b, 1);
  const si = f64x2.extract_lane(a, 1) + f64x2.extract_lane(b, 0);
  put(y + <usize>v * stride, sr, si, ar, ai, ph);
}

// A multiply-add step of a group's last pair (or of pairs1's one): a lone vector's (x = (re, im), y unused; see
// finishSingle), or a pair's (x the real parts, y the imaginary ones), as for every other pair.
@inline function lastRe(single: bool, mr: v128, mi: v128, x: v128, y: v128, acc: v128): v128 {
  return single ? madd(mr, x, acc) : nmadd(mi, y, madd(mr, x, acc));
}
@inline function lastIm(single: bool, mr: v128, mi: v128, x: v128, y: v128, acc: v128): v128 {
  return single ? madd(mi, x, acc) : madd(mi, x, madd(mr, y, acc));
}

// One pass over A for two pairs of vectors starting at pair p.
@inline function pairs2(a: usize, d: i32, xp: usize, per: usize, half: usize, p: i32, y: usize, r: i32, ar: f64, ai: f64, i0: i32, i1: i32, single: bool, ph: usize): void {
  const stride = <usize>d << 4;
  const off = <usize>p << 4;
  for (let i = i0; i < i1; i++) {
    const row = a + <usize>i * stride, phRow: usize = ph == 0 ? 0 : ph + (<usize>i << 4);
    let r0 = f64x2.splat(0), i0 = f64x2.splat(0), r1 = f64x2.splat(0), i1 = f64x2.splat(0);
    let base = xp + off;
    for (let j = 0; j < d; j++) {
      const m = row + (<usize>j << 4);
      const mr = v128.load64_splat(m), mi = v128.load64_splat(m, 8);
      const q = base + half;
      const x0 = v128.load(base), y0 = v128.load(q);
      const x1 = v128.load(base, 16);
      r0 = nmadd(mi, y0, madd(mr, x0, r0));
      i0 = madd(mi, x0, madd(mr, y0, i0));
      const y1 = single ? x1 : v128.load(q, 16);
      r1 = lastRe(single, mr, mi, x1, y1, r1);
      i1 = lastIm(single, mr, mi, x1, y1, i1);
      base += per;
    }
    const yo = y + (<usize>i << 4);
    finishPair(r0, i0, yo, 2 * p, r, stride, ar, ai, phRow);
    if (single) finishSingle(r1, i1, yo, 2 * p + 2, stride, ar, ai, phRow);
    else finishPair(r1, i1, yo, 2 * p + 2, r, stride, ar, ai, phRow);
  }
}

// One pass over A for two pairs of vectors starting at pair p, two rows at a time (each packed load serves both
// rows: eight sums in flight, three µ-ops a complex multiply-add); a last odd row goes alone (pairs2).
@inline function pairs2Rows(a: usize, d: i32, xp: usize, per: usize, half: usize, p: i32, y: usize, r: i32, ar: f64, ai: f64, i0: i32, i1: i32, single: bool, ph: usize): void {
  const stride = <usize>d << 4;
  const off = <usize>p << 4;
  let i = i0;
  for (; i + 2 <= i1; i += 2) {
    const row = a + <usize>i * stride, next = row + stride;
    let r0 = f64x2.splat(0), i0 = f64x2.splat(0), r1 = f64x2.splat(0), i1 = f64x2.splat(0);
    let s0 = f64x2.splat(0), t0 = f64x2.splat(0), s1 = f64x2.splat(0), t1 = f64x2.splat(0);
    let base = xp + off;
    for (let j = 0; j < d; j++) {
      const o = <usize>j << 4, m = row + o, n = next + o;
      const mr = v128.load64_splat(m), mi = v128.load64_splat(m, 8);
      const nr = v128.load64_splat(n), ni = v128.load64_splat(n, 8);
      const q = base + half;
      const x0 = v128.load(base), y0 = v128.load(q);
      const x1 = v128.load(base, 16);
      const y1 = single ? x1 : v128.load(q, 16);
      r0 = nmadd(mi, y0, madd(mr, x0, r0));
      i0 = madd(mi, x0, madd(mr, y0, i0));
      s0 = nmadd(ni, y0, madd(nr, x0, s0));
      t0 = madd(ni, x0, madd(nr, y0, t0));
      r1 = lastRe(single, mr, mi, x1, y1, r1);
      i1 = lastIm(single, mr, mi, x1, y1, i1);
      s1 = lastRe(single, nr, ni, x1, y1, s1);
      t1 = lastIm(single, nr, ni, x1, y1, t1);
      base += per;
    }
    const yo = y + (<usize>i << 4), yn = yo + 16;
    const phRow: usize = ph == 0 ? 0 : ph + (<usize>i << 4), phNext: usize = ph == 0 ? 0 : phRow + 16;
    finishPair(r0, i0, yo, 2 * p, r, stride, ar, ai, phRow);
    finishPair(s0, t0, yn, 2 * p, r, stride, ar, ai, phNext);
    if (single) {
      finishSingle(r1, i1, yo, 2 * p + 2, stride, ar, ai, phRow);
      finishSingle(s1, t1, yn, 2 * p + 2, stride, ar, ai, phNext);
    } else {
      finishPair(r1, i1, yo, 2 * p + 2, r, stride, ar, ai, phRow);
      finishPair(s1, t1, yn, 2 * p + 2, r, stride, ar, ai, phNext);
    }
  }
  if (i < i1) pairs2(a, d, xp, per, half, p, y, r, ar, ai, i, i1, single, ph);
}

// One pass over A for one pair of vectors starting at pair p, four rows at a time (eight sums in flight, each
// packed load serving the four rows); the last rows one at a time. Every row's sums run over j in order, as in the
// passes for more pairs: a vector's result does not depend on how many others share its pass.
@inline function pairs1(a: usize, d: i32, xp: usize, per: usize, half: usize, p: i32, y: usize, r: i32, ar: f64, ai: f64, i0: i32, i1: i32, single: bool, ph: usize): void {
  const stride = <usize>d << 4;
  const off = <usize>p << 4;
  let i = i0;
  for (; i + 4 <= i1; i += 4) {
    const m0 = a + <usize>i * stride, m1 = m0 + stride, m2 = m1 + stride, m3 = m2 + stride;
    let re0 = f64x2.splat(0), im0 = f64x2.splat(0), re1 = f64x2.splat(0), im1 = f64x2.splat(0);
    let re2 = f64x2.splat(0), im2 = f64x2.splat(0), re3 = f64x2.splat(0), im3 = f64x2.splat(0);
    let base = xp + off;
    for (let j = 0; j < d; j++) {
      const o = <usize>j << 4;
      const x = v128.load(base), w = single ? x : v128.load(base + half);
      const ar0 = v128.load64_splat(m0 + o), ai0 = v128.load64_splat(m0 + o, 8);
      const ar1 = v128.load64_splat(m1 + o), ai1 = v128.load64_splat(m1 + o, 8);
      re0 = lastRe(single, ar0, ai0, x, w, re0);
      im0 = lastIm(single, ar0, ai0, x, w, im0);
      re1 = lastRe(single, ar1, ai1, x, w, re1);
      im1 = lastIm(single, ar1, ai1, x, w, im1);
      const ar2 = v128.load64_splat(m2 + o), ai2 = v128.load64_splat(m2 + o, 8);
      const ar3 = v128.load64_splat(m3 + o), ai3 = v128.load64_splat(m3 + o, 8);
      re2 = lastRe(single, ar2, ai2, x, w, re2);
      im2 = lastIm(single, ar2, ai2, x, w, im2);
      re3 = lastRe(single, ar3, ai3, x, w, re3);
      im3 = lastIm(single, ar3, ai3, x, w, im3);
      base += per;
    }
    const yo = y + (<usize>i << 4);
    const ph0: usize = ph == 0 ? 0 : ph + (<usize>i << 4);
    const ph1: usize = ph == 0 ? 0 : ph0 + 16, ph2: usize = ph == 0 ? 0 : ph0 + 32, ph3: usize = ph == 0 ? 0 : ph0 + 48;
    if (single) {
      finishSingle(re0, im0, yo, 2 * p, stride, ar, ai, ph0);
      finishSingle(re1, im1, yo + 16, 2 * p, stride, ar, ai, ph1);
      finishSingle(re2, im2, yo + 32, 2 * p, stride, ar, ai, ph2);
      finishSingle(re3, im3, yo + 48, 2 * p, stride, ar, ai, ph3);
    } else {
      finishPair(re0, im0, yo, 2 * p, r, stride, ar, ai, ph0);
      finishPair(re1, im1, yo + 16, 2 * p, r, stride, ar, ai, ph1);
      finishPair(re2, im2, yo + 32, 2 * p, r, stride, ar, ai, ph2);
      finishPair(re3, im3, yo + 48, 2 * p, r, stride, ar, ai, ph3);
    }
  }
  for (; i < i1; i++) {
    const row = a + <usize>i * stride, phRow: usize = ph == 0 ? 0 : ph + (<usize>i << 4);
    let re0 = f64x2.splat(0), im0 = f64x2.splat(0);
    let base = xp + off;
    for (let j = 0; j < d; j++) {
      const m = row + (<usize>j << 4);
      const x = v128.load(base), w = single ? x : v128.load(base + half);
      const mr = v128.load64_splat(m), mi = v128.load64_splat(m, 8);
      re0 = lastRe(single, mr, mi, x, w, re0);
      im0 = lastIm(single, mr, mi, x, w, im0);
      base += per;
    }
    const yo = y + (<usize>i << 4);
    if (single) finishSingle(re0, im0, yo, 2 * p, stride, ar, ai, phRow);
    else finishPair(re0, im0, yo, 2 * p, r, stride, ar, ai, phRow);
  }
}

/**
 * Packed SIMD kernel: same contract as zgemvRef, with `scratch` holding at least
 * {@link packedScratchBytes}(d, r) bytes for the repacked X.
 */
export function zgemvPacked(a: usize, d: i32, x: usize, y: usize, r: i32, ar: f64, ai: f64, scratch: usize): void {
  packedUpTo(a, d, x, y, r, ar, ai, scratch, d, 0);
}

/**
 * {@link zgemvPacked} for output rows 0…rows−1 only (the others are left as they were); in the rate form where
 * ph ≠ 0 (see {@link zgemvRate}).
 */
function packedUpTo(
  a: usize, d: i32, x: usize, y: usize, r: i32, ar: f64, ai: f64, scratch: usize, rows: i32, ph: usize,
): void {
  packRows(x, d, r, scratch, 0, d);
  if (sharing() && <i64>d * <i64>d * <i64>r >= SHARE_FROM) {
    // rows in blocks, claimed by this thread and the helper
    setArg(0, <u64>a);
    setArg(1, <u64>d);
    setArg(2, <u64>scratch);
    setArg(3, <u64>y);
    setArg(4, <u64>r);
    setArgF(5, ar);
    setArgF(6, ai);
    setArg(7, <u64>ph);
    // in eighths: a late helper still takes some, and one descheduled while it holds a block holds only an
    // eighth (halves at d = 64 had the same best times and 5–10% longer median ones, interleaved in one engine)
    runShared(JOB_PACKED_ROWS, 0, rows, blockSize(rows, 8, 4), packedRowsJob);
    return;
  }
  packedRows(a, d, scratch, y, r, ar, ai, 0, rows, ph);
}

/** Entries j0…j1−1 of X (r d-vectors at x) into the packed layout at xp (see {@link zgemvPacked}). */
export function packRows(x: usize, d: i32, r: i32, xp: usize, j0: i32, j1: i32): void {
  const rp = (r + 1) & ~1;
  const per = <usize>rp << 4, half = <usize>rp << 3;
  const stride = <usize>d << 4;
  const even = r & ~1;
  for (let j = j0; j < j1; j++) {
    const row = xp + <usize>j * per;
    for (let v = 0; v < even; v++) {
      const q = x + <usize>v * stride + (<usize>j << 4);
      store<f64>(row + (<usize>v << 3), load<f64>(q));
      store<f64>(row + half + (<usize>v << 3), load<f64>(q, 8));
    }
    // an odd count's last vector alone, as (re, im) in its pair's real slot
    if (even < r) v128.store(row + (<usize>even << 3), v128.load(x + <usize>even * stride + (<usize>j << 4)));
  }
}

/**
 * Rows i0…i1−1 of Y += α·A·X with X already packed at xp (see {@link zgemvPacked}); with phases ph ≠ 0, of the
 * rate form Y = −i·e^{iEτ}∘(α·A·X) instead (see {@link zgemvRate}).
 */
export function packedRows(a: usize, d: i32, xp: usize, y: usize, r: i32, ar: f64, ai: f64, i0: i32, i1: i32, ph: usize): void {
  const rp = (r + 1) & ~1, pairs = rp >> 1, odd = (r & 1) != 0;
  const per = <usize>rp << 4, half = <usize>rp << 3;
  // Two pairs for two rows at a time, the last two pairs (or the one left) apart: eight loads (two entries of A,
  // each split, and four packed) for sixteen multiply-adds, where one row for four pairs (two rows would need 16
  // registers of sums) took nine loads for seven vectors' fourteen: the same speed on a quiet machine, 6% faster
  // at d = 64 while the machine is slow on loads (paired runs, 1165 rounds).
  let p = 0;
  for (; p + 2 < pairs; p += 2) pairs2Rows(a, d, xp, per, half, p, y, r, ar, ai, i0, i1, false, ph);
  if (p + 2 <= pairs) {
    // the group that ends with an odd count's last vector (alone in its pair) takes the single-vector form (two
    // calls, so that each inlined copy has its form fixed at compile time)
    if (odd && p + 2 == pairs) pairs2Rows(a, d, xp, per, half, p, y, r, ar, ai, i0, i1, true, ph);
    else pairs2Rows(a, d, xp, per, half, p, y, r, ar, ai, i0, i1, false, ph);
    p += 2;
  }
  if (p < pairs) {
    if (odd) pairs1(a, d, xp, per, half, p, y, r, ar, ai, i0, i1, true, ph);
    else pairs1(a, d, xp, per, half, p, y, r, ar, ai, i0, i1, false, ph);
  }
}

/** Products of at least this many complex multiply-adds (d²·r) are shared with the helper thread. */
const SHARE_FROM: i64 = 64 * 64 * 4;
export const JOB_PACKED_ROWS = 1;

/** A block of a shared packed product (arguments as {@link zgemvPacked} posts them). */
export function packedRowsJob(i0: i32, i1: i32): void {
  packedRows(
    <usize>arg(0), <i32>arg(1), <usize>arg(2), <usize>arg(3), <i32>arg(4), argF(5), argF(6), i0, i1, <usize>arg(7),
  );
}

// ------------------------------------------------------------------ sparse (CSR) kernels
// A sparse d×d complex matrix in compressed sparse rows: rowStart (d+1 i32), column (nnz i32), values (nnz
// complex, interleaved). Same contract as the dense kernels: Y[v] += α·A·X[v] for r vectors of d entries laid
// out one after another.

/** Reference sparse kernel: one vector at a time, scalar arithmetic. */
export function zcsrmvRef(
  rowStart: usize, column: usize, values: usize, d: i32, x: usize, y: usize, r: i32, ar: f64, ai: f64,
): void {
  const stride = <usize>d << 4;
  for (let v = 0; v < r; v++) {
    const xv = x + <usize>v * stride, yv = y + <usize>v * stride;
    for (let i = 0; i < d; i++) {
      let sr = 0.0, si = 0.0;
      const end = load<i32>(rowStart + (<usize>(i + 1) << 2));
      for (let k = load<i32>(rowStart + (<usize>i << 2)); k < end; k++) {
        const p = values + (<usize>k << 4), q = xv + (<usize>load<i32>(column + (<usize>k << 2)) << 4);
        const pr = load<f64>(p), pi = load<f64>(p, 8), xr = load<f64>(q), xi = load<f64>(q, 8);
        sr += pr * xr - pi * xi;
        si += pr * xi + pi * xr;
      }
      const o = yv + (<usize>i << 4);
      store<f64>(o, load<f64>(o) + ar * sr - ai * si);
      store<f64>(o, load<f64>(o, 8) + ar * si + ai * sr, 8);
    }
  }
}

/**
 * SIMD sparse kernel: each row's non-zeros read once for up to four vectors (the same f64x2 scheme as the
 * dense row kernel); same contract as zcsrmvRef.
 */
export function zcsrmvSimd(
  rowStart: usize, column: usize, values: usize, d: i32, x: usize, y: usize, r: i32, ar: f64, ai: f64,
): void {
  const stride = <usize>d << 4;
  let v = 0;
  for (; v + 4 <= r; v += 4) {
    const x0 = x + <usize>v * stride, x1 = x0 + stride, x2 = x1 + stride, x3 = x2 + stride;
    const y0 = y + <usize>v * stride;
    for (let i = 0; i < d; i++) {
      let a0 = f64x2.splat(0), b0 = f64x2.splat(0), a1 = f64x2.splat(0), b1 = f64x2.splat(0);
      let a2 = f64x2.splat(0), b2 = f64x2.splat(0), a3 = f64x2.splat(0), b3 = f64x2.splat(0);
      const end = load<i32>(rowStart + (<usize>(i + 1) << 2));
      for (let k = load<i32>(rowStart + (<usize>i << 2)); k < end; k++) {
        const m = v128.load(values + (<usize>k << 4));
        const w = v128.shuffle<f64>(m, m, 1, 0);
        const o = <usize>load<i32>(column + (<usize>k << 2)) << 4;
        a0 = madd(m, v128.load64_splat(x0 + o), a0);
        b0 = madd(w, v128.load64_splat(x0 + o, 8), b0);
        a1 = madd(m, v128.load64_splat(x1 + o), a1);
        b1 = madd(w, v128.load64_splat(x1 + o, 8), b1);
        a2 = madd(m, v128.load64_splat(x2 + o), a2);
        b2 = madd(w, v128.load64_splat(x2 + o, 8), b2);
        a3 = madd(m, v128.load64_splat(x3 + o), a3);
        b3 = madd(w, v128.load64_splat(x3 + o, 8), b3);
      }
      const yo = y0 + (<usize>i << 4);
      finish(a0, b0, yo, ar, ai);
      finish(a1, b1, yo + stride, ar, ai);
      finish(a2, b2, yo + 2 * stride, ar, ai);
      finish(a3, b3, yo + 3 * stride, ar, ai);
    }
  }
  for (; v < r; v++) {
    const xv = x + <usize>v * stride, yv = y + <usize>v * stride;
    for (let i = 0; i < d; i++) {
      let a0 = f64x2.splat(0), b0 = f64x2.splat(0);
      const end = load<i32>(rowStart + (<usize>(i + 1) << 2));
      for (let k = load<i32>(rowStart + (<usize>i << 2)); k < end; k++) {
        const m = v128.load(values + (<usize>k << 4));
        const o = <usize>load<i32>(column + (<usize>k << 2)) << 4;
        a0 = madd(m, v128.load64_splat(xv + o), a0);
        b0 = madd(v128.shuffle<f64>(m, m, 1, 0), v128.load64_splat(xv + o, 8), b0);
      }
      finish(a0, b0, yv + (<usize>i << 4), ar, ai);
    }
  }
}

/** Y[v] += α·A·X[v] for a CSR matrix, with the selected kernel. */
export function zcsrmv(
  rowStart: usize, column: usize, values: usize, d: i32, x: usize, y: usize, r: i32, ar: f64, ai: f64,
): void {
  if (r <= 0) return;
  if (simdEnabled) zcsrmvSimd(rowStart, column, values, d, x, y, r, ar, ai);
  else zcsrmvRef(rowStart, column, values, d, x, y, r, ar, ai);
}

// The one registration point: which kernel the drivers call.
let simdEnabled = true;

/** Pick the SIMD (true) or reference (false) kernel for the drivers. */
export function useSimd(on: bool): void {
  simdEnabled = on;
}

// Scratch for the packed kernel, set by the drivers after they allocate (0: none, use zgemvSimd).
let scratch: usize = 0;
let scratchBytes: usize = 0;

/** Hands the drivers' scratch buffer to the packed kernel (bytes = 0 withdraws it). */
export function setKernelScratch(ptr: usize, bytes: usize): void {
  scratch = ptr;
  scratchBytes = bytes;
}

/** The d-vectors the drivers' scratch holds for the packed kernel (an even number; 0 with no scratch). */
@inline function packedCapacity(d: i32): i32 {
  return scratch == 0 ? 0 : <i32>(scratchBytes / (<usize>d << 4)) & ~1;
}

/** Y[v] += α·A·X[v], v < r, with the selected kernel. */
export function zgemv(a: usize, d: i32, x: usize, y: usize, r: i32, ar: f64, ai: f64): void {
  if (r <= 0) return;
  if (!simdEnabled) {
    zgemvRef(a, d, x, y, r, ar, ai);
    return;
  }
  // the packed kernel (three vectors or more: below, the row kernel is faster) on as many vectors at a time
  // as the scratch holds
  const cap = packedCapacity(d);
  if (cap < 4 || r < 3) {
    zgemvSimd(a, d, x, y, r, ar, ai);
    return;
  }
  const stride = <usize>d << 4;
  for (let v = 0; v < r; v += cap) {
    zgemvPacked(a, d, x + <usize>v * stride, y + <usize>v * stride, min(cap, r - v), ar, ai, scratch);
  }
}

/**
 * Y[v] += α·A·X[v], v < r, for output rows 0…rows−1 at least (the packed kernel stops there; the others compute
 * every row): for a product whose other rows the caller fills in itself. At most as many vectors as the scratch
 * holds (16 or more once the drivers have set it).
 */
export function zgemvUpTo(a: usize, d: i32, x: usize, y: usize, r: i32, ar: f64, ai: f64, rows: i32): void {
  const cap = packedCapacity(d);
  if (!simdEnabled || cap < r || cap < 4 || r < 3) {
    zgemv(a, d, x, y, r, ar, ai);
    return;
  }
  packedUpTo(a, d, x, y, r, ar, ai, scratch, rows, 0);
}

/**
 * The interaction-picture rate of r vectors: Y[v] = −i·e^{iEτ}∘(α·A·X[v]), Y overwritten, with ph = e^{iEτ}
 * (d complex). The packed kernel writes it as it finishes each row; otherwise a product into a zeroed Y and a
 * pass over it.
 */
export function zgemvRate(a: usize, d: i32, x: usize, y: usize, r: i32, ar: f64, ai: f64, ph: usize): void {
  if (r <= 0) return;
  const cap = packedCapacity(d), stride = <usize>d << 4;
  if (!simdEnabled || cap < 4 || r < 3) {
    memory.fill(y, 0, <usize>r * stride);
    zgemv(a, d, x, y, r, ar, ai);
    for (let v = 0; v < r; v++) {
      for (let i = 0; i < d; i++) {
        const o = y + <usize>v * stride + (<usize>i << 4);
        putRate(o, load<f64>(o), load<f64>(o, 8), ph + (<usize>i << 4));
      }
    }
    return;
  }
  for (let v = 0; v < r; v += cap) {
    packedUpTo(a, d, x + <usize>v * stride, y + <usize>v * stride, min(cap, r - v), ar, ai, scratch, d, ph);
  }
}

/**
 * A tight f64x2 multiply-add loop on registers only, for a peak rate
 * measured on the spot: eight independent accumulators (enough to cover a
 * fused multiply-add's latency on two units; six measured 25% below the fused
 * peak) fed by products of loop-invariant factors with two slowly varying
 * operands (so nothing can be folded or hoisted): 8 × (multiply-add) × 2 lanes
 * = 32 counted flops per iteration (the two operand updates are not counted).
 * It uses the build's own `madd`: fused in the relaxed-SIMD builds.
 */
export function peakLoop(iterations: i32, x0: f64, dy: f64): f64 {
  const xa = f64x2.splat(x0), xb = f64x2.splat(x0 * 1.1), xc = f64x2.splat(x0 * 1.2), xd = f64x2.splat(x0 * 1.3);
  const step = f64x2.splat(dy);
  let y = f64x2.splat(1.0), z = f64x2.splat(2.0);
  let a0 = f64x2.splat(0), a1 = f64x2.splat(0), a2 = f64x2.splat(0), a3 = f64x2.splat(0);
  let a4 = f64x2.splat(0), a5 = f64x2.splat(0), a6 = f64x2.splat(0), a7 = f64x2.splat(0);
  for (let k = 0; k < iterations; k++) {
    a0 = madd(xa, y, a0);
    a1 = madd(xb, y, a1);
    a2 = madd(xc, y, a2);
    a3 = madd(xd, y, a3);
    a4 = madd(xa, z, a4);
    a5 = madd(xb, z, a5);
    a6 = madd(xc, z, a6);
    a7 = madd(xd, z, a7);
    y = f64x2.add(y, step);
    z = f64x2.sub(z, step);
  }
  const t = f64x2.add(f64x2.add(f64x2.add(a0, a1), f64x2.add(a2, a3)), f64x2.add(f64x2.add(a4, a5), f64x2.add(a6, a7)));
  return f64x2.extract_lane(t, 0) + f64x2.extract_lane(t, 1);
}

/** Flops counted per iteration of peakLoop. */
export const PEAK_FLOPS_PER_ITERATION: i32 = 32;
