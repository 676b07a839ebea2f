/**
 * From a parsed case to the engine's model: params evaluated, the space and
 * its labels, the window and series settings, every term assembled and
 * checked (shape, finiteness, Hermiticity), the start state, and the work and
 * memory limits. Each step lives in its own file; this one puts them in order.
 *
 * @module
 */

import { CaseError } from "./errors.ts";
import type { Scope, Value } from "./expression.ts";
import { type CaseSource, withLocation } from "./parse.ts";
import { resolveUnits, type UnitConvention } from "./units.ts";
import { evaluateParams } from "./params.ts";
import { buildSpace, listLabels, type Space } from "./space.ts";
import { readSettings } from "./grid.ts";
import {
  type AssembledTerm,
  assembleSection,
  checkCoefficientsFinite,
  engineTerm,
  sectionTerms,
  termCount,
} from "./terms.ts";
import { checkHermitian } from "./hermiticity.ts";
import { gateRunColumns, startState, type Subspace, subspaceOf } from "./start.ts";
import { SparseComplexMatrix, toDense } from "./sparse_matrix.ts";
import { buildObservables, type Observable } from "./observables.ts";
import type { CaseSpec } from "./schema.ts";
import { checkMemory, guardExactWork, guardSteppedWork } from "./limits.ts";
import type { Model } from "../../engine/model.ts";

export type { AssembledTerm } from "./terms.ts";

/** Command-line overrides of a case. */
export interface BuildOptions {
  /** `--set name=value`: replace a param's value (an expression of earlier params). */
  set?: Record<string, string>;
  /** `--order N`. */
  order?: number;
  /** `--steps N` (fixed steps; overrides an accuracy in the case). */
  steps?: number;
  /** `--accuracy A` (steps chosen by the engine; overrides steps in the case). */
  accuracy?: number;
  /** `--targets a,b`. */
  targets?: string[];
  /** `--basis bare|eigen`. */
  basis?: "bare" | "eigen";
  /** `--picture schrodinger|interaction`: the picture amplitudes are reported in. */
  picture?: "schrodinger" | "interaction";
  /** `--subspace a,b`: follow these propagator columns too (a gate on that subspace). */
  subspace?: string[];
  /** `--operators auto|dense|sparse`: how operators are stored (overrides [grid] operators). */
  operators?: "auto" | "dense" | "sparse";
}

/**
 * With `operators = "auto"` (the default), spaces larger than this store their operators sparse: sums of local
 * terms then cost O(d) memory and time per product instead of O(d²).
 */
export const SPARSE_FROM_DIM = 256;

/** The largest space whose sparse operators ordo assembles (2^17 levels: about a hundred MB per operator). */
export const SPARSE_MAX_DIM = 131_072;

/** A case ready for the engine, with everything a report needs. */
export interface BuiltCase {
  source: CaseSource;
  title: string;
  params: Map<string, Value>;
  units: UnitConvention;
  space: Space;
  targets: string[];
  tolerance: number;
  /** Relative tolerance on populations (0: none); `tolerance` is then the floor. */
  relativeTolerance: number;
  /** The basis populations and amplitudes are reported in: the case's own, or H0's eigenbasis. */
  basis: "bare" | "eigen";
  /** The picture amplitudes are reported in (populations are the same in both). */
  picture: "schrodinger" | "interaction";
  terms: AssembledTerm[];
  /** `[[observable]]` entries, as matrices in the case's basis. */
  observables: Observable[];
  /** `[start] subspace`: the levels of a gate whose propagator columns are followed too. */
  subspace?: Subspace;
  model: Model;
  warnings: string[];
}

/**
 * Builds the engine model of a case.
 *
 * @param source a parsed case (see `parseCase`)
 * @param options command-line overrides
 * @returns the model and its context
 * @throws {CaseError} with file, key path and line, for anything invalid
 * @example
 * ```ts
 * import { ok as assert } from "node:assert/strict";
 * import { parseCase } from "./parse.ts";
 * import { buildCase } from "./build.ts";
 * const text = `
 * [levels]
 * names = ["g", "e"]
 * [unperturbed]
 * op = "|e><e|"
 * [perturbation]
 * op = "0.1*|e><g| + h.c."
 * [start]
 * state = "g"
 * [grid]
 * t_end = 10
 * steps = 100
 * [series]
 * order = 2
 * `;
 * const built = buildCase(parseCase(text, "x.toml"));
 * assert(built.model.dim === 2);
 * ```
 */
export function buildCase(
  source: CaseSource,
  options: BuildOptions = {},
): BuiltCase {
  try {
    return build(source, options);
  } catch (e) {
    if (e instanceof CaseError) {
      throw withLocation(e, source.file, source.text, source.format);
    }
    throw e;
  }
}

