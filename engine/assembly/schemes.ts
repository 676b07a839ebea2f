// Drivers: time stepping for the three schemes, the order-resolved block
// exponential, and recording. Data stays in linear memory; TypeScript fills
// the operator and coefficient buffers and reads the record buffer.
//
// Stacked state: the Dyson terms ψ0…ψN (or their interaction-picture
// coefficients) as r = N+1 complex d-vectors one after another. The block
// generator A = I⊗D + S⊗B acts as (AΨ)_n = D·Ψ_n + B·Ψ_{n−1}; truncated at
// order N, exp(−ihA) gives order by order the λ-expansion of exp(−ih(D+λB)).
// see: Van Loan, IEEE TAC 23 (1978).

import { arenaAlloc, arenaReset } from "./arena";
import {
  packedRows,
  packedScratchBytes,
  packRows,
  setKernelScratch,
  zcsrmv,
  zgemv,
  zgemvRate,
  zgemvUpTo,
} from "./kernels";
import { eigh, EIGH_WORK_BYTES_PER_LEVEL } from "./eigh";
import { phaseRow } from "./trig";
import { arg, argF, blockDone, claim, post, runShared, setArg, setArgF, sharing, waitAll } from "./share";

// 4th-order commutator-free exponential integrator (two exponentials).
// see: Blanes & Moan, Appl. Numer. Math. 56 (2006); Alvermann & Fehske, J. Comput. Phys. 230 (2011).
const SQ3: f64 = 1.7320508075688772;
const C1: f64 = 0.5 - SQ3 / 6.0;
const C2: f64 = 0.5 + SQ3 / 6.0;
const A1: f64 = 0.25 + SQ3 / 6.0;
const A2: f64 = 0.25 - SQ3 / 6.0;

// Taylor truncation: sub-steps keep ‖hA‖ ≤ THETA; terms until two in a row are below `tiny` relative: TINY
// (round-off) by default; an accuracy-driven run may loosen it to a small share of its error per step
// (see: Al-Mohy & Higham, SIAM J. Sci. Comput. 33 (2011): the degree chosen from the tolerance).
const THETA: f64 = 2.0;
const TINY: f64 = 1e-18;
let tiny: f64 = TINY;

/** The relative size of the last Taylor term kept (TINY for round-off; larger only for a looser accuracy). */
export function setTaylorTolerance(t: f64): void {
  tiny = max(TINY, t);
}
const MAX_TERMS: i32 = 60;

const MODE_NONE: i32 = 0;
const MODE_DENSE: i32 = 1;
const MODE_DIAG: i32 = 2;
// The generator is a combination of the sparse terms, with the coefficients at `sparseCoefs` (see applySparse).
const MODE_SPARSE: i32 = 3;

/** Schemes (match engine/mod.ts). */
export const SCHEME_TIME_INDEPENDENT: i32 = 0;
export const SCHEME_INTERACTION: i32 = 1;
export const SCHEME_TD_H0: i32 = 2;
/** Sparse operators (CSR): the Schrödinger picture, every product a sparse one; no d×d matrix anywhere. */
export const SCHEME_SPARSE: i32 = 3;
/**
 * Sparse operators with a constant H0 (its diagonal written by TypeScript as the energies): the interaction
 * picture of that diagonal keeps V's pattern (H0's off-diagonal part, if any, joins the rate), and the
 * accuracy-driven Runge–Kutta steps take sparse products only.
 */
export const SCHEME_SPARSE_INTERACTION: i32 = 4;

/** Error codes (turned into messages by engine/mod.ts). */
export const ERR_OK: i32 = 0;
export const ERR_MEMORY: i32 = 1;
export const ERR_EIGEN: i32 = 2;
export const ERR_TAYLOR: i32 = 3;
export const ERR_SUBSTEPS: i32 = 4;
/** Sub-steps one exponential may take: more means ‖h·A‖ is absurd (or not finite) for this step. */
const MAX_SUBSTEPS: f64 = 1e6;

let d: i32 = 0;
// Columns: the stacked state holds m independent initial states side by side (a "vector" is then m consecutive
// d-vectors, dm = d·m entries), all propagated by the same products (propagator columns in one run).
let m: i32 = 1;
let dm: i32 = 0;
let r: i32 = 0;
let k0: i32 = 0;
let kv: i32 = 0;
let chunk: i32 = 0;
let scheme: i32 = 0;
let lambda: f64 = 1.0;
let mat: usize = 0; // bytes per d×d matrix
let vec: usize = 0; // bytes per d-vector

let h0Terms: usize = 0;
let vTerms: usize = 0;
let energies: usize = 0;
let basis: usize = 0;
let basisH: usize = 0;
let energies2: usize = 0;
let basis2: usize = 0;
let m1: usize = 0;
let m2: usize = 0;
let x1: usize = 0;
let x2: usize = 0;
let y: usize = 0;
let x0a: usize = 0;
let x0b: usize = 0;
let series: usize = 0;
let exact: usize = 0;
let check: usize = 0;
let amp2: usize = 0;
let t1: usize = 0;
let t2: usize = 0;
let ph1: usize = 0;
let ph2: usize = 0;
let rec: usize = 0;
let tmp: usize = 0;
let coefFine: usize = 0;
let coefCoarse: usize = 0;
let initial: usize = 0;
let work: usize = 0;
// Adaptive stepping: the start of a macro step (to restore on rejection), the 2h companion, and the
// estimated error vector of the exact state, kept right after it (exact, err contiguous).
let adaptive = false;
// Sparse runs: per term (H0 terms, then V terms) 6 words in csrTable: rowStart, column, values, nnz, ∞-norm
// (f64) and trace (re; the trace's imaginary part of a Hermitian combination cancels); the coefficients of the
// current generator per term (complex) at sparseCoefs, and whether it is the exact state's (D + λV, no B).
let sparse = false;
let csrTable: usize = 0;
let sparseCoefs: usize = 0;
let sparseExact = false;
// Sparse interaction picture: H0 has entries off its diagonal (carried in the rate as H0 − E).
let h0OffDiagonal = false;
let save: usize = 0;
let comp: usize = 0;
let errv: usize = 0;

/**
 * Allocate every buffer for a run: dimension dim, Dyson order order, nH0 and
 * nV operator terms, coefficient chunks of chunkSteps steps. Returns an error code.
 */
export function init(dim: i32, order: i32, nH0: i32, nV: i32, chunkSteps: i32, columns: i32, sparseTerms: i32): i32 {
  arenaReset();
  sparse = sparseTerms != 0;
  d = dim;
  m = max(columns, 1);
  dm = d * m;
  r = order + 1;
  k0 = nH0;
  kv = nV;
  chunk = chunkSteps;
  // a sparse run holds no d×d matrix: the dense buffers shrink to a placeholder it never touches
  mat = sparse ? 16 : <usize>d * d << 4;
  vec = <usize>dm << 4;
  const kt = <usize>(k0 + kv);
  h0Terms = arenaAlloc(<usize>max(k0, 1) * mat);
  vTerms = arenaAlloc(<usize>max(kv, 1) * mat);
  energies = arenaAlloc(<usize>d << 3);
  energies2 = arenaAlloc(<usize>d << 3);
  basis = arenaAlloc(mat);
  basisH = arenaAlloc(mat);
  basis2 = arenaAlloc(mat);
  m1 = arenaAlloc(mat);
  m2 = arenaAlloc(mat);
  x1 = arenaAlloc(mat);
  x2 = arenaAlloc(mat);
  y = arenaAlloc(mat);
  x0a = arenaAlloc(mat);
  x0b = arenaAlloc(mat);
  // series, exact state and its error vector contiguous: the Runge–Kutta path treats them as one stacked state
  series = arenaAlloc(<usize>(r + 2) * vec);
  exact = series + <usize>r * vec;
  errv = exact + vec;
  check = arenaAlloc(vec);
  amp2 = arenaAlloc(vec);
  t1 = arenaAlloc(<usize>max(r, 2) * vec);
  t2 = arenaAlloc(<usize>max(r, 2) * vec);
  ph1 = arenaAlloc(vec);
  ph2 = arenaAlloc(vec);
  rec = arenaAlloc(<usize>(r + 2) * vec);
  tmp = arenaAlloc(<usize>(r + 2) * vec);
  coefFine = arenaAlloc(<usize>chunk * 2 * max(<i32>kt, 1) << 4);
  coefCoarse = arenaAlloc(<usize>chunk * max(<i32>kt, 1) << 4);
  initial = arenaAlloc(vec);
  save = arenaAlloc(<usize>(r + 2) * vec);
  comp = arenaAlloc(<usize>(r + 1) * vec);
  work = arenaAlloc(<usize>d * <usize>EIGH_WORK_BYTES_PER_LEVEL);
  rkStage = arenaAlloc(<usize>RK_STAGES * <usize>(r + 1) * vec);
  rkZ = arenaAlloc(<usize>(r + 1) * vec);
  rkU = arenaAlloc(<usize>(r + 1) * vec);
  rkP = arenaAlloc(<usize>(r + 1) * vec);
  rkE5 = arenaAlloc(<usize>(r + 1) * vec);
  rkE3 = arenaAlloc(<usize>(r + 1) * vec);
  rkPh = arenaAlloc(<usize>RK_STAGES * (<usize>d << 4));
  // the two halves of the series' stages (splitOrders): their packed values, the parameters
  rkXa = arenaAlloc(packedScratchBytes(d, r * m));
  rkXb = arenaAlloc(packedScratchBytes(d, r * m));
  rkJob = arenaAlloc(<usize>ORDERS_WORDS << 3);
  startRateValid = false;
  csrTable = arenaAlloc(<usize>max(<i32>kt, 1) * 48);
  sparseCoefs = arenaAlloc(<usize>max(<i32>kt, 1) << 4);
  // the packed kernel's scratch: the stacked state at once (wider products go in slices of it)
  const scratchBytes = packedScratchBytes(d, max(16, (r + 2) * m));
  const kernelScratch = arenaAlloc(scratchBytes);
  setKernelScratch(kernelScratch, kernelScratch == 0 ? 0 : scratchBytes);
  adaptive = false;
  tiny = TINY;
  return coefCoarse == 0 || work == 0 || rkE3 == 0 || rkPh == 0 || rkJob == 0 ? ERR_MEMORY : ERR_OK;
}

/** Buffer addresses for TypeScript. */
export function bufH0Terms(): usize { return h0Terms; }
export function bufVTerms(): usize { return vTerms; }
export function bufInitial(): usize { return initial; }
export function bufCoefFine(): usize { return coefFine; }
export function bufCoefCoarse(): usize { return coefCoarse; }
export function bufRecord(): usize { return rec; }
export function bufEnergies(): usize { return energies; }
export function bufBasis(): usize { return basis; }

