// Hermitian eigensolver: complex Householder reduction to tridiagonal form,
// a diagonal phase change that makes the tridiagonal real, then implicit QL
// with shifts, accumulating every transformation into the eigenvectors.
// see: Golub & Van Loan, Matrix Computations, ch. 8; the QL iteration is the
// classic tql2/tqli form.

@inline function re(p: usize): f64 { return load<f64>(p); }
@inline function im(p: usize): f64 { return load<f64>(p, 8); }
@inline function at(m: usize, n: i32, i: i32, j: i32): usize { return m + ((<usize>i * n + j) << 4); }

/**
 * Eigen-decomposition A = Z·diag(w)·Z† of a Hermitian n×n matrix.
 * A is destroyed. w: n f64 (ascending). Z: n×n complex, column k is the
 * eigenvector of w[k]. work: at least 8n f64. Returns 0, or 1 when the QL
 * iteration did not converge.
 */
export function eigh(a: usize, n: i32, w: usize, z: usize, work: usize): i32 {
  const v = work;                        // n complex
  const p = work + (<usize>n << 4);      // n complex
  const e = work + (<usize>n << 5);      // n f64 (real subdiagonal)
  const sub = e + (<usize>n << 3);       // n complex (complex subdiagonal)  [uses 2n f64]
  // Z = I
  memory.fill(z, 0, <usize>n * n << 4);
  for (let i = 0; i < n; i++) store<f64>(at(z, n, i, i), 1.0);

  for (let k = 0; k < n - 2; k++) {
    let xnorm2 = 0.0;
    for (let i = k + 1; i < n; i++) {
      const q = at(a, n, i, k);
      xnorm2 += re(q) * re(q) + im(q) * im(q);
    }
    const x0 = at(a, n, k + 1, k);
    if (xnorm2 == 0.0) {
      store<f64>(sub + (<usize>k << 4), 0.0);
      store<f64>(sub + (<usize>k << 4), 0.0, 8);
      continue;
    }
    const xnorm = Math.sqrt(xnorm2);
    const ax0 = Math.hypot(re(x0), im(x0));
    const phr = ax0 > 0 ? re(x0) / ax0 : 1.0, phi = ax0 > 0 ? im(x0) / ax0 : 0.0;
    const alr = -phr * xnorm, ali = -phi * xnorm;
    // v = x − α e1 over rows k+1..n−1 (stored at v[i])
    for (let i = k + 1; i < n; i++) {
      const q = at(a, n, i, k), o = v + (<usize>i << 4);
      store<f64>(o, re(q));
      store<f64>(o, im(q), 8);
    }
    const v0 = v + (<usize>(k + 1) << 4);
    store<f64>(v0, re(v0) - alr);
    store<f64>(v0, im(v0) - ali, 8);
    const tau = 2.0 / (2.0 * xnorm * (xnorm + ax0));
    // p = τ·A22·v, β = (τ/2)·v†p
    let beta = 0.0;
    for (let i = k + 1; i < n; i++) {
      let sr = 0.0, si = 0.0;
      for (let j = k + 1; j < n; j++) {
        const q = at(a, n, i, j), o = v + (<usize>j << 4);
        sr += re(q) * re(o) - im(q) * im(o);
        si += re(q) * im(o) + im(q) * re(o);
      }
      const o = p + (<usize>i << 4), vi = v + (<usize>i << 4);
      store<f64>(o, tau * sr);
      store<f64>(o, tau * si, 8);
      beta += re(vi) * tau * sr + im(vi) * tau * si;
    }
    beta *= 0.5 * tau;
    // w = p − β v (in p)
    for (let i = k + 1; i < n; i++) {
      const o = p + (<usize>i << 4), vi = v + (<usize>i << 4);
      store<f64>(o, re(o) - beta * re(vi));
      store<f64>(o, im(o) - beta * im(vi), 8);
    }
    // A22 −= v w† + w v†
    for (let i = k + 1; i < n; i++) {
      const vi = v + (<usize>i << 4), wi = p + (<usize>i << 4);
      for (let j = k + 1; j < n; j++) {
        const vj = v + (<usize>j << 4), wj = p + (<usize>j << 4), q = at(a, n, i, j);
        // v_i conj(w_j) + w_i conj(v_j)
        const r = re(vi) * re(wj) + im(vi) * im(wj) + re(wi) * re(vj) + im(wi) * im(vj);
        const s = im(vi) * re(wj) - re(vi) * im(wj) + im(wi) * re(vj) - re(wi) * im(vj);
        store<f64>(q, re(q) - r);
        store<f64>(q, im(q) - s, 8);
      }
    }
    store<f64>(sub + (<usize>k << 4), alr);
    store<f64>(sub + (<usize>k << 4), ali, 8);
    // Z ← Z·H = Z − τ (Z v) v†
    for (let r = 0; r < n; r++) {
      let sr = 0.0, si = 0.0;
      for (let c = k + 1; c < n; c++) {
        const q = at(z, n, r, c), o = v + (<usize>c << 4);
        sr += re(q) * re(o) - im(q) * im(o);
        si += re(q) * im(o) + im(q) * re(o);
      }
      sr *= tau;
      si *= tau;
      for (let c = k + 1; c < n; c++) {
        const q = at(z, n, r, c), o = v + (<usize>c << 4);
        // (sr + i si)·conj(v_c)
        store<f64>(q, re(q) - (sr * re(o) + si * im(o)));
        store<f64>(q, im(q) - (si * re(o) - sr * im(o)), 8);
      }
    }
  }
  if (n >= 2) {
    const q = at(a, n, n - 1, n - 2), o = sub + (<usize>(n - 2) << 4);
    store<f64>(o, re(q));
    store<f64>(o, im(q), 8);
  }
  // Diagonal, and the phase change D that makes the subdiagonal real: Z ← Z·D.
  let dr = 1.0, di = 0.0;
  for (let i = 0; i < n; i++) {
    store<f64>(w + (<usize>i << 3), re(at(a, n, i, i)));
    if (i > 0) {
      for (let r = 0; r < n; r++) {
        const q = at(z, n, r, i);
        const zr = re(q), zi = im(q);
        store<f64>(q, zr * dr - zi * di);
        store<f64>(q, zr * di + zi * dr, 8);
      }
    }
    if (i < n - 1) {
      const o = sub + (<usize>i << 4);
      const er = re(o), ei = im(o), m = Math.hypot(er, ei);
      store<f64>(e + (<usize>i << 3), m);
      if (m > 0) {
        const nr = (dr * er - di * ei) / m, ni = (dr * ei + di * er) / m;
        dr = nr;
        di = ni;
      }
    }
  }
  if (n > 0) store<f64>(e + (<usize>(n - 1) << 3), 0.0);
  if (tql(w, e, n, z) != 0) return 1;
  sortAscending(w, z, n);
  return 0;
}

