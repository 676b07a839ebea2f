/**
 * The Hilbert space of a case: `[levels]` (one system with named levels),
 * `[subsystems]` (named factors of a tensor product: labelled levels, spins,
 * truncated oscillators), or, with neither, the dimension of the first
 * explicit matrix.
 *
 * @module
 */

import { CaseError, type KeyPath } from "./errors.ts";
import type { CaseSource } from "./parse.ts";
import type { CaseSpec } from "./schema.ts";

/** What a subsystem name must look like (it is written as a subscript: `a_mode`). */
const SUBSYSTEM_NAME = /^[A-Za-z_][A-Za-z0-9_]*$/;

/** One factor of the composite space. */
export interface Subsystem {
  name: string;
  kind: "levels" | "oscillator" | "spin";
  labels: string[];
  /** Spin quantum number s (kind "spin"). */
  spin?: number;
}

/** The Hilbert space: subsystems in tensor order, and the product labels. */
export interface Space {
  subsystems: Subsystem[];
  /** Labels of the product basis, subsystem labels joined by ",". */
  labels: string[];
  dim: number;
  /** How operators on it are stored (default dense): sparse ones hold their non-zeros only. */
  storage?: "dense" | "sparse";
}

/**
 * The largest dimension ordo builds labels for. Dense operators stop far below it (the memory estimate refuses
 * them); this bound refuses absurd sizes before a single label is made.
 */
export const MAX_DIM = 1_000_000;

function tooLarge(dim: number, what: string, path: KeyPath): CaseError {
  return new CaseError(
    `${what} has dimension ${dim.toPrecision(3)}, more than the ${MAX_DIM} levels ordo can describe`,
    path,
    "keep fewer levels (a lower oscillator cutoff, fewer subsystems)",
  );
}

/** Labels of spin s: m = s, s−1, …, −s written "+1/2", "0", "-1". */
export function spinLabels(s: number): string[] {
  const out: string[] = [];
  for (let k = 0; k <= 2 * s; k++) {
    const twice = Math.round(2 * s) - 2 * k;
    const text = twice % 2 === 0 ? String(Math.abs(twice / 2)) : `${Math.abs(twice)}/2`;
    out.push(twice === 0 ? "0" : (twice > 0 ? "+" : "-") + text);
  }
  return out;
}

/** Builds the space from its subsystems (first is most significant in the product basis). */
export function productSpace(subsystems: Subsystem[]): Space {
  let labels = [""];
  for (const sub of subsystems) {
    labels = labels.flatMap((prefix) => sub.labels.map((l) => (prefix ? `${prefix},${l}` : l)));
  }
  return { subsystems, labels, dim: labels.length };
}

/** The first labels of a space, for messages. */
export function listLabels(space: Space): string {
  return space.labels.slice(0, 16).join(", ") +
    (space.labels.length > 16 ? `, … (${space.labels.length} in all)` : "");
}

/**
 * The space a case declares.
 *
 * @param source the parsed case
 * @returns its space
 * @throws {CaseError} for bad labels or subsystems, or when neither levels nor explicit matrices fix the dimension
 */
export function buildSpace(source: CaseSource): Space {
  const spec = source.spec;
  if (spec.levels && spec.subsystems) {
    throw new CaseError("both [levels] and [subsystems] are given", [
      "subsystems",
    ], "use [levels] for one system, [subsystems] for a composite one");
  }
  if (spec.levels) return levelsSpace(spec.levels);
  if (spec.subsystems) return compositeSpace(spec.subsystems);
  return implicitSpace(spec);
}

function checkLabels(labels: string[], path: KeyPath): void {
  const seen = new Set<string>();
  labels.forEach((label, k) => {
    if (!label || /[,|<>]/.test(label)) {
      throw new CaseError(
        `level label "${label}" is empty or contains , | < or >`,
        [...path, k],
        "use short names such as g, e, f",
      );
    }
    if (seen.has(label)) {
      throw new CaseError(`level label "${label}" appears twice`, [
        ...path,
        k,
      ], "give each level its own name");
    }
    seen.add(label);
  });
}

