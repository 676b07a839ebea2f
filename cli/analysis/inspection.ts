/**
 * What a case describes, before any propagation: dimension, scheme, H0
 * spectrum, the Bohr frequencies V couples, the phase per integrator step
 * with a suggested step count, the norm bound x = ∫‖λV‖dt, and the memory a
 * run will need. `ordo inspect` prints it; `run` uses it for its header and
 * the tail bound.
 *
 * @module
 */

import { SparseComplexMatrix, toDense } from "../case/sparse_matrix.ts";
import type { AssembledTerm } from "../case/terms.ts";
import { gateRunColumns } from "../case/start.ts";
import type { BuiltCase } from "../case/build.ts";
import { assembleAt } from "../case/terms.ts";
import {
  bohrFrequencies,
  type BohrFrequency,
  sparseBohrFrequencies,
  sparseSpectrum,
  type Spectrum,
  spectrum,
} from "./spectra.ts";
import { coefficientRate, type NormProfile, normProfile } from "./norms.ts";
import { MAX_PHASE_PER_STEP } from "./verdict.ts";
import {
  type Engine,
  estimateMemory,
  methodFor,
  type Model,
  PHASE_PER_STEP_LIMIT,
  schemeFor,
  stepsPerSample,
} from "../../engine/mod.ts";

export { normIntegralAt } from "./norms.ts";

/** Phase per step (largest Bohr frequency × h) that the 4th-order scheme handles to about 1e-8 per unit time. */
export const PHASE_PER_STEP = 0.25;

/** The facts `inspect` reports, also used by `run` for its header. */
export interface Inspection extends NormProfile {
  dim: number;
  scheme: string;
  /** H0 eigenvalues at t_start (and t_end when H0 depends on time). */
  spectrum: ({ at: number } & Spectrum)[];
  /** The strongest Bohr frequencies E_a − E_b > 0 of pairs that V couples (BOHR_LISTED at most), labelled. */
  bohr: BohrFrequency[];
  /** How many pairs V couples (listed or not). */
  coupledPairs: number;
  /** Largest coupled |E_a − E_b| (the fastest interaction-picture phase). */
  omegaMax: number;
  /** Integrator steps the run will take and its step size. */
  steps: number;
  stepSize: number;
  /** Suggested minimum steps for the 4th-order scheme. */
  suggestedSteps: number;
  memoryBytes: number;
  memoryLargest: string;
}

/** H0's spectrum (at both ends when it depends on t), the coupled Bohr frequencies and the fastest phase. */
function spectralFacts(engine: Engine, built: BuiltCase) {
  const { model, space } = built;
  const d = model.dim;
  const h0Terms = built.terms.filter((t) => t.section === "unperturbed");
  const vTerms = built.terms.filter((t) => t.section === "perturbation");
  const scheme = schemeFor(model);
  if (scheme === "sparse-schrodinger" || scheme === "sparse-interaction") {
    return sparseFacts(built, h0Terms, vTerms);
  }
  const h0TimeDependent = scheme === "time-dependent-h0";
  const spectra = (h0TimeDependent ? [model.tStart, model.tEnd] : [model.tStart]).map((at) => ({
    at,
    ...spectrum(engine, toDense(assembleAt(h0Terms, d, at)), space.labels),
  }));
  let { bohr, pairs, omegaMax } = bohrFrequencies(engine, spectra[0]!, vTerms);
  if (h0TimeDependent) {
    for (const s of spectra) omegaMax = Math.max(omegaMax, s.values[d - 1]! - s.values[0]!);
  }
  return { scheme, spectra, bohr, pairs, omegaMax };
}

/**
 * The same facts for sparse operators, without an eigensolver: H0's diagonal, or its Gershgorin interval
 * (at both ends when it depends on t); the fastest phase is then bounded by the interval's width.
 */
function sparseFacts(built: BuiltCase, h0Terms: AssembledTerm[], vTerms: AssembledTerm[]) {
  const { model, space } = built;
  const h0TimeDependent = h0Terms.some((t) => t.coef?.usesTime);
  const at = (t: number) => assembleAt(h0Terms, model.dim, t) as SparseComplexMatrix;
  const first = at(model.tStart);
  const spectra = [{ at: model.tStart, ...sparseSpectrum(first, space.labels) }];
  if (h0TimeDependent) spectra.push({ at: model.tEnd, ...sparseSpectrum(at(model.tEnd), space.labels) });
  const diagonal = Float64Array.from({ length: model.dim }, (_, k) => first.get(k, k).re);
  let { bohr, pairs, omegaMax } = sparseBohrFrequencies(spectra[0]!, diagonal, vTerms, space.labels);
  // a constant diagonal H0: the coupled pairs' Bohr frequencies are the fastest phases; otherwise the widths
  if (h0TimeDependent || spectra[0]!.sparse === "bound") {
    for (const s of spectra) omegaMax = Math.max(omegaMax, s.values[s.values.length - 1]! - s.values[0]!);
  }
  return { scheme: schemeFor(model), spectra, bohr, pairs, omegaMax };
}