// ---------------------------------------------------------------- helpers

@inline function cre(p: usize): f64 { return load<f64>(p); }
@inline function cim(p: usize): f64 { return load<f64>(p, 8); }
@inline function cset(p: usize, a: f64, b: f64): void {
  store<f64>(p, a);
  store<f64>(p, b, 8);
}

/** dst = Σ_k coef_k·term_k over n terms, coefficients at coefs (complex, contiguous). */
function combine(dst: usize, terms: usize, n: i32, coefs: usize): void {
  memory.fill(dst, 0, mat);
  const count = <usize>d * d;
  for (let k = 0; k < n; k++) {
    const fr = cre(coefs + (<usize>k << 4)), fi = cim(coefs + (<usize>k << 4));
    if (fr == 0 && fi == 0) continue;
    const src = terms + <usize>k * mat;
    for (let e: usize = 0; e < count; e++) {
      const p = src + (e << 4), o = dst + (e << 4);
      const ar = cre(p), ai = cim(p);
      cset(o, cre(o) + fr * ar - fi * ai, cim(o) + fr * ai + fi * ar);
    }
  }
}

/** dst = a·P + b·Q (real a, b). */
function lincomb(dst: usize, a: f64, p: usize, b: f64, q: usize): void {
  const count = <usize>d * d << 1;
  for (let e: usize = 0; e < count; e++) {
    store<f64>(dst + (e << 3), a * load<f64>(p + (e << 3)) + b * load<f64>(q + (e << 3)));
  }
}

/** dst = conj(src)ᵀ if conjugate, else srcᵀ. */
function transpose(dst: usize, src: usize, conjugate: bool): void {
  const s = conjugate ? -1.0 : 1.0;
  for (let i = 0; i < d; i++) {
    for (let j = 0; j < d; j++) {
      const p = src + ((<usize>i * d + j) << 4), o = dst + ((<usize>j * d + i) << 4);
      cset(o, cre(p), s * cim(p));
    }
  }
}

/** a ← U†·a·U in place, with U = basis (uses m1, m2). */
function toBasis(a: usize): void {
  // m1 rows = columns of U; zgemv(a, U columns) gives columns of a·U, i.e. rows of (a·U)ᵀ.
  transpose(m1, basis, false);
  memory.fill(m2, 0, mat);
  zgemv(a, d, m1, m2, d, 1.0, 0.0);
  // columns of U†·(a·U): zgemv(U†, rows of (a·U)ᵀ) gives rows of (U†aU)ᵀ.
  memory.fill(m1, 0, mat);
  if (isHermitian(a)) {
    // U†aU is Hermitian too: each block of its columns only down to the block's last row, the rest mirrored
    for (let j0 = 0; j0 < d; j0 += MIRROR_BLOCK) {
      const r = min(MIRROR_BLOCK, d - j0), at = <usize>j0 * <usize>d << 4;
      zgemvUpTo(basisH, d, m2 + at, m1 + at, r, 1.0, 0.0, j0 + r);
    }
    for (let j = 0; j < d; j++) {
      // m1 row j holds column j of W = U†aU: W_ij for i past the block's end is conj(W_ji)
      for (let i = min((j / MIRROR_BLOCK + 1) * MIRROR_BLOCK, d); i < d; i++) {
        const p = m1 + ((<usize>i * d + j) << 4);
        cset(m1 + ((<usize>j * d + i) << 4), cre(p), -cim(p));
      }
    }
    kernelFlops += 8.0 * <f64>d * <f64>d * <f64>d + 8.0 * <f64>d * <f64>d * <f64>(d + MIRROR_BLOCK) * 0.5;
  } else {
    zgemv(basisH, d, m2, m1, d, 1.0, 0.0);
    kernelFlops += 16.0 * <f64>d * <f64>d * <f64>d;
  }
  transpose(a, m1, false);
}

/** Columns of U†aU a product takes at a time when a is Hermitian (the kernel's scratch holds at least 16). */
const MIRROR_BLOCK = 16;

/** Whether a d×d matrix equals its conjugate transpose exactly. */
function isHermitian(a: usize): bool {
  for (let i = 0; i < d; i++) {
    for (let j = 0; j <= i; j++) {
      const p = a + ((<usize>i * d + j) << 4), q = a + ((<usize>j * d + i) << 4);
      if (cre(p) != cre(q) || cim(p) != -cim(q)) return false;
    }
  }
  return true;
}

/** ∞-norm (largest row sum of moduli) of a d×d matrix. */
function normInf(a: usize): f64 {
  let best = 0.0;
  for (let i = 0; i < d; i++) {
    let s = 0.0;
    for (let j = 0; j < d; j++) {
      const p = a + ((<usize>i * d + j) << 4);
      const re = cre(p), im = cim(p);
      s += Math.sqrt(re * re + im * im);
    }
    best = max(best, s);
  }
  return best;
}

/** Σ|v_a|² over n entries (default: a whole vector of m columns). */
function norm2(v: usize, n: i32 = -1): f64 {
  let s = 0.0;
  const count = n < 0 ? dm : n;
  for (let a = 0; a < count; a++) {
    const p = v + (<usize>a << 4);
    s += cre(p) * cre(p) + cim(p) * cim(p);
  }
  return s;
}

function norm1(v: usize): f64 {
  let s = 0.0;
  for (let a = 0; a < dm; a++) {
    const p = v + (<usize>a << 4);
    s += Math.abs(cre(p)) + Math.abs(cim(p));
  }
  return s;
}

/** v ← e^{−iθ}·v for n vectors. */
function rotate(v: usize, n: i32, theta: f64): void {
  const c = Math.cos(theta), s = -Math.sin(theta);
  const count = <usize>n * dm;
  for (let e: usize = 0; e < count; e++) {
    const p = v + (e << 4);
    const a = cre(p), b = cim(p);
    cset(p, c * a - s * b, c * b + s * a);
  }
}

// ------------------------------------------------------ block exponential

// out (orders low..rr−1) = α·(D − μ)·inp_n + α·B·inp_{n−1}; inp orders below low are zero.
function applyGenerator(
  out: usize, inp: usize, rr: i32, low: i32,
  mode: i32, dOp: usize, dScale: f64, mu: f64, bOp: usize, ar: f64, ai: f64,
): void {
  memory.fill(out + <usize>low * vec, 0, <usize>(rr - low) * vec);
  if (mode == MODE_SPARSE) {
    applySparse(out, inp, rr, low, mu, ar, ai);
    return;
  }
  if (mode == MODE_DENSE) {
    zgemv(dOp, d, inp + <usize>low * vec, out + <usize>low * vec, (rr - low) * m, ar * dScale, ai * dScale);
    kernelFlops += 8.0 * <f64>d * <f64>d * <f64>((rr - low) * m);
  }
  if (mode != MODE_NONE) {
    // the diagonal part: −μ (dense) or E_a − μ (diag), times α
    const blocks = (rr - low) * m;
    for (let b = 0; b < blocks; b++) {
      const base = <usize>low * vec + ((<usize>b * <usize>d) << 4);
      for (let a = 0; a < d; a++) {
        const p = inp + base + (<usize>a << 4), o = out + base + (<usize>a << 4);
        let g = -mu;
        if (mode == MODE_DIAG) g += dScale * load<f64>(dOp + (<usize>a << 3));
        const xr = cre(p), xi = cim(p);
        cset(o, cre(o) + g * (ar * xr - ai * xi), cim(o) + g * (ar * xi + ai * xr));
      }
    }
  }
  if (bOp != 0 && rr - 1 > low) {
    zgemv(bOp, d, inp + <usize>low * vec, out + <usize>(low + 1) * vec, (rr - 1 - low) * m, ar, ai);
    kernelFlops += 8.0 * <f64>d * <f64>d * <f64>((rr - 1 - low) * m);
  }
}

/**
 * psi (rr stacked orders) ← exp(−i·h·A)·psi, A = I⊗(dScale·D) + S⊗B, by a
 * Taylor series summed to round-off on sub-steps with ‖h_s·A‖ ≤ THETA.
 * see: Al-Mohy & Higham, SIAM J. Sci. Comput. 33 (2011).
 * With mode NONE the generator is nilpotent and rr−1 terms are exact.
 */
function expBlock(
  h: f64, rr: i32, mode: i32, dOp: usize, dScale: f64, bOp: usize, psi: usize, knownNorm: f64 = -1.0,
): i32 {
  let mu = 0.0;
  let normA = 0.0;
  if (mode == MODE_DENSE) {
    let tr = 0.0;
    for (let a = 0; a < d; a++) tr += cre(dOp + ((<usize>a * d + a) << 4));
    mu = dScale * tr / <f64>d;
    // knownNorm: ‖dScale·D − μ‖ when the caller knows it (e.g. from the spectrum); else the ∞-norm bound.
    normA = knownNorm >= 0 ? knownNorm : Math.abs(dScale) * normInf(dOp) + Math.abs(mu);
  } else if (mode == MODE_SPARSE) {
    mu = sparseShift();
    normA = sparseNorm() + Math.abs(mu);
  } else if (mode == MODE_DIAG) {
    let lo = Infinity, hi = -Infinity;
    for (let a = 0; a < d; a++) {
      const e = dScale * load<f64>(dOp + (<usize>a << 3));
      lo = min(lo, e);
      hi = max(hi, e);
    }
    mu = 0.5 * (lo + hi);
    normA = 0.5 * (hi - lo);
  }
  // The norm sets the sub-steps, and a nilpotent generator (mode NONE) needs none. With a diagonal D the
  // caller may pass the coupling's norm (knownNorm).
  if (mode != MODE_NONE && bOp != 0 && rr > 1) normA += mode == MODE_DIAG && knownNorm >= 0 ? knownNorm : normInf(bOp);
  let sub = 1;
  if (mode != MODE_NONE) {
    const need = Math.ceil(Math.abs(h) * normA / THETA);
    if (!(need <= MAX_SUBSTEPS)) return ERR_SUBSTEPS;
    sub = max(1, <i32>need);
  }
  const hs = h / <f64>sub;
  const bytes = <usize>rr * vec;
  for (let s = 0; s < sub; s++) {
    memory.copy(t1, psi, bytes);
    let low = 0;
    let quiet = 0;
    let k = 1;
    for (; k <= MAX_TERMS; k++) {
      applyGenerator(t2, t1, rr, low, mode, dOp, dScale, mu, bOp, 0.0, -hs / <f64>k);
      if (mode == MODE_NONE) low++;
      let small = true;
      for (let n = low; n < rr; n++) {
        const term = t2 + <usize>n * vec, acc = psi + <usize>n * vec;
        for (let a = 0; a < dm; a++) {
          const p = term + (<usize>a << 4), o = acc + (<usize>a << 4);
          cset(o, cre(o) + cre(p), cim(o) + cim(p));
        }
        if (mode != MODE_NONE && norm1(term) > tiny * norm1(acc)) small = false;
      }
      if (mode == MODE_NONE) {
        if (low >= rr - 1) break;
      } else if (small) {
        if (++quiet == 2) break;
      } else {
        quiet = 0;
      }
      const swap = t1;
      t1 = t2;
      t2 = swap;
    }
    if (k > MAX_TERMS) return ERR_TAYLOR;
    if (mu != 0) rotate(psi, rr, mu * hs);
  }
  return ERR_OK;
}

