// Hermitian eigensolver: complex Householder reduction to tridiagonal form,
// a diagonal phase change that makes the tridiagonal real, then its
// eigenvalues by implicit QL with shifts and its eigenvectors by inverse
// iteration, checked before they are used (when a check fails: the QL
// rotations, accumulated into a real orthogonal matrix Q kept transposed, each
// rotation combining two contiguous rows of Qᵀ, two lanes at a time). The
// tridiagonal's eigenvectors (rows of Qᵀ), phased, then take the reflectors
// one after another, four vectors at a time (back-transformation), and Z is
// their transpose.
// see: Golub & Van Loan, Matrix Computations, ch. 5.1 (applying Householder
// matrices) and ch. 8; the QL iteration is the classic tql2/tqli form.

import { madd, nmadd } from "./kernels";
import { arg, blockSize, runShared, setArg, sharing } from "./share";

@inline function re(p: usize): f64 { return load<f64>(p); }
@inline function im(p: usize): f64 { return load<f64>(p, 8); }
@inline function at(m: usize, n: i32, i: i32, j: i32): usize { return m + ((<usize>i * n + j) << 4); }

/** Bytes of work space {@link eigh} and {@link eigenvaluesOnly} need per level (26n f64). */
export const EIGH_WORK_BYTES_PER_LEVEL: i32 = 208;

/**
 * Eigen-decomposition A = Z·diag(w)·Z† of a Hermitian n×n matrix.
 * A is destroyed. w: n f64 (ascending). Z: n×n complex, column k is the
 * eigenvector of w[k]. work: at least 26n f64. Returns 0, or 1 when the QL
 * iteration did not converge.
 */
