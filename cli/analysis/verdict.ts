/**
 * From the engine's recorded states to what the user is told: per order the
 * population of the partial sum, its error against the exact state, the
 * a-priori bound, the probability at consistent order and the term-norm
 * ratio; then the verdict (smallest order within tolerance, first order
 * within 1% / 10%, growing terms, whether the reference is good enough).
 *
 * @module
 */

import { PHASE_PER_STEP_LIMIT, type Result } from "../../engine/mod.ts";

/** One row of the order table for one target. */
export interface OrderRow {
  order: number;
  /** |Σ_{m≤n} ψ_m|² on the target. */
  population: number;
  /** |population − exact|. */
  error: number;
  /** A-priori bound on the population error from ‖Σ_{m>n} ψ_m‖ ≤ e^x − Σ_{m≤n} xᵐ/m!. */
  bound: number;
  /** Σ_{k≤n} Σ_{m+l=k} Re(c_m* c_l): the probability expanded consistently to order n in λ. */
  consistent: number;
  /** ‖ψ_n‖/‖ψ_{n−1}‖ (whole state), NaN for n = 0 or a zero denominator. */
  ratio: number;
}

/** The verdict for one target. */
export interface TargetVerdict {
  label: string;
  exact: number;
  rows: OrderRow[];
  /** Smallest order within tolerance (and above the reference error), or null. */
  minOrder: number | null;
  /** Relative error of the first-order partial sum (NaN when exact is 0). */
  firstOrderRelative: number;
  /** The lowest order whose partial sum is not zero on this target (null if none is). */
  leadingOrder: number | null;
  /** Relative error of the partial sum at the leading order (NaN when exact is 0 or no leading order). */
  leadingRelative: number;
}

/** Everything `run` reports about one time. */
export interface Analysis {
  time: number;
  sample: number;
  tolerance: number;
  /** The relative tolerance on populations (0: none; `tolerance` is then the floor). */
  relative: number;
  /** Estimated error of the exact populations (largest over targets and times). */
  referenceError: number;
  /** The reference is good enough to judge orders at the tolerance (and nothing below makes it untrustworthy). */
  referenceOk: boolean;
  /** Why the run cannot be trusted to judge orders (empty when it can): aliasing, a drifting norm. */
  untrusted: string[];
  /** Largest |‖ψ_exact‖² − 1| over the recorded times. */
  normDrift: number;
  /** Norm of each Dyson term at this time. */
  termNorms: number[];
  /** Terms grow with order at the top of the series. */
  growing: boolean;
  targets: TargetVerdict[];
}

/** How fast the Hamiltonian turns per integrator step (0 for the time-independent scheme, which takes none). */
export interface Resolution {
  /** The fastest phase per step: max(largest coupled |E_a − E_b|, fastest coefficient rate) × h, in rad. */
  phasePerStep: number;
  /** A relative tolerance on populations (0 or absent: none): a population passes within max(abs, rel·P). */
  relative?: number;
  /**
   * The accuracy the steps were chosen for, when they were: the estimate is then judged together with it (the
   * larger of the two), since step doubling can under-read the error where a coefficient is not smooth.
   */
  accuracy?: number;
  /** The phase per step the stepping method resolves (default {@link MAX_PHASE_PER_STEP}). */
  phaseLimit?: number;
  /**
   * The norm drift the method may show without anything being wrong (default {@link MAX_NORM_DRIFT}; a
   * Runge–Kutta run, which does not preserve the norm exactly, may drift by its accuracy).
   */
  driftLimit?: number;
}

/**
 * How a run resolved its Hamiltonian: its phase per step against its method's limit, its accuracy, and the norm
 * drift its method allows.
 *
 * @param result the engine's result
 * @param rate the fastest coupled phase or coefficient rate (rad per time unit)
 * @param accuracy the accuracy the steps were chosen for, if any
 * @param relative the relative tolerance on populations, if any
 */