// --------------------------------------------------------------- schemes

function startVectors(v: usize): void {
  memory.fill(series, 0, <usize>r * vec);
  memory.copy(series, v, vec);
  memory.copy(exact, v, vec);
  memory.fill(errv, 0, vec);
  memory.copy(check, v, vec);
}

/** Diagonalize the summed H0 (slot 0 of the H0 terms) into energies/basis. */
function diagonalizeH0(): i32 {
  memory.copy(y, h0Terms, mat);
  if (eigh(y, d, energies, basis, work) != 0) return ERR_EIGEN;
  transpose(basisH, basis, true);
  return ERR_OK;
}

/**
 * Prepare a run: the TypeScript side has written the H0 and V terms (for the
 * time-independent and interaction schemes, H0 summed into one term and, for
 * time-independent, V summed into one term) and the initial state.
 */
export function prepare(which: i32, strength: f64, haveEigen: i32): i32 {
  scheme = which;
  lambda = strength;
  if (scheme == SCHEME_TD_H0) {
    startVectors(initial);
    return ERR_OK;
  }
  if (scheme == SCHEME_SPARSE || scheme == SCHEME_SPARSE_INTERACTION) {
    prepareSparse();
    startVectors(initial); // the basis is the identity: c(0) = ψ(0)
    return ERR_OK;
  }
  // haveEigen: TypeScript has written H0's eigenvalues and eigenvectors (computed once for the whole run).
  if (haveEigen != 0) transpose(basisH, basis, true);
  else {
    const err = diagonalizeH0();
    if (err != ERR_OK) return err;
  }
  for (let k = 0; k < kv; k++) toBasis(vTerms + <usize>k * mat);
  // c0 = U†ψ0
  memory.fill(tmp, 0, vec);
  zgemv(basisH, d, initial, tmp, m, 1.0, 0.0);
  startVectors(tmp);
  if (scheme == SCHEME_TIME_INDEPENDENT) {
    // Exact: eigen-decomposition of H = H0 + λV (original basis): ψ(τ) = U₂ e^{−iE₂τ} U₂†ψ0.
    // V is in the H0 eigenbasis now: y = diag(E) + λW there, then back to the original basis is not
    // needed, since the spectrum is basis-free and the vectors are mapped by U.
    for (let i = 0; i < d; i++) {
      for (let j = 0; j < d; j++) {
        const p = vTerms + ((<usize>i * d + j) << 4), o = y + ((<usize>i * d + j) << 4);
        cset(o, lambda * cre(p) + (i == j ? load<f64>(energies + (<usize>i << 3)) : 0.0), lambda * cim(p));
      }
    }
    memory.copy(x0a, y, mat); // kept: the dense generator for the independent Taylor check
    if (eigh(y, d, energies2, basis2, work) != 0) return ERR_EIGEN;
    // ‖H − μ‖₂ from H's spectrum (μ its mean), ‖W‖₂ by power iteration.
    let mean = 0.0;
    for (let a = 0; a < d; a++) mean += load<f64>(energies2 + (<usize>a << 3));
    mean /= <f64>d;
    normH = 0.0;
    for (let a = 0; a < d; a++) normH = max(normH, Math.abs(load<f64>(energies2 + (<usize>a << 3)) - mean));
    normW = hermitianNorm(vTerms);
    // amp2 = U₂†·c0
    transpose(m1, basis2, true);
    memory.fill(amp2, 0, vec);
    zgemv(m1, d, series, amp2, m, 1.0, 0.0);
  }
  return ERR_OK;
}

@inline function coefAt(buf: usize, step: i32, node: i32, term: i32): usize {
  return buf + ((<usize>(step * 2 + node) * <usize>(k0 + kv) + <usize>term) << 4);
}

/** ph = e^{i·E·τ} elementwise. */
function phases(ph: usize, tau: f64): void {
  phaseRow(ph, energies, d, tau);
}

/** m ← Φ∘m with Φ_ab = ph_a·conj(ph_b) (the interaction-picture phase). */
function applyPhase(m: usize, ph: usize): void {
  for (let a = 0; a < d; a++) {
    const pa = ph + (<usize>a << 4);
    const ar = cre(pa), ai = cim(pa);
    for (let b = 0; b < d; b++) {
      const pb = ph + (<usize>b << 4), o = m + ((<usize>a * d + b) << 4);
      const fr = ar * cre(pb) + ai * cim(pb), fi = ai * cre(pb) - ar * cim(pb);
      const mr = cre(o), mi = cim(o);
      cset(o, fr * mr - fi * mi, fr * mi + fi * mr);
    }
  }
}

// Build the two factor generators for an interaction-picture step from coefficient samples.
function ipFactors(buf: usize, step: i32, tau: f64, h: f64): void {
  combine(m1, vTerms, kv, coefAt(buf, step, 0, k0));
  combine(m2, vTerms, kv, coefAt(buf, step, 1, k0));
  phases(ph1, tau + C1 * h);
  phases(ph2, tau + C2 * h);
  applyPhase(m1, ph1);
  applyPhase(m2, ph2);
  lincomb(x1, A1, m1, A2, m2);
  lincomb(x2, A2, m1, A1, m2);
}

// Build the factor generators for a Schrödinger-picture step with H0(t).
function tdFactors(buf: usize, step: i32): void {
  combine(m1, h0Terms, k0, coefAt(buf, step, 0, 0));
  combine(m2, h0Terms, k0, coefAt(buf, step, 1, 0));
  lincomb(x0a, A1, m1, A2, m2);
  lincomb(x0b, A2, m1, A1, m2);
  combine(m1, vTerms, kv, coefAt(buf, step, 0, k0));
  combine(m2, vTerms, kv, coefAt(buf, step, 1, k0));
  lincomb(x1, A1, m1, A2, m2);
  lincomb(x2, A2, m1, A1, m2);
}

// y = X0 + λ·XV
function exactGenerator(x0: usize, xv: usize): void {
  lincomb(y, 1.0, x0, lambda, xv);
}

/**
 * Advance a time-dependent run by nsteps (even) steps of size h from τ0 =
 * t − t_start, with coefficient samples for those steps in the chunk
 * buffers. The step-doubled check runs alongside with step 2h.
 */
export function advance(nsteps: i32, tau0: f64, h: f64): i32 {
  let err = ERR_OK;
  for (let s = 0; s < nsteps; s++) {
    const tau = tau0 + <f64>s * h;
    if (scheme == SCHEME_INTERACTION) {
      ipFactors(coefFine, s, tau, h);
      err |= expBlock(h, r, MODE_NONE, 0, 0.0, x1, series);
      err |= expBlock(h, r, MODE_NONE, 0, 0.0, x2, series);
      err |= expBlock(h, 1, MODE_DENSE, x1, lambda, 0, exact);
      err |= expBlock(h, 1, MODE_DENSE, x2, lambda, 0, exact);
      if (s & 1) {
        ipFactors(coefCoarse, s >> 1, tau - h, 2 * h);
        err |= expBlock(2 * h, 1, MODE_DENSE, x1, lambda, 0, check);
        err |= expBlock(2 * h, 1, MODE_DENSE, x2, lambda, 0, check);
      }
    } else if (scheme == SCHEME_SPARSE) {
      err |= sparseStep(coefFine, s, h, series, exact, 1);
      if (s & 1) err |= sparseStep(coefCoarse, s >> 1, 2 * h, 0, check, 1);
    } else {
      tdFactors(coefFine, s);
      err |= expBlock(h, r, MODE_DENSE, x0a, 1.0, x1, series);
      err |= expBlock(h, r, MODE_DENSE, x0b, 1.0, x2, series);
      exactGenerator(x0a, x1);
      err |= expBlock(h, 1, MODE_DENSE, y, 1.0, 0, exact);
      exactGenerator(x0b, x2);
      err |= expBlock(h, 1, MODE_DENSE, y, 1.0, 0, exact);
      if (s & 1) {
        tdFactors(coefCoarse, s >> 1);
        exactGenerator(x0a, x1);
        err |= expBlock(2 * h, 1, MODE_DENSE, y, 1.0, 0, check);
        exactGenerator(x0b, x2);
        err |= expBlock(2 * h, 1, MODE_DENSE, y, 1.0, 0, check);
      }
    }
    if (err != ERR_OK) return err;
  }
  return ERR_OK;
}

/**
 * One step of size h from τ on the stacked series at ser and the exact state at ex (with nEx vectors: 2 carries
 * the error vector along), from coefficient samples at step `step` of buf.
 */
function oneStep(buf: usize, step: i32, tau: f64, h: f64, ser: usize, ex: usize, nEx: i32): i32 {
  let err = ERR_OK;
  if (scheme == SCHEME_INTERACTION) {
    ipFactors(buf, step, tau, h);
    err |= expBlock(h, r, MODE_NONE, 0, 0.0, x1, ser);
    err |= expBlock(h, r, MODE_NONE, 0, 0.0, x2, ser);
    err |= expBlock(h, nEx, MODE_DENSE, x1, lambda, 0, ex);
    err |= expBlock(h, nEx, MODE_DENSE, x2, lambda, 0, ex);
  } else if (scheme == SCHEME_SPARSE) {
    err |= sparseStep(buf, step, h, ser, ex, nEx);
  } else {
    tdFactors(buf, step);
    err |= expBlock(h, r, MODE_DENSE, x0a, 1.0, x1, ser);
    err |= expBlock(h, r, MODE_DENSE, x0b, 1.0, x2, ser);
    exactGenerator(x0a, x1);
    err |= expBlock(h, nEx, MODE_DENSE, y, 1.0, 0, ex);
    exactGenerator(x0b, x2);
    err |= expBlock(h, nEx, MODE_DENSE, y, 1.0, 0, ex);
  }
  return err;
}

