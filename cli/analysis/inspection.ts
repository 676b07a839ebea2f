/**
 * What a case describes, before any propagation: dimension, scheme, H0
 * spectrum, the Bohr frequencies V couples, the phase per integrator step
 * with a suggested step count, the norm bound x = ∫‖λV‖dt, and the memory a
 * run will need. `ordo inspect` prints it; `run` uses it for its header and
 * the tail bound.
 *
 * @module
 */

import type { BuiltCase } from "../case/build.ts";
import { assembleAt } from "../case/terms.ts";
import { bohrFrequencies, type BohrFrequency, spectrum } from "./spectra.ts";
import { coefficientRate, type NormProfile, normProfile } from "./norms.ts";
import { MAX_PHASE_PER_STEP } from "./verdict.ts";
import { type Engine, estimateMemory, schemeFor, stepsPerSample } from "../../engine/mod.ts";

export { normIntegralAt } from "./norms.ts";

/** Phase per step (largest Bohr frequency × h) that the 4th-order scheme handles to about 1e-8 per unit time. */
export const PHASE_PER_STEP = 0.25;

/** The facts `inspect` reports, also used by `run` for its header. */
export interface Inspection extends NormProfile {
  dim: number;
  scheme: string;
  /** H0 eigenvalues at t_start (and t_end when H0 depends on time). */
  spectrum: { at: number; values: Float64Array; dominant: string[] }[];
  /** Bohr frequencies E_a − E_b > 0 of pairs that V couples, with their labels, largest coupling first. */
  bohr: BohrFrequency[];
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
  const h0TimeDependent = scheme === "time-dependent-h0";
  const spectra = (h0TimeDependent ? [model.tStart, model.tEnd] : [model.tStart]).map((at) => ({
    at,
    ...spectrum(engine, assembleAt(h0Terms, d, at), space.labels),
  }));
  let { bohr, omegaMax } = bohrFrequencies(engine, spectra[0]!, vTerms);
  if (h0TimeDependent) {
    for (const s of spectra) omegaMax = Math.max(omegaMax, s.values[d - 1]! - s.values[0]!);
  }
  return { scheme, spectra, bohr, omegaMax };
}

/**
 * How fast H turns: the fastest coupled phase or coefficient rate, in rad per time unit (0 for the
 * time-independent scheme, which takes no steps). Times a step, it is the verdict's phase per step; its
 * inverse bounds the steps an accuracy-driven run may take.
 *
 * @param engine a loaded engine (for the eigensolver)
 * @param built the case
 * @returns the rate
 */
export function fastestRate(engine: Engine, built: BuiltCase): number {
  if (schemeFor(built.model) === "time-independent") return 0;
  const { omegaMax } = spectralFacts(engine, built);
  return Math.max(omegaMax, coefficientRate(built.terms, built.model));
}

/** The model with the longest step an accuracy-driven run may take: half a radian of the fastest phase. */
export function withStepLimit(built: BuiltCase, rate: number): BuiltCase["model"] {
  if (built.model.accuracy === undefined || !(rate > 0)) return built.model;
  return { ...built.model, maxStep: 0.5 * MAX_PHASE_PER_STEP / rate };
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
  const { scheme, spectra, bohr, omegaMax } = spectralFacts(engine, built);
  const norms = normProfile(engine, built.terms, model);

  const memory = estimateMemory(model);
  const span = model.tEnd - model.tStart;
  const timeIndependent = scheme === "time-independent";
  const per = timeIndependent ? 0 : stepsPerSample(model);
  const steps = per * (model.samples - 1);
  const fastest = Math.max(omegaMax, norms.vMax, norms.coefRate, 1 / span);
  return {
    dim: d,
    scheme,
    spectrum: spectra.map(({ at, values, dominant }) => ({ at, values, dominant })),
    bohr,
    omegaMax,
    ...norms,
    steps,
    stepSize: timeIndependent ? span / (model.samples - 1) : span / steps,
    suggestedSteps: timeIndependent ? 0 : Math.ceil(span * fastest / PHASE_PER_STEP),
    memoryBytes: memory.bytes,
    memoryLargest: memory.largest,
  };
}