export function resolutionOf(result: Result, rate: number, accuracy?: number, relative?: number): Resolution {
  const method = result.method;
  return {
    phasePerStep: rate * result.stepSize,
    accuracy: result.scheme === "time-independent" ? undefined : accuracy,
    relative,
    phaseLimit: method ? PHASE_PER_STEP_LIMIT[method] : MAX_PHASE_PER_STEP,
    driftLimit: method === "runge-kutta-8" ? Math.max(MAX_NORM_DRIFT, accuracy ?? 0) : MAX_NORM_DRIFT,
  };
}

/** Phase per step above which a stepped scheme cannot resolve the fastest oscillation (sampling, not accuracy). */
export const MAX_PHASE_PER_STEP = 1;

/**
 * The norm of the exact state may drift from 1 by round-off only: each step applies exponentials of a
 * Hermitian matrix summed to round-off (≈1e-16 per step, so ≈1e-10 after 10⁶ steps). More means H was not
 * Hermitian somewhere or the numbers overflowed.
 */
export const MAX_NORM_DRIFT = 1e-8;

/** e^x − Σ_{m≤n} xᵐ/m!, summed from the tail for accuracy. */
export function tailBound(x: number, n: number): number {
  // Σ_{m>n} xᵐ/m! = e^x·P(n+1, x) computed by the series from m = n+1 on.
  let term = 1;
  for (let m = 1; m <= n + 1; m++) term *= x / m;
  let sum = 0;
  for (let m = n + 1; m < n + 2000; m++) {
    sum += term;
    term *= x / (m + 1);
    if (term < 1e-17 * sum) break;
  }
  return sum;
}

function amp(
  states: Float64Array,
  d: number,
  k: number,
  a: number,
): [number, number] {
  return [states[2 * (k * d + a)]!, states[2 * (k * d + a) + 1]!];
}

function stateNorm(states: Float64Array, d: number, k: number): number {
  let s = 0;
  for (let a = 0; a < 2 * d; a++) s += states[2 * k * d + a]! ** 2;
  return Math.sqrt(s);
}

/**
 * Analyses one recorded time.
 *
 * @param result the engine's result
 * @param labels the basis labels
 * @param targets the labels to report
 * @param normIntegral x = ∫‖λV‖dt from the start up to the reported time
 * @param tolerance absolute tolerance on populations
 * @param sample which recorded time (default: the last)
 * @param resolution how fast H turns per step (omit for a time-independent run)
 * @returns the table and verdict
 */
export function analyse(
  result: Result,
  labels: string[],
  targets: string[],
  normIntegral: number,
  tolerance: number,
  sample = result.times.length - 1,
  resolution: Resolution = { phasePerStep: 0 },
): Analysis {
  const d = labels.length;
  const k = sample;
  const termNorms = result.terms.map((t) => stateNorm(t, d, k));
  const referenceError = referenceErrorOf(result, labels, targets);
  const normDrift = normDriftOf(result.exact, d);
  const untrusted = distrust(resolution, normDrift);
  const judged = Math.max(referenceError, resolution.accuracy ?? 0);
  const relative = resolution.relative ?? 0;
  // the smallest error any target is allowed, at the reported time
  let tightest = Infinity;
  for (const label of targets) {
    const a = labels.indexOf(label);
    const [er, ei] = amp(result.exact, d, k, a);
    tightest = Math.min(tightest, Math.max(tolerance, relative * (er * er + ei * ei)));
  }
  const referenceOk = judged <= 0.1 * tightest && untrusted.length === 0;
  const verdicts = targets.map((label) =>
    targetVerdict(result, { d, a: labels.indexOf(label), label, k }, {
      termNorms,
      x: normIntegral,
      tolerance,
      relative,
      referenceOk,
    })
  );
  const top = termNorms.length;
  const growing = top >= 3 && termNorms[top - 1]! > termNorms[top - 2]! &&
    termNorms[top - 2]! > termNorms[top - 3]! &&
    termNorms[top - 1]! > 1e-12;
  return {
    time: result.times[k]!,
    sample: k,
    tolerance,
    relative,
    referenceError,
    referenceOk,
    untrusted,
    normDrift,
    termNorms,
    growing,
    targets: verdicts,
  };
}