/** ‖a − b‖₂ over n complex entries. */
function distance(a: usize, b: usize, n: i32): f64 {
  let s = 0.0;
  for (let e = 0; e < n; e++) {
    const p = a + (<usize>e << 4), q = b + (<usize>e << 4);
    const xr = cre(p) - cre(q), xi = cim(p) - cim(q);
    s += xr * xr + xi * xi;
  }
  return Math.sqrt(s);
}

let lastError: f64 = 0.0;

/** Floating-point operations the stepping loop's matrix products did (8 per complex multiply-add), for the bench. */
let kernelFlops: f64 = 0.0;

/** The stepping loop's kernel work since the last call (and resets it). */
export function takeKernelFlops(): f64 {
  const f = kernelFlops;
  kernelFlops = 0.0;
  return f;
}

// Time-independent runs: the 2-norm of the coupling W (H0's eigenbasis) and of H − μ, which set the Taylor
// sub-steps far more tightly than ∞-norms of dense matrices (a series summed to round-off stays exact either way).
let normW: f64 = -1.0;
let normH: f64 = -1.0;

/**
 * Adaptive stepping (step doubling on the whole stacked state): from τ, two steps of h (coefficient samples
 * at steps 0 and 1 of the fine buffer) and, from the same start, one step of 2h (step 0 of the coarse
 * buffer). The state becomes the two-step result; the start is kept for {@link rejectStep}. Returns an error
 * code; the local error estimate, max over the exact state and every partial sum of ‖Ψ_h − Ψ_2h‖/15
 * (Richardson for a 4th-order method), is read with {@link stepError}. On acceptance the estimated error
 * vector of the exact state is carried along with it and grows by this step's (Ψ_h − Ψ_2h)/15.
 * see: Hairer, Nørsett & Wanner, Solving ODEs I, §II.4 (step doubling).
 */
export function macroStep(tau: f64, h: f64): i32 {
  adaptive = true;
  memory.copy(save, series, <usize>r * vec);
  memory.copy(save + <usize>r * vec, exact, vec << 1);
  memory.copy(comp, series, <usize>r * vec);
  memory.copy(comp + <usize>r * vec, exact, vec);
  let err = oneStep(coefCoarse, 0, tau, 2 * h, comp, comp + <usize>r * vec, 1);
  err |= oneStep(coefFine, 0, tau, h, series, exact, 2);
  err |= oneStep(coefFine, 1, tau + h, h, series, exact, 2);
  if (err != ERR_OK) return err;
  // Partial sums' differences accumulate order by order; the exact state's difference is its own; each column
  // is a state of its own (the largest over columns).
  const column = <usize>d << 4;
  let worst = 0.0;
  for (let c = 0; c < m; c++) worst = max(worst, distance(exact + <usize>c * column, comp + <usize>r * vec + <usize>c * column, d));
  memory.fill(tmp, 0, vec);
  for (let n = 0; n < r; n++) {
    const a = series + <usize>n * vec, b = comp + <usize>n * vec;
    for (let e = 0; e < dm; e++) {
      const p = a + (<usize>e << 4), q = b + (<usize>e << 4), o = tmp + (<usize>e << 4);
      cset(o, cre(o) + cre(p) - cre(q), cim(o) + cim(p) - cim(q));
    }
    for (let c = 0; c < m; c++) worst = max(worst, Math.sqrt(norm2(tmp + <usize>c * column, d)));
  }
  lastError = worst / 15.0;
  // err += (exact − companion)/15
  const c = comp + <usize>r * vec;
  for (let e = 0; e < dm; e++) {
    const p = exact + (<usize>e << 4), q = c + (<usize>e << 4), o = errv + (<usize>e << 4);
    cset(o, cre(o) + (cre(p) - cre(q)) / 15.0, cim(o) + (cim(p) - cim(q)) / 15.0);
  }
  return ERR_OK;
}

/** The local error estimate of the last macro step. */
export function stepError(): f64 {
  return lastError;
}

/**
 * The state at a recorded time inside the last (accepted) macro step: from the macro step's start, two steps
 * of h (coefficient samples at steps 0 and 1 of the fine buffer) into the companion buffer, which
 * {@link recordSample} then records. The main state is not touched, so recorded times do not shorten steps.
 */
export function sampleWithin(tau: f64, h: f64): i32 {
  memory.copy(comp, save, <usize>(r + 1) * vec);
  let err = oneStep(coefFine, 0, tau, h, comp, comp + <usize>r * vec, 1);
  err |= oneStep(coefFine, 1, tau + h, h, comp, comp + <usize>r * vec, 1);
  return err;
}

/** Records the state {@link sampleWithin} computed (its error estimate: the one at the macro step's start). */
export function recordSample(tau: f64): void {
  const s0 = series, e0 = exact, r0 = errv;
  series = comp;
  exact = comp + <usize>r * vec;
  errv = save + <usize>(r + 1) * vec;
  record(tau);
  series = s0;
  exact = e0;
  errv = r0;
}

/** Undo the last macro step (restore the stacked state and the error vector). */
export function rejectStep(): void {
  memory.copy(series, save, <usize>r * vec);
  memory.copy(exact, save + <usize>r * vec, vec << 1);
  startRateValid = true; // stage 0 of the rejected step is the derivative at the restored start
}

/**
 * Advance a time-independent run by an interval h with no discretisation:
 * the series by the exact block exponential in H0's eigenbasis, the
 * independent check by the dense exponential of D + λW.
 */
export function advanceExact(h: f64): i32 {
  let err = expBlock(h, r, MODE_DIAG, energies, 1.0, vTerms, series, normW);
  err |= expBlock(h, 1, MODE_DENSE, x0a, 1.0, 0, check, normH);
  return err;
}

/**
 * ‖m‖₂ of a Hermitian d×d matrix by power iteration (Golub & Van Loan §8.2.1): 30 products from a fixed
 * start, ×1.1 for the part not yet converged, and never above the ∞-norm, which bounds it.
 */
function hermitianNorm(m: usize): f64 {
  let x = t1, y2 = t2;
  for (let a = 0; a < d; a++) cset(x + (<usize>a << 4), 1.0 + 0.1 * <f64>a / <f64>d, 0.0);
  let estimate = 0.0;
  for (let it = 0; it < 30; it++) {
    const n = Math.sqrt(norm2(x, d));
    if (n == 0) return 0.0;
    for (let a = 0; a < d; a++) {
      const p = x + (<usize>a << 4);
      cset(p, cre(p) / n, cim(p) / n);
    }
    memory.fill(y2, 0, vec);
    zgemv(m, d, x, y2, 1, 1.0, 0.0);
    estimate = Math.sqrt(norm2(y2, d));
    const swap = x;
    x = y2;
    y2 = swap;
  }
  return min(1.1 * estimate, normInf(m));
}

/**
 * Write the state at τ = t − t_start into the record buffer, in the case's
 * basis: the r Dyson terms ψ0…ψN, then the exact state, then the check
 * (step-doubled reference, or for time-independent runs the Taylor-propagated
 * exact state).
 */
export function record(tau: f64): void {
  const n = r + 2;
  if (adaptive) {
    // the check slot: the exact state less its estimated error
    for (let e = 0; e < dm; e++) {
      const p = exact + (<usize>e << 4), q = errv + (<usize>e << 4), o = check + (<usize>e << 4);
      cset(o, cre(p) - cre(q), cim(p) - cim(q));
    }
  }
  if (scheme == SCHEME_TD_H0 || scheme == SCHEME_SPARSE) {
    memory.copy(rec, series, <usize>r * vec);
    memory.copy(rec + <usize>r * vec, exact, vec);
    memory.copy(rec + <usize>(r + 1) * vec, check, vec);
    return;
  }
  memory.copy(tmp, series, <usize>r * vec);
  if (scheme == SCHEME_INTERACTION || scheme == SCHEME_SPARSE_INTERACTION) {
    memory.copy(tmp + <usize>r * vec, exact, vec);
    memory.copy(tmp + <usize>(r + 1) * vec, check, vec);
    // ψ = U·e^{−iEτ}·c
    phases(ph1, tau);
    toInteraction(tmp, tmp, n * m, ph1, 1.0);
    if (scheme == SCHEME_SPARSE_INTERACTION) memory.copy(rec, tmp, <usize>n * vec); // the basis is the identity
    else {
      memory.fill(rec, 0, <usize>n * vec);
      zgemv(basis, d, tmp, rec, n * m, 1.0, 0.0);
    }
    return;
  }
  // time-independent: exact from H's eigen-decomposition, in H0's eigenbasis first
  const ex = tmp + <usize>r * vec;
  memory.fill(ex, 0, vec);
  for (let e = 0; e < dm; e++) {
    const w = -load<f64>(energies2 + (<usize>(e % d) << 3)) * tau;
    const p = amp2 + (<usize>e << 4), o = ph2 + (<usize>e << 4);
    const c = Math.cos(w), s = Math.sin(w);
    cset(o, c * cre(p) - s * cim(p), c * cim(p) + s * cre(p));
  }
  zgemv(basis2, d, ph2, ex, m, 1.0, 0.0);
  memory.copy(tmp + <usize>(r + 1) * vec, check, vec);
  memory.fill(rec, 0, <usize>n * vec);
  zgemv(basis, d, tmp, rec, n * m, 1.0, 0.0);
}

// ------------------------------------------- embedded Runge–Kutta (interaction picture, accuracy-driven runs)
//
// The stacked interaction-picture equations c_n' = −i V_I(t) c_{n−1} (n = 1…N, c_0 constant) and
// c' = −iλ V_I(t) c for the exact state, V_I(t) = e^{iEt} (Σ_k f_k(t) W_k) e^{−iEt}, integrated by the explicit
// Dormand–Prince 8(5,3) pair with its embedded 5th- and 3rd-order error estimates. Each stage costs one product
// of the coupling with N+1 vectors (the phases act on vectors, never on the matrix).
// see: Hairer, Nørsett & Wanner, Solving ODEs I, §II.10 (the 8(5,3) pair and its error estimate);
//      Prince & Dormand, J. Comput. Appl. Math. 7 (1981) 67.