export function eigh(a: usize, n: i32, w: usize, z: usize, work: usize): i32 {
  const v = work;                        // n complex
  const p = work + (<usize>n << 4);      // n complex
  const e = work + (<usize>n << 5);      // n f64 (real subdiagonal)
  const sub = e + (<usize>n << 3);       // n complex (complex subdiagonal)  [uses 2n f64]
  const taus = sub + (<usize>n << 4);    // n f64 (reflector factors)
  const pending = taus + (<usize>n << 3); // 2n complex (the reduction's pending update), then 2n complex scratch
  tridiagonalize(a, n, v, p, sub, taus, pending);
  // Z's second half keeps the reflectors (packed) until the end; A's lower triangle is free after that.
  const packed = z + (<usize>n * n << 3);
  packReflectors(a, n, packed);
  // Diagonal, and the phase change D that makes the subdiagonal real (D_i into p).
  let dr = 1.0, di = 0.0;
  for (let i = 0; i < n; i++) {
    store<f64>(w + (<usize>i << 3), re(at(a, n, i, i)));
    store<f64>(p + (<usize>i << 4), dr);
    store<f64>(p + (<usize>i << 4), di, 8);
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
  // A is free now: its first half holds Qᵀ, the tridiagonal's eigenvectors as rows (row-major); its second half
  // is inverse iteration's scratch, or the QL path's log of sweeps' rotations not yet applied.
  const qt = a, log = a + (<usize>n * n << 3);
  inverseUsed = n >= INVERSE_FROM && inverseIteration(w, e, n, qt, log);
  if (!inverseUsed) {
    // the QL rotations, accumulated (inverse iteration leaves w and e as they were when it cannot vouch for its
    // vectors)
    memory.fill(qt, 0, <usize>n * n << 3);
    for (let i = 0; i < n; i++) store<f64>(qt + ((<usize>i * n + i) << 3), 1.0);
    if (tql(w, e, n, qt, log, n * n) != 0) return 1;
  }
  sortAscending(w, qt, n);
  // The eigenvectors of A are H_0⋯H_{n−3}·D·q_c (q_c row c of Qᵀ): each row of Qᵀ becomes D·q_c in place (complex,
  // filling all of A), then takes the reflectors, and Z is the transpose.
  phaseRows(a, n, p);
  backTransform(a, n, packed, taus, z);
  transposeInto(z, a, n);
  return 0;
}

/**
 * Eigenvalues only (ascending, into w) of a Hermitian n×n matrix: the same reduction and QL, without
 * eigenvectors (no reflector accumulation, no rotations kept). A is destroyed; work: at least 26n f64. Returns 0,
 * or 1 when the QL iteration did not converge.
 */
export function eigenvaluesOnly(a: usize, n: i32, w: usize, work: usize): i32 {
  const v = work, p = work + (<usize>n << 4), e = work + (<usize>n << 5);
  const sub = e + (<usize>n << 3), taus = sub + (<usize>n << 4), pending = taus + (<usize>n << 3);
  tridiagonalize(a, n, v, p, sub, taus, pending);
  // the subdiagonal's moduli (a diagonal phase change makes it real; it changes no eigenvalue)
  for (let i = 0; i < n; i++) {
    store<f64>(w + (<usize>i << 3), re(at(a, n, i, i)));
    const o = sub + (<usize>i << 4);
    store<f64>(e + (<usize>i << 3), i < n - 1 ? Math.hypot(re(o), im(o)) : 0.0);
  }
  if (tql(w, e, n, 0, 0, 0) != 0) return 1;
  // insertion sort (n values)
  for (let i = 1; i < n; i++) {
    const x = dget(w, i);
    let j = i - 1;
    for (; j >= 0 && dget(w, j) > x; j--) dset(w, j + 1, dget(w, j));
    dset(w, j + 1, x);
  }
  return 0;
}

/**
 * The Householder reduction: A's diagonal and the complex subdiagonal (sub) of the tridiagonal, the reflectors'
 * vectors in A's columns and their factors in taus (v, p: n complex each; pending: 9n complex, scratch). Only A's
 * lower triangle is read and kept up to date (A is Hermitian): each of its entries serves two products, its row's
 * and, conjugated, its column's.
 *
 * Each step's rank-2 update A22 −= v w† + w v† is applied during the next step's product with its reflector
 * (one pass over the trailing block a step instead of two): step k first brings column k up to date, finds its
 * reflector there, then takes each row of the trailing block, updates it and multiplies it by the new reflector.
 * The last update is applied at the end.
 */
function tridiagonalize(a: usize, n: i32, v: usize, p: usize, sub: usize, taus: usize, pending: usize): void {
  // this step's (v, p) and the last step's (vq, wq) swap buffers every step; from step 1 on, (vq, wq) holds an
  // update not yet applied
  let vq = pending, wq = pending + (<usize>n << 4), cv = v, cp = p;
  // MATVEC_PARTS × n complex: the column products of each part of a step; then 3n complex: each step's
  // (wq_i, vq_i, v_i) side by side
  const scatter = pending + (<usize>n << 5), triples = scatter + <usize>MATVEC_PARTS * (<usize>n << 4);
  for (let k = 0; k < n - 2; k++) {
    if (k > 0) lateUpdate(a, n, k, vq, wq, k, k + 1); // column k, rows k..
    reduceColumn(a, n, k, cv, cp, sub, taus, vq, wq, k > 0, scatter, triples);
    const tv = vq, tw = wq;
    vq = cv;
    wq = cp;
    cv = tv;
    cp = tw;
  }
  if (n > 2) lateUpdate(a, n, n - 2, vq, wq, n - 2, n); // the last step's update: the trailing 2×2 block
  if (n >= 2) {
    const q = at(a, n, n - 1, n - 2), o = sub + (<usize>(n - 2) << 4);
    store<f64>(o, re(q));
    store<f64>(o, im(q), 8);
  }
}

/** Columns j0…j1−1, rows k.., of A −= vq wq† + wq vq† (the update a step left for later). */
function lateUpdate(a: usize, n: i32, k: i32, vq: usize, wq: usize, j0: i32, j1: i32): void {
  for (let j = j0; j < j1; j++) {
    const vj = vq + (<usize>j << 4), wj = wq + (<usize>j << 4);
    for (let i = k; i < n; i++) {
      const vi = vq + (<usize>i << 4), wi = wq + (<usize>i << 4), q = at(a, n, i, j);
      // v_i·conj(w_j) + w_i·conj(v_j)
      const xr = re(vi) * re(wj) + im(vi) * im(wj) + re(wi) * re(vj) + im(wi) * im(vj);
      const xi = im(vi) * re(wj) - re(vi) * im(wj) + im(wi) * re(vj) - re(wi) * im(vj);
      store<f64>(q, re(q) - xr);
      store<f64>(q, im(q) - xi, 8);
    }
  }
}

/** Below this dimension the eigensolver works alone (a shared part would cost more than it saves). */
const EIGH_SHARE_FROM = 96;
/**
 * From this dimension the jobs with no step between their blocks (the back-transformation's groups, the two
 * ranges of the tridiagonal's eigenvectors) are shared: one job each, so worth a helper earlier (not lower: the
 * back-transformation's eight groups need 512n bytes of Z's first half, 8n²).
 */
const EIGH_JOBS_FROM = 64;
export const JOB_REFLECT_VECTORS = 2;
export const JOB_LOG_ROWS = 4;
export const JOB_MATVEC_ROWS = 5;
/** Parts of each reduction step's rows (claimed by either thread), each with its own column products. */
const MATVEC_PARTS = 4;

/**
 * Step k of the reduction: the reflector I − τvv† that zeroes column k below the subdiagonal, kept in A's column
 * k; with `late`, the last step's update (vq, wq) is applied to the trailing block on the way; this step's w is
 * left in p for the next.
 */
function reduceColumn(
  a: usize, n: i32, k: i32, v: usize, p: usize, sub: usize, taus: usize, vq: usize, wq: usize, late: bool,
  scatter: usize, triples: usize,
): void {
  let xnorm2 = 0.0;
  for (let i = k + 1; i < n; i++) {
    const q = at(a, n, i, k);
    xnorm2 += re(q) * re(q) + im(q) * im(q);
  }
  const x0 = at(a, n, k + 1, k);
  let tau = 0.0, alr = 0.0, ali = 0.0, ax0 = 0.0, xnorm = 0.0;
  if (xnorm2 == 0.0) {
    // no reflector: v = 0 (the pass below still applies the last update)
    memory.fill(v + (<usize>(k + 1) << 4), 0, <usize>(n - k - 1) << 4);
  } else {
    xnorm = Math.sqrt(xnorm2);
    ax0 = Math.hypot(re(x0), im(x0));
    const phr = ax0 > 0 ? re(x0) / ax0 : 1.0, phi = ax0 > 0 ? im(x0) / ax0 : 0.0;
    alr = -phr * xnorm;
    ali = -phi * xnorm;
    // v = x − α e1 over rows k+1..n−1 (stored at v[i])
    for (let i = k + 1; i < n; i++) {
      const q = at(a, n, i, k), o = v + (<usize>i << 4);
      store<f64>(o, re(q));
      store<f64>(o, im(q), 8);
    }
    const v0 = v + (<usize>(k + 1) << 4);
    store<f64>(v0, re(v0) - alr);
    store<f64>(v0, im(v0) - ali, 8);
    tau = 2.0 / (2.0 * xnorm * (xnorm + ax0));
  }
  // p = τ·A22·v (A22 brought up to date on the way): the row products in p, the column products in a scatter
  // buffer for each of MATVEC_PARTS parts of the step's rows (the same parts and order whichever thread takes
  // them: the sums never depend on the helper), added at the end; then β = (τ/2)·v†p. The rows go in pairs, a short
  // one and a long one (k+1+t and n−1−t: n−k entries of the triangle each), so that the parts are equal work; the
  // parts are small enough that a slower thread takes fewer of them.
  // (wq_i, vq_i, v_i) side by side, so that one index reaches the three in the pass below
  for (let i = k + 1; i < n; i++) {
    const o = <usize>i << 4, t = triples + <usize>i * 48;
    if (late) {
      v128.store(t, v128.load(wq + o));
      v128.store(t, v128.load(vq + o), 16);
    }
    v128.store(t, v128.load(v + o), 32);
  }
  const pairs = (n - k) >> 1, size = (pairs + MATVEC_PARTS - 1) / MATVEC_PARTS;
  if (sharing() && n - k - 1 >= EIGH_SHARE_FROM) {
    // (the argument slots only once a helper has joined: its instance may still write them before)
    setArg(0, <u64>a);
    setArg(1, <u64>n | (<u64>k << 32));
    setArg(2, <u64>triples);
    setArg(3, <u64>p);
    setArg(4, <u64>scatter);
    setArg(5, late ? 1 : 0);
    setArg(6, <u64>size);
    runShared(JOB_MATVEC_ROWS, 0, pairs, size, matvecRowsJob);
  } else {
    for (let t = 0; t < pairs; t += size) {
      matvecPairs(a, n, k, triples, p, late, t, min(t + size, pairs), scatter + <usize>(t / size) * (<usize>n << 4));
    }
  }
  // the parts' column products, in the parts' order (the sums never depend on which thread took which part)
  const used = (pairs + size - 1) / size, entries = <usize>(n - k - 1) << 4, from = <usize>(k + 1) << 4;
  for (let b = used; b < MATVEC_PARTS; b++) memory.fill(scatter + <usize>b * (<usize>n << 4) + from, 0, entries);
  let beta = 0.0;
  for (let i = k + 1; i < n; i++) {
    const o = p + (<usize>i << 4), vi = v + (<usize>i << 4), c = scatter + (<usize>i << 4), part = <usize>n << 4;
    let sr = re(o), si = im(o);
    for (let b = 0; b < MATVEC_PARTS; b++) {
      sr += re(c + <usize>b * part);
      si += im(c + <usize>b * part);
    }
    const pr = tau * sr, pi = tau * si;
    store<f64>(o, pr);
    store<f64>(o, pi, 8);
    beta += re(vi) * pr + im(vi) * pi;
  }
  beta *= 0.5 * tau;
  // w = p − β v (in p)
  for (let i = k + 1; i < n; i++) {
    const o = p + (<usize>i << 4), vi = v + (<usize>i << 4);
    store<f64>(o, re(o) - beta * re(vi));
    store<f64>(o, im(o) - beta * im(vi), 8);
  }
  store<f64>(sub + (<usize>k << 4), alr);
  store<f64>(sub + (<usize>k << 4), ali, 8);
  store<f64>(taus + (<usize>k << 3), tau);
  // the reflector's vector replaces column k below the diagonal (no later step reads it)
  for (let i = k + 1; i < n; i++) {
    const q = at(a, n, i, k), o = v + (<usize>i << 4);
    store<f64>(q, re(o));
    store<f64>(q, im(o), 8);
  }
}

/**
 * Rows i0…i1−1 of the trailing block's lower triangle (columns k+1…i): with `late`, A22 −= vq wq† + wq vq† first;
 * then the row products Σ_{j≤i} a_ij·v_j into p_i, and the column products conj(a_ij)·v_i (j < i) added to
 * scatter_j (A22 = A22†: together they make A22·v). triples: (wq_j, vq_j, v_j) at 48j.
 */
function matvecRows(
  a: usize, n: i32, k: i32, triples: usize, p: usize, late: bool, i0: i32, i1: i32, scatter: usize,
): void {
  const flip = f64x2(-1.0, 1.0);
  for (let i = i0; i < i1; i++) {
    // (A22·v)_i two lanes at a time: Σ a·vr + swap(a)·vi, then (re − im', im + re') from the two sums
    let accA = f64x2.splat(0), accB = f64x2.splat(0);
    // conj(a)·v_i = a⊙(vr, −vr) + swap(a)⊙(vi, vi)
    const own = triples + <usize>i * 48, x = own + 32;
    const s1 = f64x2(re(x), -re(x)), s2 = f64x2.splat(im(x));
    const row = at(a, n, i, 0), start = <usize>(k + 1) << 4, diagonal = row + (<usize>i << 4);
    let q = row + start, c = scatter + start, t = triples + <usize>(k + 1) * 48;
    if (late) {
      // vq_i·conj(wq_j) = (vr, −vr)⊙wq_j + (vi, vi)⊙swap(wq_j), and likewise wq_i·conj(vq_j)
      const vi = own + 16, wi = own;
      const c1 = f64x2(re(vi), -re(vi)), c2 = f64x2.splat(im(vi));
      const d1 = f64x2(re(wi), -re(wi)), d2 = f64x2.splat(im(wi));
      for (;; q += 16, c += 16, t += 48) {
        const wj = v128.load(t), vj = v128.load(t, 16);
        let m = v128.load(q);
        m = nmadd(c1, wj, m);
        m = nmadd(c2, v128.shuffle<f64>(wj, wj, 1, 0), m);
        m = nmadd(d1, vj, m);
        m = nmadd(d2, v128.shuffle<f64>(vj, vj, 1, 0), m);
        v128.store(q, m);
        const w = v128.shuffle<f64>(m, m, 1, 0);
        accA = madd(m, v128.load64_splat(t, 32), accA);
        accB = madd(w, v128.load64_splat(t, 40), accB);
        if (q == diagonal) break;
        v128.store(c, madd(w, s2, madd(m, s1, v128.load(c))));
      }
    } else {
      for (;; q += 16, c += 16, t += 48) {
        const m = v128.load(q), w = v128.shuffle<f64>(m, m, 1, 0);
        accA = madd(m, v128.load64_splat(t, 32), accA);
        accB = madd(w, v128.load64_splat(t, 40), accB);
        if (q == diagonal) break;
        v128.store(c, madd(w, s2, madd(m, s1, v128.load(c))));
      }
    }
    const sum = f64x2.add(accA, f64x2.mul(accB, flip));
    v128.store(p + (<usize>i << 4), sum);
  }
}

/**
 * Pairs t0…t1−1 of a reduction step (arguments as {@link reduceColumn} posts them): rows k+1+t and n−1−t, their
 * column products into their part's scatter buffer.
 */
export function matvecRowsJob(t0: i32, t1: i32): void {
  const nk = arg(1), n = <i32>(nk & 0xffffffff), part = <usize>(t0 / <i32>arg(6));
  matvecPairs(<usize>arg(0), n, <i32>(nk >> 32), <usize>arg(2), <usize>arg(3), arg(5) != 0, t0, t1,
    <usize>arg(4) + part * (<usize>n << 4));
}

/**
 * Pairs t0…t1−1 of a reduction step (see {@link matvecRowsJob}), their column products into `scatter`, which is
 * zeroed first (by the thread that takes the pairs: its lines then start in that thread's cache).
 */
function matvecPairs(
  a: usize, n: i32, k: i32, triples: usize, p: usize, late: bool, t0: i32, t1: i32, scatter: usize,
): void {
  memory.fill(scatter + (<usize>(k + 1) << 4), 0, <usize>(n - k - 1) << 4);
  for (let t = t0; t < t1; t++) {
    const short = k + 1 + t, long = n - 1 - t;
    matvecRows(a, n, k, triples, p, late, short, short + 1, scatter);
    if (long != short) matvecRows(a, n, k, triples, p, late, long, long + 1, scatter);
  }
}

// ---------------------------------------------------------------- back-transformation
// The eigenvectors of the tridiagonal, D·q_c, take the reflectors one after another (H_{n−3} first), four vectors
// at a time: the reflector's entries are read once for the four, which stay in cache across all reflectors.
// Eigenvectors are independent here, so the helper may take some of them with no step in between.
// see: Golub & Van Loan, Matrix Computations, §5.1.4 (applying Householder matrices), §8.3.1.

/** Entries of the packed reflectors before v_k's (v_j holds n−j−1 entries). */
@inline function reflectorStart(n: i32, k: i32): usize {
  return <usize>k * <usize>(n - 1) - ((<usize>k * <usize>(k - 1)) >> 1);
}

/** v_k (rows k+1… of A's column k), k = 0…n−3, one after another at `packed` (fewer than n²/2 complex). */
function packReflectors(a: usize, n: i32, packed: usize): void {
  for (let k = 0; k < n - 2; k++) {
    const to = packed + (reflectorStart(n, k) << 4);
    for (let i = k + 1; i < n; i++) v128.store(to + (<usize>(i - k - 1) << 4), v128.load(at(a, n, i, k)));
  }
}

/** Row c of Qᵀ (n f64 at the start of a) ← D·q_c (n complex, row c of a), in place: from the last entry back. */
function phaseRows(a: usize, n: i32, phase: usize): void {
  for (let c = n - 1; c >= 0; c--) {
    for (let i = n - 1; i >= 0; i--) {
      const e = <usize>c * <usize>n + <usize>i; // entry e's complex slot (16e) lies at or after its real one (8e)
      const q = f64x2.splat(load<f64>(a + (e << 3)));
      v128.store(a + (e << 4), f64x2.mul(q, v128.load(phase + (<usize>i << 4))));
    }
  }
}

/** dst (n×n complex) = srcᵀ, in tiles of 4 × 4 entries. */
function transposeInto(dst: usize, src: usize, n: i32): void {
  const stride = <usize>n << 4;
  for (let i0 = 0; i0 < n; i0 += 4) {
    const i1 = min(i0 + 4, n);
    for (let j0 = 0; j0 < n; j0 += 4) {
      const j1 = min(j0 + 4, n);
      for (let i = i0; i < i1; i++) {
        for (let j = j0; j < j1; j++) v128.store(dst + <usize>j * stride + (<usize>i << 4), v128.load(src + <usize>i * stride + (<usize>j << 4)));
      }
    }
  }
}

/**
 * Rows 0…n−1 of zt (n complex each) ← H_0⋯H_{n−3}·row, shared with the helper from {@link EIGH_JOBS_FROM} on;
 * scratch: room for eight groups of four rows (512n bytes; Z's first half, free until the end).
 */
function backTransform(zt: usize, n: i32, packed: usize, taus: usize, scratch: usize): void {
  if (sharing() && n >= EIGH_JOBS_FROM) {
    setArg(0, <u64>zt);
    setArg(1, <u64>n);
    setArg(2, <u64>packed);
    setArg(3, <u64>taus);
    setArg(4, <u64>scratch);
    runShared(JOB_REFLECT_VECTORS, 0, n, groupBlock(n), reflectVectorsJob);
    return;
  }
  reflectVectors(zt, n, packed, taus, 0, n, scratch);
}

/** The back-transformation's blocks of eigenvectors: eighths, a multiple of four (each block has its own group). */
@inline function groupBlock(n: i32): i32 {
  return blockSize(n, 8, 4);
}

/** Blocks of {@link backTransform}, each with its own group's room in the scratch (at most eight blocks). */
export function reflectVectorsJob(c0: i32, c1: i32): void {
  const n = <i32>arg(1), block = <usize>(c0 / groupBlock(n));
  reflectVectors(<usize>arg(0), n, <usize>arg(2), <usize>arg(3), c0, c1, <usize>arg(4) + block * (<usize>n << 6));
}

/**
 * Rows c0…c1−1 of zt ← H_0⋯H_{n−3}·row (H_k = I − τ_k v_k v_k†), four rows at a time, in `group` (64n bytes):
 * the four rows' entries side by side there (one index reaches all four), then back in their rows.
 */
function reflectVectors(zt: usize, n: i32, packed: usize, taus: usize, c0: i32, c1: i32, group: usize): void {
  const stride = <usize>n << 4;
  let c = c0;
  // (below 8 levels the group would not fit in Z's first half: one row at a time)
  for (; n >= 8 && c + 4 <= c1; c += 4) {
    const row = zt + <usize>c * stride;
    for (let i = 0; i < n; i++) {
      const o = <usize>i << 4, g = group + (<usize>i << 6);
      v128.store(g, v128.load(row + o));
      v128.store(g, v128.load(row + stride + o), 16);
      v128.store(g, v128.load(row + 2 * stride + o), 32);
      v128.store(g, v128.load(row + 3 * stride + o), 48);
    }
    reflectFour(group, n, packed, taus);
    for (let i = 0; i < n; i++) {
      const o = <usize>i << 4, g = group + (<usize>i << 6);
      v128.store(row + o, v128.load(g));
      v128.store(row + stride + o, v128.load(g, 16));
      v128.store(row + 2 * stride + o, v128.load(g, 32));
      v128.store(row + 3 * stride + o, v128.load(g, 48));
    }
  }
  for (; c < c1; c++) reflectOne(zt + <usize>c * stride, n, packed, taus);
}

/**
 * Four vectors (entry i of each side by side at group + 64i) ← H_k·vectors for k = n−3 down to 0: with w = v_k†z
 * (Σ conj(v)·z = a + (b_im, −b_re) with a = Σ vr·z, b = Σ vi·z) and u = τ_k·w, z −= v_k·u (v·u = vr·u +
 * vi·(−ui, ur)).
 */
function reflectFour(group: usize, n: i32, packed: usize, taus: usize): void {
  const flip = f64x2(1.0, -1.0), turn = f64x2(-1.0, 1.0);
  for (let k = n - 3; k >= 0; k--) {
    const tau = load<f64>(taus + (<usize>k << 3));
    if (tau == 0.0) continue;
    const v = packed + (reflectorStart(n, k) << 4), end = v + (<usize>(n - k - 1) << 4);
    const first = group + (<usize>(k + 1) << 6);
    let a0 = f64x2.splat(0), b0 = f64x2.splat(0), a1 = f64x2.splat(0), b1 = f64x2.splat(0);
    let a2 = f64x2.splat(0), b2 = f64x2.splat(0), a3 = f64x2.splat(0), b3 = f64x2.splat(0);
    for (let q = v, z = first; q < end; q += 16, z += 64) {
      const vr = v128.load64_splat(q), vi = v128.load64_splat(q, 8);
      const z0 = v128.load(z), z1 = v128.load(z, 16), z2 = v128.load(z, 32), z3 = v128.load(z, 48);
      a0 = madd(vr, z0, a0);
      b0 = madd(vi, z0, b0);
      a1 = madd(vr, z1, a1);
      b1 = madd(vi, z1, b1);
      a2 = madd(vr, z2, a2);
      b2 = madd(vi, z2, b2);
      a3 = madd(vr, z3, a3);
      b3 = madd(vi, z3, b3);
    }
    // w = a + (b_im, −b_re)
    const t = f64x2.splat(tau);
    const u0 = f64x2.mul(t, madd(v128.shuffle<f64>(b0, b0, 1, 0), flip, a0));
    const u1 = f64x2.mul(t, madd(v128.shuffle<f64>(b1, b1, 1, 0), flip, a1));
    const u2 = f64x2.mul(t, madd(v128.shuffle<f64>(b2, b2, 1, 0), flip, a2));
    const u3 = f64x2.mul(t, madd(v128.shuffle<f64>(b3, b3, 1, 0), flip, a3));
    const s0 = f64x2.mul(v128.shuffle<f64>(u0, u0, 1, 0), turn), s1 = f64x2.mul(v128.shuffle<f64>(u1, u1, 1, 0), turn);
    const s2 = f64x2.mul(v128.shuffle<f64>(u2, u2, 1, 0), turn), s3 = f64x2.mul(v128.shuffle<f64>(u3, u3, 1, 0), turn);
    for (let q = v, z = first; q < end; q += 16, z += 64) {
      const vr = v128.load64_splat(q), vi = v128.load64_splat(q, 8);
      v128.store(z, nmadd(vi, s0, nmadd(vr, u0, v128.load(z))));
      v128.store(z, nmadd(vi, s1, nmadd(vr, u1, v128.load(z, 16))), 16);
      v128.store(z, nmadd(vi, s2, nmadd(vr, u2, v128.load(z, 32))), 32);
      v128.store(z, nmadd(vi, s3, nmadd(vr, u3, v128.load(z, 48))), 48);
    }
  }
}

/** One row ← H_k·row for k = n−3 down to 0 (as {@link reflectFour}). */
function reflectOne(row: usize, n: i32, packed: usize, taus: usize): void {
  const flip = f64x2(1.0, -1.0), turn = f64x2(-1.0, 1.0);
  for (let k = n - 3; k >= 0; k--) {
    const tau = load<f64>(taus + (<usize>k << 3));
    if (tau == 0.0) continue;
    const v = packed + (reflectorStart(n, k) << 4), first = <usize>(k + 1) << 4, end = <usize>(n - k - 1) << 4;
    let a0 = f64x2.splat(0), b0 = f64x2.splat(0);
    for (let o: usize = 0; o < end; o += 16) {
      const z = v128.load(row + first + o);
      a0 = madd(v128.load64_splat(v + o), z, a0);
      b0 = madd(v128.load64_splat(v + o, 8), z, b0);
    }
    const u = f64x2.mul(f64x2.splat(tau), madd(v128.shuffle<f64>(b0, b0, 1, 0), flip, a0));
    const s = f64x2.mul(v128.shuffle<f64>(u, u, 1, 0), turn);
    for (let o: usize = 0; o < end; o += 16) {
      const q = row + first + o;
      v128.store(q, nmadd(v128.load64_splat(v + o, 8), s, nmadd(v128.load64_splat(v + o), u, v128.load(q))));
    }
  }
}

@inline function dget(x: usize, i: i32): f64 { return load<f64>(x + (<usize>i << 3)); }
@inline function dset(x: usize, i: i32, val: f64): void { store<f64>(x + (<usize>i << 3), val); }

// The QL sweeps' rotations are logged (each sweep: lo, m, then (c_i, s_i) for i = m−1 down to lo) and applied to
// Qᵀ when the log is full and at the end: a rotation combines rows i and i+1 of Qᵀ, and its columns are
// independent, so each strip of eight columns takes every logged sweep in turn while it sits in cache (each entry
// read and written once per sweep, the rotated value carried along, four independent lanes pairs), and the helper
// may take some of the strips.
// see: Golub & Van Loan, Matrix Computations, §5.1 (applying a sequence of Givens rotations).

/** Applies the first `used` f64 of the log to Qᵀ (n×n, row-major). */
function applyLog(qt: usize, n: i32, log: usize, used: i32): void {
  if (used == 0) return;
  if (sharing() && n >= EIGH_SHARE_FROM) {
    setArg(0, <u64>qt);
    setArg(1, <u64>n);
    setArg(2, <u64>log);
    setArg(3, <u64>used);
    runShared(JOB_LOG_ROWS, 0, n, blockSize(n, 2, 8), logRowsJob); // blocks of whole strips of eight columns
    return;
  }
  logRows(qt, n, log, used, 0, n);
}

/** Blocks of {@link applyLog}. */
export function logRowsJob(j0: i32, j1: i32): void {
  logRows(<usize>arg(0), <i32>arg(1), <usize>arg(2), <i32>arg(3), j0, j1);
}

/** Columns j0…j1−1 of Qᵀ (rows of Q) take the logged rotations. */
function logRows(qt: usize, n: i32, log: usize, used: i32, j0: i32, j1: i32): void {
  const stride = <usize>n << 3;
  let j = j0;
  for (; j + 8 <= j1; j += 8) {
    const base = qt + (<usize>j << 3);
    for (let at = 0; at < used;) {
      const lo = <i32>dget(log, at), m = <i32>dget(log, at + 1);
      let cs = log + (<usize>(at + 2) << 3);
      const top = base + <usize>m * stride;
      let y0 = v128.load(top), y1 = v128.load(top, 16), y2 = v128.load(top, 32), y3 = v128.load(top, 48);
      for (let i = m - 1; i >= lo; i--) {
        const c = v128.load64_splat(cs), s = v128.load64_splat(cs, 8);
        cs += 16;
        const xp = base + <usize>i * stride, up = xp + stride;
        const x0 = v128.load(xp), x1 = v128.load(xp, 16), x2 = v128.load(xp, 32), x3 = v128.load(xp, 48);
        v128.store(up, madd(s, x0, f64x2.mul(c, y0)));
        v128.store(up, madd(s, x1, f64x2.mul(c, y1)), 16);
        v128.store(up, madd(s, x2, f64x2.mul(c, y2)), 32);
        v128.store(up, madd(s, x3, f64x2.mul(c, y3)), 48);
        y0 = nmadd(s, y0, f64x2.mul(c, x0));
        y1 = nmadd(s, y1, f64x2.mul(c, x1));
        y2 = nmadd(s, y2, f64x2.mul(c, x2));
        y3 = nmadd(s, y3, f64x2.mul(c, x3));
      }
      const bottom = base + <usize>lo * stride;
      v128.store(bottom, y0);
      v128.store(bottom, y1, 16);
      v128.store(bottom, y2, 32);
      v128.store(bottom, y3, 48);
      at += 2 + 2 * (m - lo);
    }
  }
  for (; j < j1; j++) {
    const base = qt + (<usize>j << 3);
    for (let at = 0; at < used;) {
      const lo = <i32>dget(log, at), m = <i32>dget(log, at + 1);
      let cs = log + (<usize>(at + 2) << 3);
      let y = load<f64>(base + <usize>m * stride);
      for (let i = m - 1; i >= lo; i--) {
        const c = load<f64>(cs), s = load<f64>(cs, 8), xp = base + <usize>i * stride, x = load<f64>(xp);
        cs += 16;
        store<f64>(xp + stride, s * x + c * y);
        y = c * x - s * y;
      }
      store<f64>(base + <usize>lo * stride, y);
      at += 2 + 2 * (m - lo);
    }
  }
}

/**
 * √(x² + y²): directly where neither square can overflow or lose the result to underflow (within an ulp or two of
 * Math.hypot, several times faster), else Math.hypot's scaled form.
 */
@inline function radius(x: f64, y: f64): f64 {
  const big = max(Math.abs(x), Math.abs(y));
  return big < 1e150 && big > 1e-150 ? Math.sqrt(x * x + y * y) : Math.hypot(x, y);
}

// Implicit QL with Wilkinson-type shifts on the real symmetric tridiagonal
// (d, e), e[i] coupling i and i+1; each sweep's rotations go to the log (room for `capacity` f64), applied to Q
// when it is full and at the end. With q = 0, eigenvalues only (no log, no Q).
function tql(d: usize, e: usize, n: i32, q: usize, log: usize, capacity: i32): i32 {
  let used = 0;
  // A coupling is negligible against its two diagonal entries, or against the tridiagonal's scale max |d_i| + |e_i|
  // (a change of ε‖T‖, within the solver's backward error): without the second test, a cluster of eigenvalues
  // near zero (an operator with a large kernel) keeps rounding-level couplings that never pass the first.
  let scale = 0.0;
  for (let i = 0; i < n; i++) scale = max(scale, Math.abs(dget(d, i)) + Math.abs(dget(e, i)));
  for (let l = 0; l < n; l++) {
    let iter = 0;
    let m = l;
    do {
      for (m = l; m < n - 1; m++) {
        const dd = Math.abs(dget(d, m)) + Math.abs(dget(d, m + 1)), em = Math.abs(dget(e, m));
        if (em <= f64.EPSILON * dd || em <= 0.5 * f64.EPSILON * scale) break;
      }
      if (m != l) {
        if (iter++ == 60) return 1;
        let g = (dget(d, l + 1) - dget(d, l)) / (2.0 * dget(e, l));
        let r = radius(g, 1.0);
        g = dget(d, m) - dget(d, l) + dget(e, l) / (g + (g >= 0 ? Math.abs(r) : -Math.abs(r)));
        let s = 1.0, c = 1.0, p = 0.0;
        if (q != 0 && used + 2 + 2 * (m - l) > capacity) {
          applyLog(q, n, log, used);
          used = 0;
        }
        let pair = log + (<usize>(used + 2) << 3);
        let i = m - 1;
        for (; i >= l; i--) {
          const f = s * dget(e, i), b = c * dget(e, i);
          r = radius(f, g);
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
          if (q != 0) {
            store<f64>(pair, c);
            store<f64>(pair, s, 8);
            pair += 16;
          }
        }
        // the rotations i+1 … m−1 this sweep made
        if (q != 0) {
          dset(log, used, <f64>(i + 1));
          dset(log, used + 1, <f64>m);
        }
        used += 2 + 2 * (m - i - 1);
        if (r == 0.0 && i >= l) continue;
        dset(d, l, dget(d, l) - p);
        dset(e, l, g);
        dset(e, m, 0.0);
      }
    } while (m != l);
  }
  if (q != 0) applyLog(q, n, log, used);
  return 0;
}

// Eigenvalues ascending, the columns of Q (rows of Qᵀ) with them.
function sortAscending(w: usize, qt: usize, n: i32): void {
  const stride = <usize>n << 3;
  for (let i = 0; i < n - 1; i++) {
    let k = i;
    for (let j = i + 1; j < n; j++) if (dget(w, j) < dget(w, k)) k = j;
    if (k != i) {
      const t = dget(w, i);
      dset(w, i, dget(w, k));
      dset(w, k, t);
      const a = qt + <usize>i * stride, b = qt + <usize>k * stride;
      for (let c: usize = 0; c < stride; c += 8) {
        const x = load<f64>(a + c);
        store<f64>(a + c, load<f64>(b + c));
        store<f64>(b + c, x);
      }
    }
  }
}

// ---------------------------------------------------------------- the tridiagonal's eigenvectors by inverse iteration
// The eigenvalues of each unreduced block come from QL without rotations (O(m²)); each eigenvector from a few
// steps of inverse iteration with T − λI factored once (O(m) a step), orthogonalized against the vectors before
// it in its cluster (eigenvalues closer than 10⁻³‖T‖ in a chain). The result is then checked, not assumed: every
// residual ‖(T − λ)q‖ must be small, vectors of one cluster orthogonal (their dot products), and vectors of
// different clusters too, from the exact identity (λ_k − λ_i)·q_i·q_k = q_i·r_k − r_i·q_k, which bounds
// |q_i·q_k| by (‖r_i‖ + ‖r_k‖)/|λ_k − λ_i| (a dot product is taken where that bound is not enough, and always
// for pairs closer than the cluster tolerance). When a check fails, the caller falls back to the QL rotations.
// see: Golub & Van Loan, Matrix Computations, §8.2.2 (inverse iteration) and §4.3 (tridiagonal LU with pivoting);
// the perturbation of close eigenvalues, the cluster tolerance and the stopping test follow LAPACK's dstein.

/** From this dimension the tridiagonal's eigenvectors come from inverse iteration (below: the QL rotations). */
const INVERSE_FROM = 24;
/** Whether the last eigh took its tridiagonal's eigenvectors from inverse iteration (false: QL rotations). */
let inverseUsed = false;
export function lastEighByInverseIteration(): bool { return inverseUsed; }
const MAX_STEPS = 5; // inverse iteration steps before giving up on a vector
let extraSteps = 1; // steps after the growth test first passes (the checks vouch for the vectors)
/** Steps inverse iteration takes after its growth test passes (default 1; 0 lets the checks reject, for tests). */
export function setInverseIterationExtraSteps(k: i32): void { extraSteps = k; }

/**
 * Eigenvalues (into w, unsorted across blocks) and eigenvectors (rows of qt, n×n, each nonzero on its block only)
 * of the real symmetric tridiagonal (w = diagonal, e = subdiagonal). scratch: at least 15n + 16 f64. Returns false,
 * with w and e as they were, when the QL iteration does not converge or a check fails.
 */
function inverseIteration(w: usize, e: usize, n: i32, qt: usize, scratch: usize): bool {
  const nb = <usize>n << 3;
  // own: the caller's six arrays for inverse iteration; second: the helper's share's scratch and the parameters
  const dd = scratch, ee = dd + nb, own = ee + nb, res = own + 6 * nb, second = res + nb;
  memory.copy(dd, w, nb);
  memory.copy(ee, e, nb);
  memory.fill(qt, 0, <usize>n * nb);
  let scale = 0.0;
  for (let i = 0; i < n; i++) scale = max(scale, Math.abs(dget(dd, i)) + Math.abs(dget(ee, i)));
  let ok = true;
  for (let b = 0; b < n && ok;) {
    // the unreduced block b…c: split where tql would (a negligible coupling)
    let c = b;
    for (; c < n - 1; c++) {
      const em = Math.abs(dget(ee, c)), sum = Math.abs(dget(dd, c)) + Math.abs(dget(dd, c + 1));
      if (em <= f64.EPSILON * sum || em <= 0.5 * f64.EPSILON * scale) break;
    }
    const m = c - b + 1;
    if (m == 1) {
      store<f64>(qt + <usize>b * nb + (<usize>b << 3), 1.0);
    } else {
      dset(e, c, 0.0);
      const wb = w + (<usize>b << 3);
      ok = tql(wb, e + (<usize>b << 3), m, 0, 0, 0) == 0;
      if (ok) {
        for (let i = 1; i < m; i++) {
          const v = dget(wb, i);
          let j = i - 1;
          for (; j >= 0 && dget(wb, j) > v; j--) dset(wb, j + 1, dget(wb, j));
          dset(wb, j + 1, v);
        }
        ok = blockVectors(dd + (<usize>b << 3), ee + (<usize>b << 3), wb, m, qt + <usize>b * nb + (<usize>b << 3), nb,
          own, res, second);
      }
    }
    b = c + 1;
  }
  if (!ok) {
    memory.copy(w, dd, nb);
    memory.copy(e, ee, nb);
  }
  return ok;
}

/**
 * The eigenvectors of one unreduced block (diagonal d, coupling f, m entries; eigenvalues lam ascending) into the
 * rows of q (row stride qs bytes, the block's first column at q), then their checks. Scratch: six arrays of m f64
 * from `own` (one after another), res (m f64), and `second` (6m + 16 f64: the helper's share).
 *
 * Vectors of different clusters are independent: from {@link EIGH_JOBS_FROM} entries the vectors are split at the
 * cluster boundary nearest the middle, the two ranges taken by either thread, the second range's random starts
 * the draws one range would have made there (so the vectors do not depend on the split or on the helper).
 */
// The block's parameters for vectorRange, in 8-byte slots after the helper's scratch (either thread reads them).
const V_D = 0; // the block's diagonal, coupling, eigenvalues, size, first row of Qᵀ and its row stride
const V_F = 1;
const V_LAM = 2;
const V_M = 3;
const V_Q = 4;
const V_QS = 5;
const V_ONENRM = 6; // (f64)
const V_EXTRA = 7; // steps after the growth test
const V_OWN = 8; // each range's scratch
const V_SECOND = 9;
const V_SPLIT = 10;
const V_OK = 11; // each range's result (1: vouched for), two slots
@inline function vset(p: usize, k: i32, x: u64): void { store<u64>(p + (<usize>k << 3), x); }
@inline function vget(p: usize, k: i32): u64 { return load<u64>(p + (<usize>k << 3)); }

function blockVectors(
  d: usize, f: usize, lam: usize, m: i32, q: usize, qs: usize, own: usize, res: usize, second: usize,
): bool {
  let onenrm = 0.0;
  for (let i = 0; i < m; i++) {
    const left = i > 0 ? Math.abs(dget(f, i - 1)) : 0.0, right = i < m - 1 ? Math.abs(dget(f, i)) : 0.0;
    onenrm = max(onenrm, Math.abs(dget(d, i)) + left + right);
  }
  const ortol = 1e-3 * onenrm;
  const params = second + (<usize>(6 * m) << 3);
  vset(params, V_D, <u64>d);
  vset(params, V_F, <u64>f);
  vset(params, V_LAM, <u64>lam);
  vset(params, V_M, <u64>m);
  vset(params, V_Q, <u64>q);
  vset(params, V_QS, <u64>qs);
  store<f64>(params + (V_ONENRM << 3), onenrm);
  vset(params, V_EXTRA, <u64>extraSteps);
  vset(params, V_OWN, <u64>own);
  vset(params, V_SECOND, <u64>second);
  // the split: a cluster boundary (a gap above ortol) near the middle, none below EIGH_JOBS_FROM entries
  let split = 0;
  if (sharing() && m >= EIGH_JOBS_FROM) {
    for (let t = 0; t < m / 4 && split == 0; t++) {
      const up = m / 2 + t, down = m / 2 - t;
      if (dget(lam, up) - dget(lam, up - 1) > ortol) split = up;
      else if (dget(lam, down) - dget(lam, down - 1) > ortol) split = down;
    }
  }
  if (split == 0) {
    if (!vectorRange(params, 0, m, own)) return false;
  } else {
    vset(params, V_SPLIT, <u64>split);
    setArg(0, <u64>params);
    runShared(JOB_INVERSE_VECTORS, 0, 2, 1, inverseVectorsJob);
    if (vget(params, V_OK) != 1 || vget(params, V_OK + 1) != 1) return false;
  }
  return checkBlock(d, f, lam, m, q, qs, onenrm, ortol, res);
}

export const JOB_INVERSE_VECTORS = 9;

/** Range 0 (vectors 0…split−1) or 1 (split…m−1) of {@link blockVectors}, each with its own scratch. */
export function inverseVectorsJob(r0: i32, r1: i32): void {
  const params = <usize>arg(0), m = <i32>vget(params, V_M), split = <i32>vget(params, V_SPLIT);
  const ok = r0 == 0
    ? vectorRange(params, 0, split, <usize>vget(params, V_OWN))
    : vectorRange(params, split, m, <usize>vget(params, V_SECOND));
  vset(params, V_OK + r0, ok ? 1 : 0);
}

/** The random starts' generator: one xorshift step (13, 7, 17). */
@inline function nextDraw(seed: u64): u64 {
  seed ^= seed << 13;
  seed ^= seed >> 7;
  return seed ^ (seed << 17);
}

/**
 * Vectors j0…j1−1 of one block by inverse iteration (the block's parameters at `params`, as {@link blockVectors}
 * stores them; j0 a cluster's first vector), with six arrays of m f64 scratch from `scratch`.
 */
function vectorRange(params: usize, j0: i32, j1: i32, scratch: usize): bool {
  const d = <usize>vget(params, V_D), f = <usize>vget(params, V_F), lam = <usize>vget(params, V_LAM);
  const m = <i32>vget(params, V_M), q = <usize>vget(params, V_Q), qs = <usize>vget(params, V_QS);
  const onenrm = load<f64>(params + (V_ONENRM << 3)), extra = <i32>vget(params, V_EXTRA);
  const mb = <usize>m << 3;
  const dl = scratch, dg = dl + mb, du = dg + mb, du2 = du + mb, piv = du2 + mb, x = piv + mb;
  const eps = f64.EPSILON;
  const ortol = 1e-3 * onenrm, growth = Math.sqrt(0.1 / <f64>m), tiny = eps * onenrm;
  let first = j0; // the current cluster's first vector
  let shift = 0.0;
  // the random starts: m draws a vector, from the same seed whatever the range
  let seed: u64 = 0x9e3779b97f4a7c15;
  for (let k = 0; k < j0 * m; k++) seed = nextDraw(seed);
  for (let j = j0; j < j1; j++) {
    let xj = dget(lam, j);
    if (j > j0) {
      if (xj - dget(lam, j - 1) > ortol) first = j;
      // an eigenvalue too close to the last one is moved off it, so that the two factorizations differ
      const pertol = 10.0 * Math.abs(eps * xj);
      if (xj - shift < pertol) xj = shift + pertol;
    }
    shift = xj;
    // T − xj·I = P·L·U (U with two superdiagonals), pivots below `tiny` raised to it
    for (let i = 0; i < m; i++) {
      dset(dg, i, dget(d, i) - xj);
      if (i < m - 1) {
        dset(dl, i, dget(f, i));
        dset(du, i, dget(f, i));
      }
      dset(du2, i, 0.0);
      dset(piv, i, 0.0);
    }
    for (let i = 0; i < m - 1; i++) {
      const a = dget(dg, i), l = dget(dl, i);
      if (Math.abs(a) >= Math.abs(l)) {
        const fact = a != 0.0 ? l / a : 0.0;
        dset(dl, i, fact);
        dset(dg, i + 1, dget(dg, i + 1) - fact * dget(du, i));
      } else {
        const fact = a / l;
        dset(dg, i, l);
        dset(dl, i, fact);
        const t = dget(du, i);
        dset(du, i, dget(dg, i + 1));
        dset(dg, i + 1, t - fact * dget(dg, i + 1));
        if (i < m - 2) {
          dset(du2, i, dget(du, i + 1));
          dset(du, i + 1, -fact * dget(du, i + 1));
        }
        dset(piv, i, 1.0);
      }
    }
    const last = max(eps, Math.abs(dget(dg, m - 1)));
    // the pivots' reciprocals (the solves multiply)
    for (let i = 0; i < m; i++) {
      const a = dget(dg, i);
      dset(dg, i, 1.0 / (Math.abs(a) < tiny ? (a < 0 ? -tiny : tiny) : a));
    }
    // a pseudo-random start in (−1, 1)
    for (let i = 0; i < m; i++) {
      seed = nextDraw(seed);
      dset(x, i, <f64>(seed >> 11) * (2.0 / 9007199254740992.0) - 1.0);
    }
    let checks = 0, converged = false;
    for (let step = 0; step < MAX_STEPS + extra && !converged; step++) {
      // the right-hand side scaled to m·‖T‖·max(ε, |u_mm|) in the 1-norm: the solution's size then tells convergence
      let sum = 0.0;
      for (let i = 0; i < m; i++) sum += Math.abs(dget(x, i));
      if (!(sum > 0.0) || !isFinite(sum)) return false;
      const scl = <f64>m * onenrm * last / sum;
      for (let i = 0; i < m; i++) dset(x, i, dget(x, i) * scl);
      // forward: L with the row interchanges; back: U
      for (let i = 0; i < m - 1; i++) {
        if (dget(piv, i) != 0.0) {
          const t = dget(x, i);
          dset(x, i, dget(x, i + 1));
          dset(x, i + 1, t - dget(dl, i) * dget(x, i));
        } else {
          dset(x, i + 1, dget(x, i + 1) - dget(dl, i) * dget(x, i));
        }
      }
      let x1 = dget(x, m - 1) * dget(dg, m - 1);
      let x0 = (dget(x, m - 2) - dget(du, m - 2) * x1) * dget(dg, m - 2);
      dset(x, m - 1, x1);
      dset(x, m - 2, x0);
      for (let i = m - 3; i >= 0; i--) {
        const xi = (dget(x, i) - dget(du, i) * x0 - dget(du2, i) * x1) * dget(dg, i);
        dset(x, i, xi);
        x1 = x0;
        x0 = xi;
      }
      // against the cluster's earlier vectors (modified Gram–Schmidt)
      for (let k = first; k < j; k++) {
        const row = q + <usize>k * qs;
        let dot = 0.0;
        for (let i = 0; i < m; i++) dot += dget(row, i) * dget(x, i);
        for (let i = 0; i < m; i++) dset(x, i, dget(x, i) - dot * dget(row, i));
      }
      let big = 0.0;
      for (let i = 0; i < m; i++) big = max(big, Math.abs(dget(x, i)));
      if (!isFinite(big)) return false;
      if (big >= growth && ++checks > extra) converged = true;
    }
    if (!converged) return false;
    // unit length, the largest entry positive
    let norm2 = 0.0, big = 0.0, at = 0;
    for (let i = 0; i < m; i++) {
      const v = dget(x, i);
      norm2 += v * v;
      if (Math.abs(v) > big) {
        big = Math.abs(v);
        at = i;
      }
    }
    let scl = 1.0 / Math.sqrt(norm2);
    if (dget(x, at) < 0) scl = -scl;
    const row = q + <usize>j * qs;
    for (let i = 0; i < m; i++) dset(row, i, dget(x, i) * scl);
  }
  return true;
}

/**
 * The checks of one block's vectors (see above): residuals ‖(T − λ_j)q_j‖₂ (plus a rounding allowance) at most
 * 8m·ε‖T‖, and |q_i·q_k| at most 8m·ε for every pair, from the bound or from the dot product itself.
 */
function checkBlock(
  d: usize, f: usize, lam: usize, m: i32, q: usize, qs: usize, onenrm: f64, ortol: f64, res: usize,
): bool {
  const eps = f64.EPSILON, resTol = 8.0 * <f64>m * eps * onenrm, orthTol = 8.0 * <f64>m * eps;
  for (let j = 0; j < m; j++) {
    const row = q + <usize>j * qs, l = dget(lam, j);
    let sum = 0.0;
    for (let i = 0; i < m; i++) {
      let t = (dget(d, i) - l) * dget(row, i);
      if (i > 0) t += dget(f, i - 1) * dget(row, i - 1);
      if (i < m - 1) t += dget(f, i) * dget(row, i + 1);
      sum += t * t;
    }
    const r = Math.sqrt(sum) + 4.0 * eps * onenrm;
    if (!(r <= resTol)) return false;
    dset(res, j, r);
  }
  for (let i = 0; i < m; i++) {
    for (let k = i + 1; k < m; k++) {
      const gap = dget(lam, k) - dget(lam, i);
      // a close pair (gap ≤ ortol) is always checked by its dot product
      if (gap > ortol && (dget(res, i) + dget(res, k)) <= orthTol * gap) continue;
      const a = q + <usize>i * qs, b = q + <usize>k * qs;
      let dot = 0.0;
      for (let t = 0; t < m; t++) dot += dget(a, t) * dget(b, t);
      if (!(Math.abs(dot) <= orthTol)) return false;
    }
  }
  return true;
}
