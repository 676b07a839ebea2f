// Phases e^{iθ} two at a time: cos θ and sin θ of both lanes of an f64x2 with one argument reduction and one
// pair of polynomials for both, where AssemblyScript's NativeMath.sincos takes one argument at a time. The
// accuracy is that of the classic kernels (a few units in the last place on the reduced interval); arguments
// beyond REDUCED_LIMIT, and any that are not finite, go to NativeMath.sincos, which reduces exactly.
// see: Cody & Waite, Software Manual for the Elementary Functions (1980) (the three-part reduction by π/2);
//      the polynomial coefficients are those of fdlibm's __kernel_sin and __kernel_cos (Sun Microsystems, 1993),
//      written from memory and checked against Math.cos and Math.sin in tests/engine_reference_test.ts.

const INV_PIO2: f64 = 6.36619772367581382433e-01;
// π/2 in three parts, each of 33 significant bits (so k·part is exact for |k| < 2²⁰)
const PIO2_1: f64 = 1.57079632673412561417e+00;
const PIO2_2: f64 = 6.07710050630396597660e-11;
const PIO2_3: f64 = 2.02226624871116645580e-21;
/** Largest |θ| reduced here: below 2¹⁹·π/2 the three-part reduction keeps the reduced argument to ~1e-25. */
const REDUCED_LIMIT: f64 = 823550.0;

const S1: f64 = -1.66666666666666324348e-01;
const S2: f64 = 8.33333333332248946124e-03;
const S3: f64 = -1.98412698298579493134e-04;
const S4: f64 = 2.75573137070700676789e-06;
const S5: f64 = -2.50507602534068634195e-08;
const S6: f64 = 1.58969099521155010221e-10;
const C1: f64 = 4.16666666666666019037e-02;
const C2: f64 = -1.38888888888741095749e-03;
const C3: f64 = 2.48015872894767294178e-05;
const C4: f64 = -2.75573143513906633035e-07;
const C5: f64 = 2.08757232129817482790e-09;
const C6: f64 = -1.13596475577881948265e-11;

@inline function splat(x: f64): v128 { return f64x2.splat(x); }

/** (cos θ, sin θ) of one lane, from the reduced cosine c and sine s and the quadrant k (θ = kπ/2 + r). */
@inline function putPhase(out: usize, c: f64, s: f64, k: f64): void {
  const q = <i32>(<i64>k) & 3;
  let cr = c, si = s;
  if (q == 1) {
    cr = -s;
    si = c;
  } else if (q == 2) {
    cr = -c;
    si = -s;
  } else if (q == 3) {
    cr = s;
    si = -c;
  }
  store<f64>(out, cr);
  store<f64>(out, si, 8);
}

/** out (n complex) = e^{i·e_a·t}: (cos, sin) of e_a·t for n values at e (f64). */
export function phaseRow(out: usize, e: usize, n: i32, t: f64): void {
  const tt = splat(t);
  let a = 0;
  for (; a + 2 <= n; a += 2) {
    const x = f64x2.mul(v128.load(e + (<usize>a << 3)), tt);
    const x0 = f64x2.extract_lane(x, 0), x1 = f64x2.extract_lane(x, 1);
    // both within the reduced range (a NaN fails the comparison too)
    if (!(Math.abs(x0) <= REDUCED_LIMIT && Math.abs(x1) <= REDUCED_LIMIT)) {
      exact(out + (<usize>a << 4), x0);
      exact(out + (<usize>(a + 1) << 4), x1);
      continue;
    }
    const k = f64x2.nearest(f64x2.mul(x, splat(INV_PIO2)));
    let r = f64x2.sub(x, f64x2.mul(k, splat(PIO2_1)));
    r = f64x2.sub(r, f64x2.mul(k, splat(PIO2_2)));
    r = f64x2.sub(r, f64x2.mul(k, splat(PIO2_3)));
    const z = f64x2.mul(r, r);
    // sin r = r + r·z·(S1 + z·(S2 + …)), cos r = 1 − z/2 + z²·(C1 + z·(C2 + …))
    let ps = f64x2.add(splat(S5), f64x2.mul(z, splat(S6)));
    ps = f64x2.add(splat(S4), f64x2.mul(z, ps));
    ps = f64x2.add(splat(S3), f64x2.mul(z, ps));
    ps = f64x2.add(splat(S2), f64x2.mul(z, ps));
    ps = f64x2.add(splat(S1), f64x2.mul(z, ps));
    const s = f64x2.add(r, f64x2.mul(f64x2.mul(r, z), ps));
    let pc = f64x2.add(splat(C5), f64x2.mul(z, splat(C6)));
    pc = f64x2.add(splat(C4), f64x2.mul(z, pc));
    pc = f64x2.add(splat(C3), f64x2.mul(z, pc));
    pc = f64x2.add(splat(C2), f64x2.mul(z, pc));
    pc = f64x2.add(splat(C1), f64x2.mul(z, pc));
    const c = f64x2.add(f64x2.sub(splat(1.0), f64x2.mul(splat(0.5), z)), f64x2.mul(f64x2.mul(z, z), pc));
    putPhase(out + (<usize>a << 4), f64x2.extract_lane(c, 0), f64x2.extract_lane(s, 0), f64x2.extract_lane(k, 0));
    putPhase(out + (<usize>(a + 1) << 4), f64x2.extract_lane(c, 1), f64x2.extract_lane(s, 1), f64x2.extract_lane(k, 1));
  }
  if (a < n) exact(out + (<usize>a << 4), load<f64>(e + (<usize>a << 3)) * t);
}

/** (cos θ, sin θ) by NativeMath (any argument). */
@inline function exact(out: usize, theta: f64): void {
  NativeMath.sincos(theta);
  store<f64>(out, NativeMath.sincos_cos);
  store<f64>(out, NativeMath.sincos_sin, 8);
}

/** For tests: (cos θ, sin θ) of n arguments at x (f64) into out (n complex), as the engine makes its phases. */
export function phasesOf(out: usize, x: usize, n: i32): void {
  phaseRow(out, x, n, 1.0);
}