const RK_STAGES: i32 = 12;
const RK_C: StaticArray<f64> = [
  0.0, 0.526001519587677318785587544488e-1, 0.789002279381515978178381316732e-1,
  0.118350341907227396726757197510, 0.281649658092772603273242802490, 0.333333333333333333333333333333,
  0.25, 0.307692307692307692307692307692, 0.651282051282051282051282051282, 0.6,
  0.857142857142857142857142857142, 1.0,
];
// Row i holds a_ij for j < i (row-major, 12 × 12, zeros above and on the diagonal).
const RK_A: StaticArray<f64> = [
  0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0,
  5.26001519587677318785587544488e-2, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0,
  1.97250569845378994544595329183e-2, 5.91751709536136983633785987549e-2, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0,
  2.95875854768068491816892993775e-2, 0, 8.87627564304205475450678981324e-2, 0, 0, 0, 0, 0, 0, 0, 0, 0,
  2.41365134159266685502369798665e-1, 0, -8.84549479328286085344864962717e-1, 9.24834003261792003115737966543e-1,
  0, 0, 0, 0, 0, 0, 0, 0,
  3.7037037037037037037037037037e-2, 0, 0, 1.70828608729473871279604482173e-1, 1.25467687566822425016691814123e-1,
  0, 0, 0, 0, 0, 0, 0,
  3.7109375e-2, 0, 0, 1.70252211019544039314978060272e-1, 6.02165389804559606850219397283e-2, -1.7578125e-2,
  0, 0, 0, 0, 0, 0,
  3.70920001185047927108779319836e-2, 0, 0, 1.70383925712239993810214054705e-1, 1.07262030446373284651809199168e-1,
  -1.53194377486244017527936158236e-2, 8.27378916381402288758473766002e-3, 0, 0, 0, 0, 0,
  6.24110958716075717114429577812e-1, 0, 0, -3.36089262944694129406857109825, -8.68219346841726006818189891453e-1,
  2.75920996994467083049415600797e1, 2.01540675504778934086186788979e1, -4.34898841810699588477366255144e1,
  0, 0, 0, 0,
  4.77662536438264365890433908527e-1, 0, 0, -2.48811461997166764192642586468, -5.90290826836842996371446475743e-1,
  2.12300514481811942347288949897e1, 1.52792336328824235832596922938e1, -3.32882109689848629194453265587e1,
  -2.03312017085086261358222928593e-2, 0, 0, 0,
  -9.3714243008598732571704021658e-1, 0, 0, 5.18637242884406370830023853209, 1.09143734899672957818500254654,
  -8.14978701074692612513997267357, -1.85200656599969598641566180701e1, 2.27394870993505042818970056734e1,
  2.49360555267965238987089396762, -3.0467644718982195003823669022, 0, 0,
  2.27331014751653820792359768449, 0, 0, -1.05344954667372501984066689879e1, -2.00087205822486249909675718444,
  -1.79589318631187989172765950534e1, 2.79488845294199600508499808837e1, -2.85899827713502369474065508674,
  -8.87285693353062954433549289258, 1.23605671757943030647266201528e1, 6.43392746015763530355970484046e-1, 0,
];
// The 8th-order weights.
const RK_B: StaticArray<f64> = [
  5.42937341165687622380535766363e-2, 0, 0, 0, 0, 4.45031289275240888144113950566,
  1.89151789931450038304281599044, -5.8012039600105847814672114227, 3.1116436695781989440891606237e-1,
  -1.52160949662516078556178806805e-1, 2.01365400804030348374776537501e-1, 4.47106157277725905176885569043e-2,
];
// Error weights: the 8th-order solution less the embedded 5th-order (E5) and 3rd-order (E3) ones.
const RK_E5: StaticArray<f64> = [
  0.1312004499419488073250102996e-1, 0, 0, 0, 0, -0.1225156446376204440720569753e1,
  -0.4957589496572501915214079952, 0.1664377182454986536961530415e1, -0.3503288487499736816886487290,
  0.3341791187130174790297318841, 0.8192320648511571246570742613e-1, -0.2235530786388629525884427845e-1,
];
const RK_BHH1: f64 = 0.244094488188976377952755905512;
const RK_BHH2: f64 = 0.733846688281611857341361741547;
const RK_BHH3: f64 = 0.220588235294117647058823529412e-1;

let rkStage: usize = 0; // the 12 stage derivatives, (r+1) vectors each
let rkZ: usize = 0;
let rkU: usize = 0;
let rkP: usize = 0;
let rkE5: usize = 0;
let rkE3: usize = 0;
let rkPh: usize = 0; // the stage times' phases (stagePhases)
let rkXa: usize = 0; // the halves' packed stage values (orderStages)
let rkXb: usize = 0;
let rkJob: usize = 0; // the halves' parameters (ORDERS_WORDS words)
// Stage 0 (the derivative at the step's start) is kept across a rejection and for recorded times inside a step.
let startRateValid = false;

@inline function e3Weight(j: i32): f64 {
  let w = unchecked(RK_B[j]);
  if (j == 0) w -= RK_BHH1;
  else if (j == 8) w -= RK_BHH2;
  else if (j == 11) w -= RK_BHH3;
  return w;
}

/**
 * kout (r+1 vectors) = the stacked derivative at z (series c_0…c_N, then the exact state) at stage time `node`
 * (its coefficients at node `node` of buf, its phases from {@link stagePhases}): kout_0 = 0,
 * kout_n = −i V_I z_{n−1}, kout_exact = −iλ V_I z_exact.
 */
function interactionRate(buf: usize, node: i32, z: usize, kout: usize): void {
  if (sparse) {
    interactionRateSparse(buf, node, z, kout);
    return;
  }
  const coefs = buf + ((<usize>node * <usize>(k0 + kv) + <usize>k0) << 4);
  let op = vTerms, fr = 1.0, fi = 0.0;
  if (kv == 1) {
    fr = cre(coefs);
    fi = cim(coefs);
  } else {
    combine(m1, vTerms, kv, coefs);
    op = m1;
  }
  const ph = rkPh + <usize>node * (<usize>d << 4); // e^{iEτ} (stagePhases)
  // u_v = e^{−iEτ}∘z_v for v = 0…N−1, and u_N = λ·e^{−iEτ}∘z_exact
  toInteraction(rkU, z, (r - 1) * m, ph, 1.0);
  toInteraction(rkU + <usize>(r - 1) * vec, z + <usize>r * vec, m, ph, lambda);
  memory.fill(kout, 0, vec);
  // kout_{v+1} = −i·e^{iEτ}∘(V u_v): u_v feeds order v+1, the last one the exact state
  zgemvRate(op, d, rkU, kout + vec, r * m, fr, fi, ph);
  kernelFlops += 8.0 * <f64>d * <f64>d * <f64>(r * m);
}

/** dst = scale·e^{−iEτ}∘src for `blocks` d-vectors one after another, with ph = e^{iEτ}: scale·conj(p)·x. */
function toInteraction(dst: usize, src: usize, blocks: i32, ph: usize, scale: f64): void {
  for (let b = 0; b < blocks; b++) {
    const at = (<usize>b * <usize>d) << 4;
    phaseIn(dst + at, src + at, d, ph, scale);
  }
}

/** pr·(xr, xi) + pi·(xi, xr): conj(p)·x with pr = scale·(p_r, p_r) and pi = scale·(p_i, −p_i). */
@inline function phased(pr: v128, pi: v128, x: v128): v128 {
  return f64x2.add(f64x2.mul(pr, x), f64x2.mul(pi, v128.shuffle<f64>(x, x, 1, 0)));
}

/** dst = scale·conj(p)∘src for n entries, with the phases p at ph. */
function phaseIn(dst: usize, src: usize, n: i32, ph: usize, scale: f64): void {
  const flip = f64x2(scale, -scale), s = f64x2.splat(scale);
  for (let a = 0; a < n; a++) {
    const o = <usize>a << 4, x = v128.load(src + o), q = v128.load(ph + o);
    // (pr·xr + pi·xi, pr·xi − pi·xr) = pr·(xr, xi) + (pi, −pi)·(xi, xr), times the scale
    const pr = f64x2.mul(v128.shuffle<f64>(q, q, 0, 0), s), pi = f64x2.mul(v128.shuffle<f64>(q, q, 1, 1), flip);
    v128.store(dst + o, phased(pr, pi, x));
  }
}

/** dst = −i·scale·(e^{iEτ}∘src) for `blocks` d-vectors one after another, with ph = e^{iEτ}. */
function toRate(dst: usize, src: usize, blocks: i32, scale: f64, ph: usize): void {
  const flip = f64x2(scale, -scale), s = f64x2.splat(scale);
  for (let b = 0; b < blocks; b++) {
    const from = src + ((<usize>b * <usize>d) << 4), to = dst + ((<usize>b * <usize>d) << 4);
    for (let a = 0; a < d; a++) {
      const o = <usize>a << 4, x = v128.load(from + o), q = v128.load(ph + o);
      // −i·(pr·xr − pi·xi, pr·xi + pi·xr) = (pr·xi + pi·xr, −pr·xr + pi·xi) = (pr, −pr)·(xi, xr) + pi·(xr, xi)
      const pr = f64x2.mul(v128.shuffle<f64>(q, q, 0, 0), flip), pi = f64x2.mul(v128.shuffle<f64>(q, q, 1, 1), s);
      v128.store(to + o, f64x2.add(f64x2.mul(pr, v128.shuffle<f64>(x, x, 1, 0)), f64x2.mul(pi, x)));
    }
  }
}

/**
 * The stacked derivative with sparse terms, in the interaction picture of H0's diagonal E (energies): with
 * u = e^{−iEτ}∘z and O = H0 − E (H0's off-diagonal part, absent when H0 is diagonal),
 * kout_n = −i e^{iEτ}∘(O u_n + Σ f_k V_k u_{n−1}) for the series (u_{−1} = 0) and
 * kout_exact = −i e^{iEτ}∘(O u_exact + λ Σ f_k V_k u_exact). Every product is sparse.
 */
