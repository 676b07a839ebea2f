/**
 * Work and memory a case would take, checked before anything large is built:
 * a case the engine could not hold, or would take hours over, is refused with
 * the numbers rather than left to fail or appear to hang.
 *
 * @module
 */

import { forEachEntry } from "./sparse_matrix.ts";
import { CaseError } from "./errors.ts";
import { toComplex } from "./expression.ts";
import type { AssembledTerm } from "./terms.ts";
import { estimateMemory, type Model, RECORD_LIMIT_BYTES, WASM_LIMIT_BYTES } from "../../engine/model.ts";

function gib(bytes: number): string {
  return (bytes / 1024 ** 3).toFixed(bytes < 1024 ** 3 ? 3 : 1);
}

/**
 * Refuses a case whose engine memory or recorded states would exceed the limits.
 *
 * @param shape dimension, order, samples, the number of H0 and V matrices, and of initial states run together
 * @throws {CaseError} with the estimate and what to shrink
 */
export function checkMemory(
  shape: {
    dim: number;
    order: number;
    samples: number;
    unperturbed: number;
    perturbation: number;
    columns?: number;
    /** Operators stored sparse: no d×d matrix (their non-zeros are checked once assembled). */
    sparse?: boolean;
    /** The assembled model, when there is one (its sparse terms' non-zeros count). */
    model?: Model;
  },
): void {
  const memory = estimateMemory({
    dim: shape.dim,
    columns: shape.columns ?? 1,
    sparse: shape.sparse ?? false,
    order: shape.order,
    samples: shape.samples,
    unperturbed: shape.model?.unperturbed ?? Array(shape.unperturbed),
    perturbation: shape.model?.perturbation ?? Array(shape.perturbation),
  });
  if (memory.wasmBytes > WASM_LIMIT_BYTES) {
    throw new CaseError(
      `the engine would need about ${gib(memory.wasmBytes)} GiB (mostly ${memory.largest}), ` +
        `more than the ${gib(WASM_LIMIT_BYTES)} GiB it can address (32-bit WebAssembly memory)`,
      [],
      "shrink the space (fewer levels or a lower oscillator cutoff) or lower [series] order",
    );
  }
  if (memory.recordBytes > RECORD_LIMIT_BYTES) {
    throw new CaseError(
      `the recorded states would take about ${gib(memory.recordBytes)} GiB (${memory.largest}), ` +
        `more than the ${gib(RECORD_LIMIT_BYTES)} GiB ordo allows for them`,
      ["grid", "samples"],
      "record fewer samples (the integrator steps do not cost memory), or lower [series] order",
    );
  }
}

/** The most integrator steps a run may take (10⁸ steps of a two-level case already take minutes). */
export const MAX_STEPS = 1e8;

/** Estimated floating-point work a run may take: about a day at the engine's measured rate. */
export const MAX_WORK_FLOPS = 1e15;

/**
 * Refuses a stepped run (some coefficient depends on t) whose step count or estimated work is absurd, before
 * any matrix is built or any node is visited: about 3 exponentials per step (one step of h, half a step of
 * 2h for the step-doubling reference, two factors each), each ≈ 12 Taylor terms on the N + 2 stacked vectors
 * (Dyson terms, exact, check) at 8d² flops a product.
 *
 * @param shape dimension, Dyson order and the requested steps
 */
export function guardSteppedWork(
  shape: { dim: number; order: number; steps: number; sparse?: boolean },
): void {
  const { dim, order, steps } = shape;
  // a product costs 8d² flops dense; sparse, 8 per non-zero (counted here as at most 64 a row)
  const perProduct = shape.sparse ? 8 * 64 * dim : 8 * dim * dim;
  if (steps > MAX_STEPS) {
    throw new CaseError(
      `steps = ${steps} is more than the ${MAX_STEPS.toExponential(0)} integrator steps ordo takes`,
      ["grid", "steps"],
      "take fewer steps: see `ordo inspect` for the number the fastest phase needs",
    );
  }
  const flops = steps * 3 * 2 * 12 * (order + 2) * perProduct;
  if (flops > MAX_WORK_FLOPS) {
    throw new CaseError(
      `${steps} steps at dimension ${dim} and order ${order} would take about ${flops.toPrecision(2)} ` +
        `floating-point operations (more than ${MAX_WORK_FLOPS.toExponential(0)}, about a day)`,
      ["grid", "steps"],
      "take fewer steps, a lower order or a smaller space",
    );
  }
}

/** Taylor sub-steps the time-independent scheme may take before a case is called unreasonable. */
const MAX_SUBSTEPS = 1e7;

/**
 * A time-independent case is propagated exactly by Taylor sub-steps of ‖H‖·h ≤ 2; refuse one so long
 * (‖H‖·T in the tens of millions) that it would run for hours, rather than appear to hang.
 *
 * @param terms every assembled term
 * @param span t_end − t_start
 * @param strength λ
 */
export function guardExactWork(terms: AssembledTerm[], span: number, strength: number): void {
  if (terms.some((t) => t.coef?.usesTime)) return;
  let norm = 0;
  for (const t of terms) {
    const c = t.coef ? Math.hypot(toComplex(t.coef.at(0)).re, toComplex(t.coef.at(0)).im) : 1;
    const sums = new Float64Array(t.matrix.rows);
    forEachEntry(t.matrix, (i, _j, z) => (sums[i]! += Math.hypot(z.re, z.im)));
    const row = sums.reduce((a, b) => Math.max(a, b), 0);
    norm += c * row * (t.section === "perturbation" ? Math.max(1, Math.abs(strength)) : 1);
  }
  const substeps = norm * span / 2;
  if (substeps > MAX_SUBSTEPS) {
    throw new CaseError(
      `‖H‖·(t_end − t_start) ≈ ${norm.toPrecision(3)} × ${span.toPrecision(3)} would need about ` +
        `${substeps.toPrecision(2)} exact Taylor sub-steps`,
      ["grid", "t_end"],
      "shorten the window, or check the units: energies this large for this long are rarely meant",
    );
  }
}
