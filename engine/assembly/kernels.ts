// Complex matrix–multi-vector micro-kernels.
// Contract: Y[v] := Y[v] + α·A·X[v] for v < r, where A is d×d complex
// (row-major, interleaved re/im) and X[v], Y[v] are complex d-vectors laid
// out one after another (vector v at X + v·16d). No checks, no edge cases
// beyond the block: the drivers own those. The SIMD kernel reads each row of
// A once for up to four vectors; the reference kernel is the plain loop.

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
      a0 = f64x2.add(a0, f64x2.mul(m, v128.load64_splat(x + o)));
      b0 = f64x2.add(b0, f64x2.mul(w, v128.load64_splat(x + o, 8)));
      a1 = f64x2.add(a1, f64x2.mul(m, v128.load64_splat(x1 + o)));
      b1 = f64x2.add(b1, f64x2.mul(w, v128.load64_splat(x1 + o, 8)));
      a2 = f64x2.add(a2, f64x2.mul(m, v128.load64_splat(x2 + o)));
      b2 = f64x2.add(b2, f64x2.mul(w, v128.load64_splat(x2 + o, 8)));
      a3 = f64x2.add(a3, f64x2.mul(m, v128.load64_splat(x3 + o)));
      b3 = f64x2.add(b3, f64x2.mul(w, v128.load64_splat(x3 + o, 8)));
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
      a0 = f64x2.add(a0, f64x2.mul(m, v128.load64_splat(x + o)));
      b0 = f64x2.add(b0, f64x2.mul(w, v128.load64_splat(x + o, 8)));
      a1 = f64x2.add(a1, f64x2.mul(m, v128.load64_splat(x1 + o)));
      b1 = f64x2.add(b1, f64x2.mul(w, v128.load64_splat(x1 + o, 8)));
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
      a0 = f64x2.add(a0, f64x2.mul(m, v128.load64_splat(x + o)));
      b0 = f64x2.add(b0, f64x2.mul(v128.shuffle<f64>(m, m, 1, 0), v128.load64_splat(x + o, 8)));
      a1 = f64x2.add(a1, f64x2.mul(n, v128.load64_splat(x + o, 16)));
      b1 = f64x2.add(b1, f64x2.mul(v128.shuffle<f64>(n, n, 1, 0), v128.load64_splat(x + o, 24)));
    }
    if (j < d) {
      const o = <usize>j << 4;
      const m = v128.load(row + o);
      a0 = f64x2.add(a0, f64x2.mul(m, v128.load64_splat(x + o)));
      b0 = f64x2.add(b0, f64x2.mul(v128.shuffle<f64>(m, m, 1, 0), v128.load64_splat(x + o, 8)));
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

// The one registration point: which kernel the drivers call.
let simdEnabled = true;

/** Pick the SIMD (true) or reference (false) kernel for the drivers. */
export function useSimd(on: bool): void {
  simdEnabled = on;
}

/** Y[v] += α·A·X[v], v < r, with the selected kernel. */
export function zgemv(a: usize, d: i32, x: usize, y: usize, r: i32, ar: f64, ai: f64): void {
  if (r <= 0) return;
  if (simdEnabled) zgemvSimd(a, d, x, y, r, ar, ai);
  else zgemvRef(a, d, x, y, r, ar, ai);
}

/**
 * A tight f64x2 multiply-add loop on registers only, for a peak rate
 * measured on the spot: six independent accumulators fed by products of
 * loop-invariant factors with two slowly varying operands (so nothing can be
 * folded or hoisted): 6 × (mul + add) × 2 lanes = 24 counted flops per
 * iteration (the two operand updates are not counted).
 */
export function peakLoop(iterations: i32, x0: f64, dy: f64): f64 {
  const xa = f64x2.splat(x0), xb = f64x2.splat(x0 * 1.1), xc = f64x2.splat(x0 * 1.2);
  const step = f64x2.splat(dy);
  let y = f64x2.splat(1.0), z = f64x2.splat(2.0);
  let a0 = f64x2.splat(0), a1 = f64x2.splat(0), a2 = f64x2.splat(0);
  let a3 = f64x2.splat(0), a4 = f64x2.splat(0), a5 = f64x2.splat(0);
  for (let k = 0; k < iterations; k++) {
    a0 = f64x2.add(a0, f64x2.mul(xa, y));
    a1 = f64x2.add(a1, f64x2.mul(xb, y));
    a2 = f64x2.add(a2, f64x2.mul(xc, y));
    a3 = f64x2.add(a3, f64x2.mul(xa, z));
    a4 = f64x2.add(a4, f64x2.mul(xb, z));
    a5 = f64x2.add(a5, f64x2.mul(xc, z));
    y = f64x2.add(y, step);
    z = f64x2.sub(z, step);
  }
  const t = f64x2.add(f64x2.add(f64x2.add(a0, a1), f64x2.add(a2, a3)), f64x2.add(a4, a5));
  return f64x2.extract_lane(t, 0) + f64x2.extract_lane(t, 1);
}

/** Flops counted per iteration of peakLoop. */
export const PEAK_FLOPS_PER_ITERATION: i32 = 24;