function interactionRateSparse(buf: usize, node: i32, z: usize, kout: usize): void {
  const nodeCoefs = buf + ((<usize>node * <usize>(k0 + kv)) << 4);
  const ph = rkPh + <usize>node * (<usize>d << 4); // e^{iEτ} (stagePhases)
  toInteraction(rkU, z, (r + 1) * m, ph, 1.0);
  memory.fill(rkP, 0, <usize>(r + 1) * vec);
  for (let k = 0; k < kv; k++) {
    const c = nodeCoefs + (<usize>(k0 + k) << 4), t = k0 + k;
    const cr = cre(c), ci = cim(c);
    if (cr == 0 && ci == 0) continue;
    const rows = sparseRowStart(t), cols = sparseColumn(t), vals = sparseValues(t);
    const nnz = <f64>load<u64>(csrField(t, 3));
    // orders 0…N−1 feed orders 1…N; the exact state its own, times λ
    zcsrmv(rows, cols, vals, d, rkU, rkP + vec, (r - 1) * m, cr, ci);
    zcsrmv(rows, cols, vals, d, rkU + <usize>r * vec, rkP + <usize>r * vec, m, lambda * cr, lambda * ci);
    kernelFlops += 8.0 * nnz * <f64>(r * m);
  }
  if (h0OffDiagonal) {
    for (let k = 0; k < k0; k++) {
      const c = nodeCoefs + (<usize>k << 4);
      const rows = sparseRowStart(k), cols = sparseColumn(k), vals = sparseValues(k);
      zcsrmv(rows, cols, vals, d, rkU, rkP, (r + 1) * m, cre(c), cim(c));
      kernelFlops += 8.0 * <f64>load<u64>(csrField(k, 3)) * <f64>((r + 1) * m);
    }
    // less the diagonal, which the phases carry
    for (let b = 0; b < (r + 1) * m; b++) {
      const block = (<usize>b * <usize>d) << 4;
      for (let a = 0; a < d; a++) {
        const p = rkU + block + (<usize>a << 4), o = rkP + block + (<usize>a << 4);
        const w = load<f64>(energies + (<usize>a << 3));
        cset(o, cre(o) - w * cre(p), cim(o) - w * cim(p));
      }
    }
  }
  toRate(kout, rkP, (r + 1) * m, 1.0, ph);
}

/** dst (n complex entries) += w·src, one complex entry (an f64x2) at a time. */
@inline function axpy(dst: usize, w: f64, src: usize, n: usize): void {
  const ww = f64x2.splat(w), end = n << 4;
  for (let e: usize = 0; e < end; e += 16) {
    v128.store(dst + e, f64x2.add(v128.load(dst + e), f64x2.mul(ww, v128.load(src + e))));
  }
}

// Weighted sums of stage derivatives, four terms a pass over the entries (each entry of the sum read and written
// once per four terms instead of once per term); the terms are added in the same order, and with the same
// operations, as one axpy after another, so the results are the same to the bit.
const SUM_A: i32 = 0; // row i of RK_A
const SUM_B: i32 = 1;
const SUM_E5: i32 = 2;
const SUM_E3: i32 = 3;

@inline function sumWeight(kind: i32, i: i32, j: i32): f64 {
  if (kind == SUM_A) return unchecked(RK_A[i * RK_STAGES + j]);
  if (kind == SUM_B) return unchecked(RK_B[j]);
  if (kind == SUM_E5) return unchecked(RK_E5[j]);
  return e3Weight(j);
}

/**
 * dst = from + Σ_j (h·w_j)·k_j over the stages j < count with w_j ≠ 0 (weights of `kind`, row i for RK_A; k_j the
 * stage derivatives, `bytes` apart, their entries from byte `offset` on), n complex entries; from may be dst.
 */
function stageSum(
  dst: usize, from: usize, n: usize, h: f64, kind: i32, i: i32, count: i32, bytes: usize, offset: usize,
  stages: usize = rkStage,
): void {
  let src = from, pending = 0;
  let w0 = 0.0, w1 = 0.0, w2 = 0.0, p0: usize = 0, p1: usize = 0, p2: usize = 0;
  for (let j = 0; j < count; j++) {
    const w = sumWeight(kind, i, j);
    if (w == 0) continue;
    const p = stages + <usize>j * bytes + offset, hw = h * w;
    if (pending == 0) {
      w0 = hw;
      p0 = p;
    } else if (pending == 1) {
      w1 = hw;
      p1 = p;
    } else if (pending == 2) {
      w2 = hw;
      p2 = p;
    } else {
      sum4(dst, src, n, w0, p0, w1, p1, w2, p2, hw, p);
      src = dst;
      pending = 0;
      continue;
    }
    pending++;
  }
  if (pending == 3) sum4(dst, src, n, w0, p0, w1, p1, w2, p2, 0.0, 0);
  else if (pending == 2) sum4(dst, src, n, w0, p0, w1, p1, 0.0, 0, 0.0, 0);
  else if (pending == 1) sum4(dst, src, n, w0, p0, 0.0, 0, 0.0, 0, 0.0, 0);
  else if (src != dst) memory.copy(dst, src, n << 4);
}

/** dst = from + w0·x0 + w1·x1 + w2·x2 + w3·x3 (added in that order), n complex entries; a zero address ends the list. */
function sum4(
  dst: usize, from: usize, n: usize, w0: f64, x0: usize, w1: f64, x1: usize, w2: f64, x2: usize, w3: f64, x3: usize,
): void {
  const a = f64x2.splat(w0), b = f64x2.splat(w1), c = f64x2.splat(w2), e4 = f64x2.splat(w3), end = n << 4;
  if (x3 != 0) {
    for (let e: usize = 0; e < end; e += 16) {
      let t = f64x2.add(v128.load(from + e), f64x2.mul(a, v128.load(x0 + e)));
      t = f64x2.add(t, f64x2.mul(b, v128.load(x1 + e)));
      t = f64x2.add(t, f64x2.mul(c, v128.load(x2 + e)));
      v128.store(dst + e, f64x2.add(t, f64x2.mul(e4, v128.load(x3 + e))));
    }
  } else if (x2 != 0) {
    for (let e: usize = 0; e < end; e += 16) {
      let t = f64x2.add(v128.load(from + e), f64x2.mul(a, v128.load(x0 + e)));
      t = f64x2.add(t, f64x2.mul(b, v128.load(x1 + e)));
      v128.store(dst + e, f64x2.add(t, f64x2.mul(c, v128.load(x2 + e))));
    }
  } else if (x1 != 0) {
    for (let e: usize = 0; e < end; e += 16) {
      const t = f64x2.add(v128.load(from + e), f64x2.mul(a, v128.load(x0 + e)));
      v128.store(dst + e, f64x2.add(t, f64x2.mul(b, v128.load(x1 + e))));
    }
  } else {
    for (let e: usize = 0; e < end; e += 16) {
      v128.store(dst + e, f64x2.add(v128.load(from + e), f64x2.mul(a, v128.load(x0 + e))));
    }
  }
}

/**
 * The phases e^{iE(τ + c_i h)} of the twelve stage times, d complex each at rkPh (node i at rkPh + i·16d):
 * computed once a step, ahead of the stages, the nodes shared with the helper from {@link SHARE_PHASES_FROM}
 * levels on (each node's values are the same whichever thread makes them).
 */
function stagePhases(tau: f64, h: f64): void {
  if (sharing() && d >= SHARE_PHASES_FROM) {
    setArg(0, <u64>rkPh);
    setArg(1, <u64>energies);
    setArg(2, <u64>d);
    setArgF(3, tau);
    setArgF(4, h);
    runShared(JOB_STAGE_PHASES, 0, RK_STAGES, RK_STAGES / 2, stagePhasesJob);
    return;
  }
  nodePhases(rkPh, energies, d, tau, h, 0, RK_STAGES);
}

/** Levels from which the stage phases are shared with the helper. */
const SHARE_PHASES_FROM: i32 = 32;
export const JOB_STAGE_PHASES = 7;

/** Nodes n0…n1−1 of {@link stagePhases} (arguments as it posts them). */
export function stagePhasesJob(n0: i32, n1: i32): void {
  nodePhases(<usize>arg(0), <usize>arg(1), <i32>arg(2), argF(3), argF(4), n0, n1);
}

/** ph_i = e^{iE(τ + c_i h)} for nodes n0…n1−1 (energies: n f64). */
function nodePhases(ph: usize, e: usize, n: i32, tau: f64, h: f64, n0: i32, n1: i32): void {
  for (let i = n0; i < n1; i++) phaseRow(ph + <usize>i * (<usize>n << 4), e, n, tau + unchecked(RK_C[i]) * h);
}

/**
 * One Runge–Kutta step of h: yout (r+1 vectors) = y0 + h Σ b_j k_j, with the coefficients of the 12 stage times in
 * the fine buffer and their phases made by stagePhases; stage 0 (the derivative at y0) made first where
 * `makeStart`, else already in place. Dense runs that split go in two halves of the series ({@link orderStages}).
 */
function rkStages(h: f64, y0: usize, yout: usize, makeStart: bool): void {
  const n = <usize>(r + 1) * <usize>dm, bytes = <usize>(r + 1) * vec, exactAt = <usize>r * vec;
  // The stage values a rate reads: the series from c_lo to c_{hi−1}, and the exact state. Where c_0 is constant
  // its stage values are the start's and c_N feeds no order, so neither is summed (lo = 1, hi = N); otherwise
  // every vector is.
  const lean = constantFirst(), lo = lean ? 1 : 0, hi = lean ? r - 1 : r;
  const from = <usize>lo * vec, orders = <usize>max(hi - lo, 0) * <usize>dm;
  if (splitOrders()) {
    orderStages(h, y0, makeStart);
  } else {
    if (makeStart) interactionRate(coefFine, 0, y0, rkStage);
    if (lean) memory.copy(rkZ, y0, vec);
    for (let i = 1; i < RK_STAGES; i++) {
      if (orders > 0) stageSum(rkZ + from, y0 + from, orders, h, SUM_A, i, i, bytes, from);
      stageSum(rkZ + exactAt, y0 + exactAt, <usize>dm, h, SUM_A, i, i, bytes, exactAt);
      interactionRate(coefFine, i, rkZ, rkStage + <usize>i * bytes);
    }
  }
  // the step's end: every vector from c_lo on (c_0, where it is constant, copied)
  if (lean && yout != y0) memory.copy(yout, y0, vec);
  stageSum(yout + from, y0 + from, n - <usize>lo * <usize>dm, h, SUM_B, 0, RK_STAGES, bytes, from);
}

// ------------------------------------------- the stages in two halves of the series (dense, one coupling term)
// The stacked rate splits by orders: order n's rate reads only order n−1's stage values, and the exact state's only
// its own. The first half (the exact state and the rates of orders 1…g, from c_0…c_{g−1}) runs on the caller;
// the second (orders g+1…N, from c_g…c_{N−1}) is one job a helper may take. The second half's only input from
// the first is order g's rate, stage by stage: the first half publishes how many stages it has done, and the
// second waits for stage i−1 before its stage i (the first never waits for the second). Each half is a product
// of about half the vectors with the whole coupling, so the helper takes part in every stage with one
// barrier a step, where rows of each product shared between threads cost a barrier a stage and every stage's
// values crossing between the processors' caches. Without a helper the caller takes one product a stage of both
// halves' vectors, which pairs each vector as the halves' products do: results do not depend on whether a helper
// took part.

