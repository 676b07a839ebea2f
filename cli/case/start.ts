/**
 * `[start]`: the initial state, a label or a list of amplitudes (normalised,
 * with a warning, when not of unit norm).
 *
 * @module
 */

import { CaseError } from "./errors.ts";
import type { StartSpec } from "./schema.ts";
import { type Scope, toComplex } from "./expression.ts";
import { entryValue } from "./params.ts";
import { listLabels, type Space } from "./space.ts";

/**
 * The initial state as interleaved (re, im) amplitudes.
 *
 * @param start the `[start]` table
 * @param space the Hilbert space
 * @param scope the params amplitudes may use
 * @param warnings receives a warning when the amplitudes had to be normalised
 * @returns the state, of unit norm
 */
export function startState(
  start: StartSpec,
  space: Space,
  scope: Scope,
  warnings: string[],
): Float64Array {
  if (start.state !== undefined && start.amplitudes !== undefined) {
    throw new CaseError("give one of state and amplitudes, not both", ["start"], 'e.g. state = "g"');
  }
  // with a subspace, the state defaults to its first label
  const state = start.state ?? (start.amplitudes === undefined ? start.subspace?.[0] : undefined);
  if (state === undefined && start.amplitudes === undefined) {
    throw new CaseError(
      "give one of state and amplitudes (or a subspace)",
      ["start"],
      'e.g. state = "g", or amplitudes = [1, 0, …], or subspace = ["g", "e"]',
    );
  }
  const psi = new Float64Array(2 * space.dim);
  if (state !== undefined) {
    const k = space.labels.indexOf(state);
    if (k < 0) {
      throw new CaseError(
        `unknown label "${state}"`,
        start.state === undefined ? ["start", "subspace", 0] : ["start", "state"],
        `labels are: ${listLabels(space)}`,
      );
    }
    psi[2 * k] = 1;
    return psi;
  }
  const amps = start.amplitudes!;
  if (amps.length !== space.dim) {
    throw new CaseError(
      `has ${amps.length} amplitudes, but the space has dimension ${space.dim}`,
      ["start", "amplitudes"],
      `give ${space.dim} amplitudes, one per level in the order ${listLabels(space)}`,
    );
  }
  amps.forEach((a, k) => {
    const z = toComplex(entryValue(a, scope, ["start", "amplitudes", k]));
    if (!Number.isFinite(z.re) || !Number.isFinite(z.im)) {
      throw new CaseError(`amplitude ${k} is not finite`, [
        "start",
        "amplitudes",
        k,
      ], "check the params it uses");
    }
    psi[2 * k] = z.re;
    psi[2 * k + 1] = z.im;
  });
  // The norm is taken after dividing by the largest modulus, so that squares cannot overflow or underflow.
  let largest = 0;
  for (const x of psi) largest = Math.max(largest, Math.abs(x));
  if (!(largest > 0)) {
    throw new CaseError(
      "all amplitudes are zero",
      ["start", "amplitudes"],
      "give a non-zero state",
    );
  }
  let scaled2 = 0;
  for (const x of psi) scaled2 += (x / largest) ** 2;
  const norm = largest * Math.sqrt(scaled2);
  if (Math.abs(norm - 1) > 5e-13) {
    warnings.push(`[start] amplitudes have norm ${norm.toPrecision(6)}; normalised to 1`);
    const root = Math.sqrt(scaled2);
    psi.forEach((x, k) => (psi[k] = x / largest / root));
  }
  return psi;
}

/**
 * The largest space whose whole propagator a gate run follows (for the Magnus terms, which need every column;
 * d columns cost about d runs' work). Larger spaces follow the subspace's columns only.
 */
export const WHOLE_PROPAGATOR_MAX_DIM = 16;

/** Initial states a gate run propagates together: the start state and all d columns, or the subspace's m. */
export function gateRunColumns(dim: number, subspaceSize: number): number {
  return 1 + (dim <= WHOLE_PROPAGATOR_MAX_DIM ? dim : subspaceSize);
}

/** The levels whose propagator columns a run follows (`[start] subspace`, or `--subspace`). */
export interface Subspace {
  labels: string[];
  /** Their indices in the space. */
  indices: number[];
}

/**
 * The subspace of a gate, checked: known labels, none twice.
 *
 * @param labels the labels as written
 * @param space the Hilbert space
 * @param fromFlag whether they came from `--subspace` (no key path then)
 * @returns the labels and their indices
 */
export function subspaceOf(labels: string[], space: Space, fromFlag: boolean): Subspace {
  const indices = labels.map((label, k) => {
    const at = space.labels.indexOf(label);
    const path = fromFlag ? [] : ["start", "subspace", k];
    if (at < 0) {
      throw new CaseError(
        `unknown label "${label}" in the subspace`,
        path,
        `labels are: ${listLabels(space)}`,
      );
    }
    if (labels.indexOf(label) !== k) {
      throw new CaseError(`"${label}" is in the subspace twice`, path, "list each level once");
    }
    return at;
  });
  return { labels, indices };
}