@inline function dget(x: usize, i: i32): f64 { return load<f64>(x + (<usize>i << 3)); }
@inline function dset(x: usize, i: i32, val: f64): void { store<f64>(x + (<usize>i << 3), val); }

// Implicit QL with Wilkinson-type shifts on the real symmetric tridiagonal
// (d, e), e[i] coupling i and i+1; rotations are applied to the columns of
// the complex Z.
function tql(d: usize, e: usize, n: i32, z: usize): i32 {
  for (let l = 0; l < n; l++) {
    let iter = 0;
    let m = l;
    do {
      for (m = l; m < n - 1; m++) {
        const dd = Math.abs(dget(d, m)) + Math.abs(dget(d, m + 1));
        if (Math.abs(dget(e, m)) <= f64.EPSILON * dd) break;
      }
      if (m != l) {
        if (iter++ == 60) return 1;
        let g = (dget(d, l + 1) - dget(d, l)) / (2.0 * dget(e, l));
        let r = Math.hypot(g, 1.0);
        g = dget(d, m) - dget(d, l) + dget(e, l) / (g + (g >= 0 ? Math.abs(r) : -Math.abs(r)));
        let s = 1.0, c = 1.0, p = 0.0;
        let i = m - 1;
        for (; i >= l; i--) {
          const f = s * dget(e, i), b = c * dget(e, i);
          r = Math.hypot(f, g);
          dset(e, i + 1, r);
          if (r == 0.0) {
            dset(d, i + 1, dget(d, i + 1) - p);
            dset(e, m, 0.0);
            break;
          }
          s = f / r;
          c = g / r;
          g = dget(d, i + 1) - p;
          r = (dget(d, i) - g) * s + 2.0 * c * b;
          p = s * r;
          dset(d, i + 1, g + p);
          g = c * r - b;
          for (let k = 0; k < n; k++) {
            const q0 = at(z, n, k, i), q1 = at(z, n, k, i + 1);
            const fr = re(q1), fi = im(q1), zr = re(q0), zi = im(q0);
            store<f64>(q1, s * zr + c * fr);
            store<f64>(q1, s * zi + c * fi, 8);
            store<f64>(q0, c * zr - s * fr);
            store<f64>(q0, c * zi - s * fi, 8);
          }
        }
        if (r == 0.0 && i >= l) continue;
        dset(d, l, dget(d, l) - p);
        dset(e, l, g);
        dset(e, m, 0.0);
      }
    } while (m != l);
  }
  return 0;
}

function sortAscending(w: usize, z: usize, n: i32): void {
  for (let i = 0; i < n - 1; i++) {
    let k = i;
    for (let j = i + 1; j < n; j++) if (dget(w, j) < dget(w, k)) k = j;
    if (k != i) {
      const t = dget(w, i);
      dset(w, i, dget(w, k));
      dset(w, k, t);
      for (let r = 0; r < n; r++) {
        const a = at(z, n, r, i), b = at(z, n, r, k);
        const ar = re(a), ai = im(a);
        store<f64>(a, re(b));
        store<f64>(a, im(b), 8);
        store<f64>(b, ar);
        store<f64>(b, ai, 8);
      }
    }
  }
}