/** Levels from which the series' stages are split in two (the dense runs a helper takes part in). */
const SPLIT_FROM: i32 = 64;

/**
 * The first half's vectors: the exact state and c_0…c_{g−1}, about half of the N + 1 and an even count (see
 * {@link stageOfHalf}): 2·⌈(N+1)/4⌉, 4 of 7 at N = 6.
 */
function firstOrders(): i32 {
  return 2 * ((r + 3) / 4);
}

/**
 * Whether the Runge–Kutta stages go in two halves: dense, one coupling term, from SPLIT_FROM levels, and orders
 * left for the second half.
 */
function splitOrders(): bool {
  return !sparse && kv == 1 && d >= SPLIT_FROM && firstOrders() < r;
}

const ORDERS_WORDS = 18;
const O_D = 0;
const O_M = 1;
const O_R = 2;
const O_G = 3; // the first half's orders: rates of orders 1…g (and the exact state's)
const O_STAGES = 4;
const O_Y0 = 5;
const O_Z = 6;
const O_XA = 7; // each half's packed interaction-picture stage values
const O_XB = 8;
const O_PH = 9;
const O_OP = 10;
const O_COEFS = 11; // the fine buffer's coefficients of the coupling at node 0, and the bytes between nodes
const O_NODE = 12;
const O_H = 13;
const O_LAMBDA = 14;
const O_DONE = 15; // stages the first half has done (i64, atomic)
const O_NEXT = 16; // the second half's next stage to take, and its stages done (i64, atomic)
const O_TAKEN = 17;

export const JOB_ORDERS = 8;

@inline function oset(k: i32, x: u64): void { store<u64>(rkJob + (<usize>k << 3), x); }
@inline function oget(p: usize, k: i32): u64 { return load<u64>(p + (<usize>k << 3)); }

/** The helper's side of {@link orderStages}: the second half (the parameters' address in argument slot 0). */
export function ordersJob(i0: i32, i1: i32): void {
  secondHalf(<usize>arg(0), false);
}

/**
 * The second half's stages, each taken first (a stage is taken only once the one before it is done): the
 * helper takes them in turn until one is gone (the caller took over: the helper is no longer needed); the caller
 * (`caller`), its own half done, takes whatever is left, waiting only for a stage the helper holds.
 */
function secondHalf(p: usize, caller: bool): void {
  const next = p + (O_NEXT << 3), taken = p + (O_TAKEN << 3);
  let spins = 0;
  for (;;) {
    const done = atomic.load<i64>(taken);
    if (done >= <i64>RK_STAGES) return;
    if (atomic.load<i64>(next) == done && atomic.cmpxchg<i64>(next, done, done + 1) == done) {
      stageOfHalf(p, 1, <i32>done);
      atomic.store<i64>(taken, done + 1);
      spins = 0;
    } else if (!caller) {
      return; // the caller has taken the next stage
    } else if (++spins > 100000) {
      atomic.wait<i64>(taken, done, 100000); // the helper holds a stage: a short sleep, then look again
    }
  }
}

/**
 * The stage derivatives of one Runge–Kutta step of h in two halves of the series (see {@link splitOrders}); stage 0
 * (the derivative at y0) made first where `makeStart`, else in place. The step's end is {@link rkStages}'s.
 */
function orderStages(h: f64, y0: usize, makeStart: bool): void {
  // the first half: the exact state and about half the orders (the larger share: the caller never waits)
  const g = firstOrders() - 1;
  oset(O_D, <u64>d);
  oset(O_M, <u64>m);
  oset(O_R, <u64>r);
  oset(O_G, <u64>g);
  oset(O_STAGES, <u64>rkStage);
  oset(O_Y0, <u64>y0);
  oset(O_Z, <u64>rkZ);
  oset(O_XA, <u64>rkXa);
  oset(O_XB, <u64>rkXb);
  oset(O_PH, <u64>rkPh);
  oset(O_OP, <u64>vTerms);
  oset(O_COEFS, <u64>(coefFine + (<usize>k0 << 4)));
  oset(O_NODE, <u64>(<usize>(k0 + kv) << 4));
  store<f64>(rkJob + (O_H << 3), h);
  store<f64>(rkJob + (O_LAMBDA << 3), lambda);
  const first = makeStart ? 0 : 1;
  atomic.store<i64>(rkJob + (O_DONE << 3), first);
  atomic.store<i64>(rkJob + (O_NEXT << 3), first);
  atomic.store<i64>(rkJob + (O_TAKEN << 3), first);
  kernelFlops += 8.0 * <f64>d * <f64>d * <f64>(r * m) * <f64>(RK_STAGES - first);
  if (sharing()) {
    setArg(0, <u64>rkJob);
    const job = post(JOB_ORDERS, 0, 1, 1);
    for (let s = first; s < RK_STAGES; s++) stageOfHalf(rkJob, 0, s);
    // the second half's stages the helper has not taken (all of them when it never came)
    if (claim(job) >= 0) blockDone();
    secondHalf(rkJob, true);
    waitAll(job); // the helper has left the job (it reads the parameters until then)
  } else {
    // alone: both halves in one product a stage (the same numbers, one pass over the coupling)
    for (let s = first; s < RK_STAGES; s++) stageOfHalf(rkJob, 2, s);
  }
}

/**
 * Stage s of one half of {@link orderStages} (part 0: the exact state's rate and orders 1…g, from the exact state
 * and c_0…c_{g−1}; part 1: orders g+1…N, from c_g…c_{N−1}; part 2: both, as one product), from the parameters at p
 * only (the helper's instance has its own globals). The first half's vectors are an even count (g + 1 even), so a
 * product of both halves pairs each vector with the same partner as the halves' products do: the same arithmetic.
 * The exact state goes first: the products' outputs then lie in the stage derivative's order (the exact state's
 * rate in c_0's place, which has none, moved to its own after the product).
 */
function stageOfHalf(p: usize, part: i32, s: i32): void {
  const n = <i32>oget(p, O_D), mm = <i32>oget(p, O_M), rr = <i32>oget(p, O_R), g = <i32>oget(p, O_G);
  const column = <usize>n << 4, v = <usize>mm * column, bytes = <usize>(rr + 1) * v;
  const stages = <usize>oget(p, O_STAGES), xp = <usize>oget(p, part == 1 ? O_XB : O_XA);
  const ph = <usize>oget(p, O_PH), op = <usize>oget(p, O_OP);
  const coefs = <usize>oget(p, O_COEFS), node = <usize>oget(p, O_NODE), done = p + (O_DONE << 3);
  if (part == 1 && s > 0 && g > 0) {
    // order g's rate up to stage s − 1 (the first half's), for c_g's stage values
    let spins = 0;
    while (atomic.load<i64>(done) < <i64>s) {
      if (++spins > 100000) atomic.wait<i64>(done, atomic.load<i64>(done), 100000);
    }
  }
  const first = (g + 1) * mm, second = (rr - 1 - g) * mm;
  const inputs = part == 0 ? first : part == 1 ? second : first + second;
  if (part != 1) {
    packValues(p, s, rr, 1, xp, 0, inputs, load<f64>(p + (O_LAMBDA << 3)));
    packValues(p, s, 0, g, xp, mm, inputs, 1.0);
  }
  if (part != 0) packValues(p, s, g, rr - 1 - g, xp, part == 2 ? first : 0, inputs, 1.0);
  const kout = stages + <usize>s * bytes, c = coefs + <usize>s * node, phase = ph + <usize>s * column;
  // −i·e^{iEτ}∘(f·W u): orders g+1…N (part 1), or the exact state's and orders 1…g (…N)
  const out = part == 1 ? kout + <usize>(g + 1) * v : kout;
  packedRows(op, n, xp, out, inputs, cre(c), cim(c), 0, n, phase);
  if (part == 1) return;
  memory.copy(kout + <usize>rr * v, kout, v);
  memory.fill(kout, 0, v);
  if (part == 0) atomic.store<i64>(done, <i64>(s + 1));
}

/**
 * Stage s's interaction-picture values of the stacked vectors from…from+count−1 (mm d-vectors each), times `scale`,
 * packed for a product of `inputs` d-vectors (see packRows), the run's first d-vector in slot `slot`: e^{−iEτ}∘(y0 +
 * h Σ_{j<s} a_sj k_j), c_0's the start's. Orders next to each other are summed in one call (long runs of entries).
 */
function packValues(p: usize, s: i32, from: i32, count: i32, xp: usize, slot: i32, inputs: i32, scale: f64): void {
  const n = <i32>oget(p, O_D), mm = <i32>oget(p, O_M), rr = <i32>oget(p, O_R);
  const column = <usize>n << 4, v = <usize>mm * column, bytes = <usize>(rr + 1) * v;
  const stages = <usize>oget(p, O_STAGES), y0 = <usize>oget(p, O_Y0), z = <usize>oget(p, O_Z);
  const h = load<f64>(p + (O_H << 3)), phase = <usize>oget(p, O_PH) + <usize>s * column;
  let first = from, to = slot;
  if (from == 0 || s == 0) {
    // c_0's values (all of them at stage 0) are the start's
    const start = s == 0 ? count : 1;
    phasePack(xp, to, inputs, y0 + <usize>from * v, start * mm, n, phase, scale);
    first += start;
    to += start * mm;
  }
  const rest = from + count - first;
  if (rest <= 0) return;
  const off = <usize>first * v;
  stageSum(z + off, y0 + off, <usize>rest * <usize>mm * <usize>n, h, SUM_A, s, s, bytes, off, stages);
  phasePack(xp, to, inputs, z + off, rest * mm, n, phase, scale);
}

/**
 * Slots slot…slot+count−1 of a packed product of `inputs` d-vectors (see packRows) ← scale·conj(p)∘src_b for the
 * d-vectors src_b one after another at src (the operations of phaseIn, so the same values as phasing, then packing).
 */
function phasePack(xp: usize, slot: i32, inputs: i32, src: usize, count: i32, n: i32, ph: usize, scale: f64): void {
  const rp = (inputs + 1) & ~1, per = <usize>rp << 4, half = <usize>rp << 3, column = <usize>n << 4;
  // an odd count's last vector sits alone, as (re, im) in its pair's real slot
  const lone = (inputs & 1) != 0 && slot + count == inputs, paired = lone ? count - 1 : count;
  const flip = f64x2(scale, -scale), sc = f64x2.splat(scale), to = xp + (<usize>slot << 3);
  for (let a = 0; a < n; a++) {
    const o = <usize>a << 4, q = v128.load(ph + o), row = to + <usize>a * per;
    const pr = f64x2.mul(v128.shuffle<f64>(q, q, 0, 0), sc), pi = f64x2.mul(v128.shuffle<f64>(q, q, 1, 1), flip);
    let from = src + o;
    for (let b = 0; b < paired; b++) {
      const u = phased(pr, pi, v128.load(from));
      const at = row + (<usize>b << 3);
      store<f64>(at, f64x2.extract_lane(u, 0));
      store<f64>(at + half, f64x2.extract_lane(u, 1));
      from += column;
    }
    if (lone) {
      v128.store(row + (<usize>paired << 3), phased(pr, pi, v128.load(from)));
    }
  }
}