/** How fast H turns, and H0's eigen-decomposition when H0 is constant (to hand to the engine). */
export interface Turning {
  /**
   * The fastest coupled phase or coefficient rate, in rad per time unit (0 for the time-independent scheme,
   * which takes no steps). Times a step, it is the verdict's phase per step; its inverse bounds the steps an
   * accuracy-driven run may take.
   */
  rate: number;
  /** H0's eigen-decomposition (undefined when H0 depends on t). */
  eigen?: { values: Float64Array; vectors: Float64Array };
}

/**
 * How fast H turns, with H0's eigen-decomposition computed once for the run.
 *
 * @param engine a loaded engine (for the eigensolver)
 * @param built the case
 * @returns the rate and the decomposition
 */
export function turningOf(engine: Engine, built: BuiltCase): Turning {
  const facts = spectralFacts(engine, built);
  const eigen = facts.scheme === "time-dependent-h0" || facts.scheme.startsWith("sparse")
    ? undefined
    : facts.spectra[0]!;
  if (facts.scheme === "time-independent") return { rate: 0, eigen };
  return { rate: Math.max(facts.omegaMax, coefficientRate(built.terms, built.model)), eigen };
}

/**
 * The engine's model of a case for one run: H0's eigen-decomposition handed over (so that it is computed once),
 * and for an accuracy-driven run the longest step: a quarter of the phase per step its method resolves (where
 * step doubling still reads the error honestly), or all of it for the Runge–Kutta pair, whose twelve stages
 * sample each step densely (see {@link PHASE_PER_STEP_LIMIT}).
 */
export function engineModel(built: BuiltCase, turning: Turning): BuiltCase["model"] {
  const model = { ...built.model };
  if (turning.eigen) {
    model.unperturbedEigen = { values: turning.eigen.values, vectors: turning.eigen.vectors };
  }
  if (model.accuracy !== undefined && turning.rate > 0) model.maxStep = longestPhase(model) / turning.rate;
  return model;
}

/** The phase (rad) an accuracy-driven run may let the fastest rate advance in one step. */
export function longestPhase(model: Model): number {
  const method = methodFor(model);
  return method === "runge-kutta-8" ? PHASE_PER_STEP_LIMIT[method] : 0.25 * MAX_PHASE_PER_STEP;
}

/** What {@link turningOf} says, from an inspection already made. */
export function turningFrom(info: Inspection): Turning {
  const eigen = info.scheme === "time-dependent-h0" || info.scheme.startsWith("sparse")
    ? undefined
    : info.spectrum[0];
  const rate = info.scheme === "time-independent" ? 0 : Math.max(info.omegaMax, info.coefRate);
  return { rate, eigen };
}

/**
 * Computes the inspection of a built case.
 *
 * @param engine a loaded engine (for the eigensolver)
 * @param built the case
 * @returns the facts to report
 */
export function inspectCase(engine: Engine, built: BuiltCase): Inspection {
  const { model } = built;
  const d = model.dim;
  const { scheme, spectra, bohr, pairs, omegaMax } = spectralFacts(engine, built);
  const norms = normProfile(engine, built.terms, model);

  const memory = estimateMemory({
    ...model,
    columns: built.subspace ? gateRunColumns(model.dim, built.subspace.indices.length) : 1,
  });
  const span = model.tEnd - model.tStart;
  const timeIndependent = scheme === "time-independent";
  const per = timeIndependent ? 0 : stepsPerSample(model);
  const steps = per * (model.samples - 1);
  const fastest = Math.max(omegaMax, norms.vMax, norms.coefRate, 1 / span);
  return {
    dim: d,
    scheme,
    spectrum: spectra,
    bohr,
    coupledPairs: pairs,
    omegaMax,
    ...norms,
    steps,
    stepSize: timeIndependent ? span / (model.samples - 1) : span / steps,
    suggestedSteps: timeIndependent ? 0 : Math.ceil(span * fastest / PHASE_PER_STEP),
    memoryBytes: memory.bytes,
    memoryLargest: memory.largest,
  };
}