/** The reference's own error estimate: the largest |P_exact − P_check|/divisor over targets and samples. */
function referenceErrorOf(result: Result, labels: string[], targets: string[]): number {
  const d = labels.length;
  let referenceError = 0;
  for (let s = 0; s < result.times.length; s++) {
    for (const label of targets) {
      const a = labels.indexOf(label);
      const [er, ei] = amp(result.exact, d, s, a),
        [cr, ci] = amp(result.check, d, s, a);
      referenceError = Math.max(
        referenceError,
        Math.abs(er * er + ei * ei - cr * cr - ci * ci) / result.checkDivisor,
      );
    }
  }
  return referenceError;
}

/** The order table and verdict of one target (basis index a of d) at sample k. */
function targetVerdict(
  result: Result,
  { d, a, label, k }: { d: number; a: number; label: string; k: number },
  { termNorms, x, tolerance, relative, referenceOk }: {
    termNorms: number[];
    x: number;
    tolerance: number;
    relative: number;
    referenceOk: boolean;
  },
): TargetVerdict {
  const [er, ei] = amp(result.exact, d, k, a);
  const exact = er * er + ei * ei;
  const c = result.terms.map((t) => amp(t, d, k, a));
  let sr = 0, si = 0, consistent = 0;
  const rows: OrderRow[] = [];
  for (let n = 0; n < result.terms.length; n++) {
    sr += c[n]![0];
    si += c[n]![1];
    // p_n = Σ_{m+l=n} Re(c_m* c_l)
    for (let m = 0; m <= n; m++) {
      consistent += c[m]![0] * c[n - m]![0] + c[m]![1] * c[n - m]![1];
    }
    const population = sr * sr + si * si;
    const eps = tailBound(x, n);
    rows.push({
      order: n,
      population,
      error: Math.abs(population - exact),
      bound: Math.min(1, eps * (2 + eps)),
      consistent,
      ratio: n > 0 && termNorms[n - 1]! > 0 ? termNorms[n]! / termNorms[n - 1]! : NaN,
    });
  }
  // No order is called converged below what the reference itself can resolve.
  const allowed = Math.max(tolerance, relative * exact);
  const hit = referenceOk ? rows.find((r) => r.error <= allowed) : undefined;
  const first = rows[1];
  // Leading order: the first partial sum that is not zero at round-off level (relative to the exact value).
  const lead = rows.find((r) => r.population > 1e-14 * Math.max(exact, 1e-300));
  return {
    label,
    exact,
    rows,
    minOrder: hit ? hit.order : null,
    firstOrderRelative: first && exact > 0 ? first.error / exact : NaN,
    leadingOrder: lead ? lead.order : null,
    leadingRelative: lead && exact > 0 ? lead.error / exact : NaN,
  };
}

/** Largest |‖ψ‖² − 1| over the recorded states. */
function normDriftOf(states: Float64Array, d: number): number {
  let drift = 0;
  for (let k = 0; k < states.length / (2 * d); k++) {
    drift = Math.max(drift, Math.abs(stateNorm(states, d, k) ** 2 - 1));
  }
  return drift;
}

/** The reasons a run cannot judge orders, however small its step-doubling estimate. */
function distrust(resolution: Resolution, normDrift: number): string[] {
  const reasons: string[] = [];
  const phaseLimit = resolution.phaseLimit ?? MAX_PHASE_PER_STEP;
  if (!(resolution.phasePerStep <= phaseLimit)) {
    reasons.push(
      `the steps cannot resolve the fastest phase: ${resolution.phasePerStep.toPrecision(3)} rad per step ` +
        `(at most ${phaseLimit} is needed); the exact populations may be aliased and the step-doubling ` +
        "estimate cannot tell; raise [grid] steps (see `ordo inspect`)",
    );
  }
  if (!(normDrift <= (resolution.driftLimit ?? MAX_NORM_DRIFT))) {
    reasons.push(
      `the exact state's norm drifts from 1 by ${normDrift.toPrecision(3)}, more than round-off: ` +
        "H is not Hermitian at some time, or the numbers overflowed",
    );
  }
  return reasons;
}