/**
 * Whether c_0 has a zero rate at every stage (so that sums over the stages leave it as it was): always in the
 * dense interaction picture; with sparse terms, when H0 is diagonal (an off-diagonal part moves c_0).
 */
function constantFirst(): bool {
  return !sparse || !h0OffDiagonal;
}

/**
 * An accuracy-driven step of the interaction-picture scheme: one Dormand–Prince 8(5,3) step of h from τ on the
 * whole stacked state (the fine buffer holds the coefficients at the 12 stage times τ + c_i h). The start is kept
 * for {@link rejectStep}. The local error estimate, read with {@link stepError}, is the pair's combined
 * estimate ‖e5‖²/√(‖e5‖² + 0.01‖e3‖²) (e5, e3 the differences to the embedded 5th- and 3rd-order solutions),
 * the largest over the exact state and every partial sum; the exact state's error vector grows by e5 scaled
 * the same way. Returns an error code.
 */
export function rkStep(tau: f64, h: f64): i32 {
  adaptive = true;
  const bytes = <usize>(r + 1) * vec, n = <usize>(r + 1) * <usize>dm;
  memory.copy(save, series, bytes + vec);
  stagePhases(tau, h);
  rkStages(h, series, series, !startRateValid);
  memory.fill(rkE5, 0, bytes);
  memory.fill(rkE3, 0, bytes);
  // (c_0's rates are zero where it is constant: its error vectors stay zero)
  const skip = constantFirst() ? vec : 0, entries = n - (skip >> 4);
  stageSum(rkE5 + skip, rkE5 + skip, entries, h, SUM_E5, 0, RK_STAGES, bytes, skip);
  stageSum(rkE3 + skip, rkE3 + skip, entries, h, SUM_E3, 0, RK_STAGES, bytes, skip);
  // Partial sums' errors accumulate order by order; the exact state's is its own.
  for (let v = 1; v < r; v++) {
    axpy(rkE5 + <usize>v * vec, 1.0, rkE5 + <usize>(v - 1) * vec, <usize>dm);
    axpy(rkE3 + <usize>v * vec, 1.0, rkE3 + <usize>(v - 1) * vec, <usize>dm);
  }
  // each column is a state of its own: the largest estimate over columns (not a norm over all of them)
  let worst = 0.0;
  const column = <usize>d << 4;
  for (let v = 0; v <= r; v++) {
    for (let c = 0; c < m; c++) {
      const e5 = rkE5 + <usize>v * vec + <usize>c * column, e3 = rkE3 + <usize>v * vec + <usize>c * column;
      const s5 = norm2(e5, d), s3 = norm2(e3, d);
      const denominator = Math.sqrt(s5 + 0.01 * s3);
      worst = max(worst, denominator > 0 ? s5 / denominator : 0.0);
      if (v == r && denominator > 0) axpy(errv + <usize>c * column, Math.sqrt(s5) / denominator, e5, <usize>d);
    }
  }
  lastError = worst;
  startRateValid = false;
  return ERR_OK;
}

/**
 * The state at a recorded time inside the last accepted Runge–Kutta step: one step of h from that step's start
 * (the fine buffer holds the coefficients at its stage times) into the companion buffer, which
 * {@link recordSample} then records. The main state is not touched.
 */
export function rkSample(tau: f64, h: f64): i32 {
  stagePhases(tau, h);
  rkStages(h, save, comp, false);
  return ERR_OK;
}

// ------------------------------------------------------------------ sparse operators (CSR)

@inline function csrField(k: i32, f: i32): usize {
  return csrTable + <usize>k * 48 + (<usize>f << 3);
}

/**
 * Room for term k's CSR arrays (nnz non-zeros): rowStart (d+1 i32), column (nnz i32), values (nnz complex),
 * filled by TypeScript through {@link sparseRowStart}, {@link sparseColumn}, {@link sparseValues}. Returns an
 * error code.
 */
export function allocSparseTerm(k: i32, nnz: i32): i32 {
  const rows = arenaAlloc(<usize>(d + 1) << 2), cols = arenaAlloc(<usize>max(nnz, 1) << 2);
  const vals = arenaAlloc(<usize>max(nnz, 1) << 4);
  if (rows == 0 || cols == 0 || vals == 0) return ERR_MEMORY;
  store<u64>(csrField(k, 0), <u64>rows);
  store<u64>(csrField(k, 1), <u64>cols);
  store<u64>(csrField(k, 2), <u64>vals);
  store<u64>(csrField(k, 3), <u64>nnz);
  return ERR_OK;
}
export function sparseRowStart(k: i32): usize { return <usize>load<u64>(csrField(k, 0)); }
export function sparseColumn(k: i32): usize { return <usize>load<u64>(csrField(k, 1)); }
export function sparseValues(k: i32): usize { return <usize>load<u64>(csrField(k, 2)); }

/** Per term: the ∞-norm (largest row sum of moduli) and the trace's real part, for sub-steps and the shift. */
function prepareSparse(): void {
  h0OffDiagonal = false;
  for (let k = 0; k < k0 + kv; k++) {
    const rows = sparseRowStart(k), cols = sparseColumn(k), vals = sparseValues(k);
    let norm = 0.0, trace = 0.0;
    for (let i = 0; i < d; i++) {
      let sum = 0.0;
      const end = load<i32>(rows + (<usize>(i + 1) << 2));
      for (let q = load<i32>(rows + (<usize>i << 2)); q < end; q++) {
        const p = vals + (<usize>q << 4);
        sum += Math.sqrt(cre(p) * cre(p) + cim(p) * cim(p));
        if (load<i32>(cols + (<usize>q << 2)) == i) trace += cre(p);
        else if (k < k0) h0OffDiagonal = true;
      }
      norm = max(norm, sum);
    }
    store<f64>(csrField(k, 4), norm);
    store<f64>(csrField(k, 5), trace);
  }
}

/** The shift μ of the current generator D (its mean diagonal). */
function sparseShift(): f64 {
  let tr = 0.0;
  const last = sparseExact ? k0 + kv : k0;
  for (let k = 0; k < last; k++) {
    const c = sparseCoefs + (<usize>k << 4);
    tr += (k >= k0 ? lambda : 1.0) * cre(c) * load<f64>(csrField(k, 5));
  }
  return tr / <f64>d;
}

/** A bound on ‖D‖ + ‖B‖ of the current generator: Σ |c_k|·‖term_k‖∞. */
function sparseNorm(): f64 {
  let n = 0.0;
  for (let k = 0; k < k0 + kv; k++) {
    const c = sparseCoefs + (<usize>k << 4);
    n += (k >= k0 && sparseExact ? Math.abs(lambda) : 1.0) * Math.sqrt(cre(c) * cre(c) + cim(c) * cim(c)) *
      load<f64>(csrField(k, 4));
  }
  return n;
}

/**
 * out (orders low..rr−1) += α·(D − μ)·inp_n + α·B·inp_{n−1} with the current sparse generator: D = Σ c_k H0_k
 * (+ λ Σ c_k V_k for the exact state, which has no B), B = Σ c_k V_k for the series.
 */
function applySparse(out: usize, inp: usize, rr: i32, low: i32, mu: f64, ar: f64, ai: f64): void {
  const count = (rr - low) * m;
  for (let k = 0; k < k0 + kv; k++) {
    const c = sparseCoefs + (<usize>k << 4);
    let cr = cre(c), ci = cim(c);
    if (cr == 0 && ci == 0) continue;
    const rows = sparseRowStart(k), cols = sparseColumn(k), vals = sparseValues(k);
    const nnz = <f64>load<u64>(csrField(k, 3));
    if (k < k0 || sparseExact) {
      if (k >= k0) {
        cr *= lambda;
        ci *= lambda;
      }
      zcsrmv(rows, cols, vals, d, inp + <usize>low * vec, out + <usize>low * vec, count, ar * cr - ai * ci, ar * ci + ai * cr);
      kernelFlops += 8.0 * nnz * <f64>count;
    } else if (rr - 1 > low) {
      zcsrmv(rows, cols, vals, d, inp + <usize>low * vec, out + <usize>(low + 1) * vec, (rr - 1 - low) * m,
        ar * cr - ai * ci, ar * ci + ai * cr);
      kernelFlops += 8.0 * nnz * <f64>((rr - 1 - low) * m);
    }
  }
  if (mu != 0) {
    const n = <usize>(rr - low) * dm, base = <usize>low * vec;
    for (let e: usize = 0; e < n; e++) {
      const p = inp + base + (e << 4), o = out + base + (e << 4);
      const xr = cre(p), xi = cim(p);
      cset(o, cre(o) - mu * (ar * xr - ai * xi), cim(o) - mu * (ar * xi + ai * xr));
    }
  }
}

/**
 * One step of the 4th-order commutator-free integrator with sparse terms: the two factors' coefficients per term
 * (α₁f(t₁) + α₂f(t₂), then α₂f(t₁) + α₁f(t₂)) from the samples of step `step` of buf, applied to the series (if
 * ser ≠ 0) and to nEx exact-state vectors at ex.
 */
function sparseStep(buf: usize, step: i32, h: f64, ser: usize, ex: usize, nEx: i32): i32 {
  let err = ERR_OK;
  for (let factor = 0; factor < 2; factor++) {
    for (let k = 0; k < k0 + kv; k++) {
      const f1 = coefAt(buf, step, 0, k), f2 = coefAt(buf, step, 1, k);
      const a = factor == 0 ? A1 : A2, b = factor == 0 ? A2 : A1;
      cset(sparseCoefs + (<usize>k << 4), a * cre(f1) + b * cre(f2), a * cim(f1) + b * cim(f2));
    }
    if (ser != 0) {
      sparseExact = false;
      err |= expBlock(h, r, MODE_SPARSE, 0, 1.0, 0, ser);
    }
    sparseExact = true;
    err |= expBlock(h, nEx, MODE_SPARSE, 0, 1.0, 0, ex);
  }
  return err;
}