function build(source: CaseSource, options: BuildOptions): BuiltCase {
  const spec = source.spec;
  const warnings: string[] = [];
  const units = resolveUnits(spec.units);
  const params = evaluateParams(spec.params ?? {}, options.set ?? {}, units.energyFactor);
  const constScope: Scope = { params, allowTime: false, angularFactor: units.energyFactor };
  const space = buildSpace(source);
  const operators = options.operators ?? spec.grid.operators ?? "auto";
  // an explicit matrix is d² entries as written: sparse storage only pays for operator notation
  const explicit = (["unperturbed", "perturbation"] as const).some((name) =>
    sectionTerms(name, spec[name]).some(({ term }) => term.matrix !== undefined)
  );
  space.storage = operators === "auto"
    ? (space.dim > SPARSE_FROM_DIM && !explicit ? "sparse" : "dense")
    : operators;
  if (space.storage === "sparse" && space.dim > SPARSE_MAX_DIM) {
    throw new CaseError(
      `the space has ${space.dim} levels, more than the ${SPARSE_MAX_DIM} sparse operators are assembled for`,
      [],
      "shrink the space (fewer subsystems, lower cutoffs)",
    );
  }
  if (space.storage === "sparse" && explicit && space.dim > SPARSE_FROM_DIM) {
    throw new CaseError(
      `an explicit matrix has ${space.dim}² entries to evaluate: it cannot be stored sparse at this size`,
      ["grid", "operators"],
      'write the term in operator notation (op = "…"), or shrink the space',
    );
  }
  const relocate = (err: CaseError) => withLocation(err, source.file, source.text, source.format);
  const settings = readSettings(spec, options, constScope);

  // Refuse before allocating: the term counts are known from the case; a gate's columns ride along (at most
  // all d of them, for the Magnus terms of a small space)
  const gateLevels = options.subspace ?? spec.start.subspace;
  const memoryShape = () => ({
    dim: space.dim,
    columns: gateLevels ? gateRunColumns(space.dim, gateLevels.length) : 1,
    sparse: space.storage === "sparse",
    order: settings.order,
    samples: settings.samples,
    unperturbed: termCount("unperturbed", spec.unperturbed),
    perturbation: termCount("perturbation", spec.perturbation),
  });
  checkMemory(memoryShape());

  const sections = ["unperturbed", "perturbation"] as const;
  let terms = sections.flatMap((name) => assembleSection(name, spec[name], space, params, units, relocate));
  if (
    space.storage === "sparse" && operators === "auto" && terms.some((t) => tooDenseForSparse(t, space.dim))
  ) {
    // chosen sparse for the size, but the operators fill their matrices: dense is the better form
    space.storage = "dense";
    checkMemory(memoryShape());
    terms = terms.map((t) => ({ ...t, matrix: toDense(t.matrix) }));
  }
  if (space.storage === "sparse") refuseDenseOnlyViews(options, spec);
  // Finite coefficients at a few times (the engine's sampler checks every node as it runs); Hermitian at
  // every node the integrator uses.
  const { tStart, tEnd } = settings;
  if (terms.some((t) => t.coef?.usesTime)) {
    if (settings.accuracy === undefined) {
      guardSteppedWork({ dim: space.dim, ...settings, sparse: space.storage === "sparse" });
    }
  } else guardExactWork(terms, tEnd - tStart, settings.strength);
  const checkTimes = Array.from({ length: 9 }, (_, k) => tStart + (tEnd - tStart) * k / 8);
  for (const name of sections) {
    const own = terms.filter((t) => t.section === name);
    checkCoefficientsFinite(own, checkTimes);
    checkHermitian(name, own, space, settings);
  }

  const initial = startState(spec.start, space, constScope, warnings);
  const observables = buildObservables(spec, space, constScope);
  const written = options.subspace ?? spec.start.subspace;
  const subspace = written ? subspaceOf(written, space, options.subspace !== undefined) : undefined;
  const basis = options.basis ?? spec.series.basis ?? "bare";
  const targets = options.targets ?? spec.series.targets ?? space.labels;
  // eigenstates are named after their dominant bare label, known only once H0 is diagonalised: checked then
  if (basis === "bare") checkTargets(targets, space, options.targets !== undefined);

  const of = (name: (typeof sections)[number]) =>
    terms.filter((t) => t.section === name).map((t) => engineTerm(t, relocate));
  const model: Model = {
    dim: space.dim,
    unperturbed: of("unperturbed"),
    perturbation: of("perturbation"),
    strength: settings.strength,
    initial,
    tStart,
    tEnd,
    steps: settings.steps,
    samples: settings.samples,
    order: settings.order,
    ...(settings.accuracy !== undefined ? { accuracy: settings.accuracy } : {}),
  };
  // sparse terms: the engine's memory with their actual non-zeros, before it allocates anything
  if (space.storage === "sparse") checkMemory({ ...memoryShape(), model });
  return {
    source,
    title: spec.title ?? source.file,
    params,
    units,
    space,
    targets,
    tolerance: settings.tolerance,
    relativeTolerance: settings.relativeTolerance,
    basis,
    picture: options.picture ?? spec.series.picture ?? "schrodinger",
    terms,
    observables,
    ...(subspace ? { subspace } : {}),
    model,
    warnings,
  };
}

/** More than a quarter of its entries are non-zero: stored sparse it would cost more than dense. */
function tooDenseForSparse(term: AssembledTerm, dim: number): boolean {
  return term.matrix instanceof SparseComplexMatrix && term.matrix.nonZeros > 0.25 * dim * dim;
}

/** What needs H0's eigenvectors (dense, d×d) is refused for sparse operators, saying why. */
function refuseDenseOnlyViews(options: BuildOptions, spec: CaseSpec): void {
  const fix = 'set [grid] operators = "dense" (or --operators dense) for a space small enough to diagonalise';
  if ((options.basis ?? spec.series.basis) === "eigen") {
    throw new CaseError(
      "the eigenbasis of H0 is not available with sparse operators (H0 is never diagonalised)",
      options.basis ? [] : ["series", "basis"],
      fix,
    );
  }
  if ((options.picture ?? spec.series.picture) === "interaction") {
    throw new CaseError(
      "interaction-picture amplitudes are not available with sparse operators (they need H0's eigenvectors)",
      options.picture ? [] : ["series", "picture"],
      fix,
    );
  }
}

/** Refuses a target that is not a label of the space. */
export function checkTargets(targets: string[], space: Space, fromFlag: boolean): void {
  const known = new Set(space.labels);
  targets.forEach((label, k) => {
    if (!known.has(label)) {
      throw new CaseError(
        `unknown target label "${label}"`,
        fromFlag ? [] : ["series", "targets", k],
        `labels are: ${listLabels(space)}`,
      );
    }
  });
}