function levelsSpace(levels: NonNullable<CaseSpec["levels"]>): Space {
  const { names, count } = levels;
  if ((names === undefined) === (count === undefined)) {
    throw new CaseError(
      "give exactly one of names and count",
      ["levels"],
      'e.g. names = ["g", "e"], or count = 100 for levels "0" … "99"',
    );
  }
  if (count !== undefined && count > MAX_DIM) throw tooLarge(count, "[levels]", ["levels", "count"]);
  const labels = names ?? Array.from({ length: count! }, (_, k) => String(k));
  checkLabels(labels, ["levels", "names"]);
  return productSpace([{ name: "levels", kind: "levels", labels }]);
}

function compositeSpace(declared: NonNullable<CaseSpec["subsystems"]>): Space {
  const subsystems: Subsystem[] = [];
  let dim = 1;
  for (const [name, sub] of Object.entries(declared)) {
    const size = sub.levels?.length ?? sub.oscillator ?? (sub.spin !== undefined ? 2 * sub.spin + 1 : 1);
    dim *= size;
    if (!(dim <= MAX_DIM)) throw tooLarge(dim, `the product space up to ${name}`, ["subsystems", name]);
  }
  for (const [name, sub] of Object.entries(declared)) {
    const path = ["subsystems", name];
    if (!SUBSYSTEM_NAME.test(name)) {
      throw new CaseError(
        `"${name}" is not a usable subsystem name`,
        path,
        "use letters, digits and _",
      );
    }
    const kinds = (["levels", "oscillator", "spin"] as const).filter((k) => sub[k] !== undefined);
    if (kinds.length !== 1) {
      throw new CaseError(
        `subsystem ${name} must have exactly one of levels, oscillator, spin (has ${
          kinds.join(", ") || "none"
        })`,
        path,
        `e.g. ${name} = { levels = ["g", "e"] }, { oscillator = 6 } (Fock states 0…5) or { spin = 0.5 }`,
      );
    }
    if (sub.levels) {
      checkLabels(sub.levels, [...path, "levels"]);
      subsystems.push({ name, kind: "levels", labels: sub.levels });
    } else if (sub.oscillator !== undefined) {
      subsystems.push({
        name,
        kind: "oscillator",
        labels: Array.from({ length: sub.oscillator }, (_, k) => String(k)),
      });
    } else {
      const s = sub.spin!;
      if (!(s > 0) || !Number.isInteger(2 * s) || s > 50) {
        throw new CaseError(
          `spin = ${s} is not a positive multiple of 1/2 (up to 50)`,
          [...path, "spin"],
          "use 0.5, 1, 1.5, …",
        );
      }
      subsystems.push({ name, kind: "spin", labels: spinLabels(s), spin: s });
    }
  }
  if (subsystems.length === 0) {
    throw new CaseError(
      "[subsystems] is empty",
      ["subsystems"],
      "declare at least one subsystem",
    );
  }
  return productSpace(subsystems);
}

/** Neither [levels] nor [subsystems]: the dimension comes from the first explicit matrix. */
function implicitSpace(spec: CaseSpec): Space {
  const first = [
    spec.unperturbed,
    ...(spec.unperturbed.terms ?? []),
    spec.perturbation,
    ...(spec.perturbation.terms ?? []),
  ]
    .find((t) => Array.isArray(t.matrix))?.matrix;
  if (!Array.isArray(first)) {
    throw new CaseError(
      "operator notation needs named levels",
      ["levels"],
      'add [levels] names = ["g", "e", …] or a [subsystems] table, or give explicit matrices',
    );
  }
  return productSpace([{
    name: "levels",
    kind: "levels",
    labels: first.map((_, k) => String(k)),
  }]);
}
