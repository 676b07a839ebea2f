/**
 * `ordo inspect CASE`: parse and validate only, and say what the case
 * describes: dimension, spectrum, Bohr frequencies, steps, norm bound, memory.
 *
 * @module
 */

import { magnusBlocker } from "../analysis/gate.ts";
import { buildCase, type BuiltCase } from "../case/build.ts";
import { readCase } from "../case/parse.ts";
import {
  engineModel,
  inspectCase,
  type Inspection,
  longestPhase,
  PHASE_PER_STEP,
  turningFrom,
} from "../analysis/inspection.ts";
import { DEFAULT_ACCURACY } from "../case/grid.ts";
import { driveSpectra, type DriveSpectrum, driveWarning } from "../analysis/drive_spectrum.ts";
import {
  type Engine,
  loadEngine,
  METHOD_NAMES,
  methodFor,
  nonZerosOf,
  schemeFor,
  solve,
} from "../../engine/mod.ts";
import { buildOptions, oneCase, parseOrFail } from "./_args.ts";

/**
 * `ordo inspect CASE [--set name=value] [--operators auto|dense|sparse] [--subspace a,b]`.
 *
 * @param args the arguments after `inspect`
 * @returns the exit code
 */
export async function inspectCommand(args: string[]): Promise<number> {
  const { values, positionals } = parseOrFail(args, {
    set: { type: "string", multiple: true },
    operators: { type: "string" },
    subspace: { type: "string" },
  });
  const built = buildCase(readCase(oneCase(positionals, "inspect")), buildOptions(values));
  const engine = await loadEngine();
  const info = inspectCase(engine, built);
  console.log(formatInspection(built, info, controllerSteps(engine, built, info), driveSpectra(built, info)));
  return 0;
}

/**
 * The steps the engine's controller takes for the case's accuracy (or the default one): a run of the exact
 * state alone (order 0), which is what sets the steps. Undefined for a time-independent case.
 */
function controllerSteps(engine: Engine, built: BuiltCase, info: Inspection) {
  if (info.scheme === "time-independent") return undefined;
  const accuracy = built.model.accuracy ?? DEFAULT_ACCURACY;
  const model = engineModel({ ...built, model: { ...built.model, accuracy } }, turningFrom(info));
  return { accuracy, steps: solve(engine, { ...model, order: 0 }).steps };
}

function fmt(x: number, digits = 6): string {
  if (x === 0) return "0";
  const a = Math.abs(x);
  return a >= 1e-3 && a < 1e6 ? String(Number(x.toPrecision(digits))) : x.toExponential(digits - 1);
}

function bytes(n: number): string {
  const units = ["B", "KiB", "MiB", "GiB"];
  let k = 0;
  while (n >= 1024 && k < units.length - 1) [n, k] = [n / 1024, k + 1];
  return `${n.toFixed(k ? 1 : 0)} ${units[k]}`;
}

/** The inspection as text for the terminal (with the controller's steps for an accuracy, when known). */
export function formatInspection(
  built: BuiltCase,
  info: Inspection,
  controller?: { accuracy: number; steps: number },
  drives: DriveSpectrum[] = [],
): string {
  const freq = built.units.time ? ` rad/${built.units.time}` : "";
  const lines = [
    ...describeCase(built, info),
    ...describeSpectrum(info, freq),
    `  norm bound x = ∫‖λV(t)‖dt ≤ ${fmt(info.normIntegral, 4)}  (‖λV‖ ≤ ${
      fmt(info.vMax, 4)
    }${freq}; the n-th Dyson term is at most xⁿ/n!)`,
    ...describeDrives(built, drives),
    ...describeSteps(built, info, controller),
    ...describeGate(built),
    describeOperators(built),
    `  memory     about ${bytes(info.memoryBytes)} (largest part: ${info.memoryLargest})`,
  ];
  for (const w of built.warnings) lines.push(`  warning    ${w}`);
  return lines.join("\n");
}

function describeCase(built: BuiltCase, info: Inspection): string[] {
  const { space } = built;
  const subs = space.subsystems.length > 1 || space.subsystems[0]!.name !== "levels"
    ? ` = ${space.subsystems.map((s) => `${s.name} (${s.kind}, ${s.labels.length})`).join(" ⊗ ")}`
    : "";
  const lines = [
    `${built.title}`,
    `  file       ${built.source.file} (sha256 ${built.source.sha256.slice(0, 12)})`,
    `  units      ${built.units.description}`,
    `  dimension  ${info.dim}${subs}`,
    `  labels     ${space.labels.slice(0, 24).join(", ")}${space.labels.length > 24 ? ", …" : ""}`,
    `  scheme     ${info.scheme}`,
  ];
  if (built.params.size) {
    const shown = [...built.params].map(([k, v]) =>
      `${k} = ${
        typeof v === "number" ? fmt(v) : `${fmt(v.re)}${v.im < 0 ? "-" : "+"}${fmt(Math.abs(v.im))}i`
      }`
    );
    lines.push(`  params     ${shown.join(", ")}`);
  }
  return lines;
}

function describeSpectrum(info: Inspection, freq: string): string[] {
  const lines: string[] = [];
  for (const s of info.spectrum) {
    const head = `  H0 spectrum${info.spectrum.length > 1 ? ` at t = ${fmt(s.at)}` : ""} [${
      freq.trim() || "angular"
    }]`;
    if (s.sparse === "bound") {
      lines.push(
        head,
        `             within [${fmt(s.values[0]!)}, ${
          fmt(s.values[1]!)
        }] (Gershgorin's bound: sparse operators ` +
          "are not diagonalised)",
      );
      continue;
    }
    const shown = Array.from(s.values.slice(0, 16), (e, k) => `${fmt(e)} (${s.dominant[k]})`).join(", ");
    lines.push(
      head + (s.sparse === "diagonal" ? " (H0 is diagonal: its diagonal)" : ""),
      `             ${shown}${s.values.length > 16 ? `, … (${s.values.length} levels)` : ""}`,
    );
  }
  lines.push(`  Bohr frequencies coupled by V (E_a − E_b, strongest coupling first):`);
  if (info.spectrum[0]?.sparse === "bound") {
    lines.push(
      "             not listed: H0 is not diagonal and sparse operators are not diagonalised; the fastest phase " +
        `is taken as the spectral width, ${fmt(info.omegaMax)}${freq}`,
    );
  } else if (info.bohr.length === 0) lines.push("             none: V is diagonal in H0's eigenbasis");
  for (const b of info.bohr.slice(0, 10)) {
    lines.push(
      `             ${b.upper} ↔ ${b.lower}: ω = ${fmt(b.omega)}${freq}, |V| = ${fmt(b.coupling, 4)}`,
    );
  }
  if (info.coupledPairs > 10) lines.push(`             … and ${info.coupledPairs - 10} more pairs`);
  return lines;
}

/** Each drive's spectrum against the transitions V couples, in the case's own frequency unit. */
function describeDrives(built: BuiltCase, drives: DriveSpectrum[]): string[] {
  if (drives.length === 0) return [];
  const unit = built.units.energy && !built.units.energy.startsWith("rad/") ? built.units.energy : "";
  const f = (omega: number) =>
    unit ? `${fmt(omega / built.units.energyFactor, 4)} ${unit}` : `ω = ${fmt(omega, 4)}`;
  const lines = [
    "  drives     each coefficient's spectrum |f̃(ω)|² (first-order weight) at the coupled transitions:",
  ];
  for (const d of drives) {
    lines.push(
      `             ${d.term}: peaks at ${f(d.peak.omega)}${
        d.reaches ? "" : "; reaches NO coupled transition"
      }`,
    );
    for (const t of d.transitions.slice(0, 4)) {
      const share = d.peak.weight > 0 ? t.weight / d.peak.weight : 0;
      lines.push(`               ${t.upper} ↔ ${t.lower} at ${f(t.omega)}: ${fmt(share, 2)} of the peak`);
    }
  }
  const warning = driveWarning(built, drives);
  if (warning) lines.push(`  warning    ${warning}`);
  return lines;
}

/** How the operators are stored: dense, or sparse with their non-zeros. */
function describeOperators(built: BuiltCase): string {
  const sparse = built.space.storage === "sparse";
  if (!sparse) return `  operators  dense (d×d matrices)`;
  const nonZeros = nonZerosOf(built.model);
  const terms = built.model.unperturbed.length + built.model.perturbation.length;
  return `  operators  sparse (compressed rows): ${nonZeros} non-zeros in ${terms} terms, ` +
    `${(nonZeros / terms / built.model.dim).toPrecision(3)} a row on average; no d×d matrix is formed ` +
    `(operators = "dense" in [grid] or --operators dense overrides)`;
}

/** The line about a gate's subspace (propagator mode), if the case has one. */
function describeGate(built: BuiltCase): string[] {
  if (!built.subspace) return [];
  const blocker = magnusBlocker(built, schemeFor(built.model));
  return [
    `  gate       subspace {${built.subspace.labels.join(", ")}}: ${
      blocker === undefined
        ? `all ${built.model.dim} propagator columns run with the start state (Magnus terms included)`
        : `its ${built.subspace.labels.length} propagator columns run with the start state (no Magnus terms: ${blocker})`
    }`,
  ];
}

function describeSteps(
  built: BuiltCase,
  info: Inspection,
  controller?: { accuracy: number; steps: number },
): string[] {
  const { model } = built;
  const tu = built.units.time ? ` ${built.units.time}` : "";
  if (info.scheme === "time-independent") {
    return [
      `  steps      none: H is time-independent, propagated exactly between ${model.samples} samples (interval ${
        fmt(info.stepSize)
      }${tu})`,
    ];
  }
  const span = model.tEnd - model.tStart;
  if (model.accuracy !== undefined && controller) {
    return [
      `  steps      chosen by the engine for accuracy ${model.accuracy}: ${controller.steps} steps ` +
      `(${METHOD_NAMES[methodFor(model)!]}; mean h = ${
        fmt(span / controller.steps)
      }${tu}; phase per step kept ≤ ${longestPhase(model)} rad)`,
    ];
  }
  const phase = info.omegaMax * info.stepSize;
  const verdict = info.steps >= info.suggestedSteps ? "enough" : "too few: raise [grid] steps";
  const suggestion = controller
    ? [
      `  accuracy   suggested: [grid] accuracy = ${controller.accuracy} instead of steps (or --accuracy): ` +
      `the engine would take ${controller.steps} steps for it (${
        METHOD_NAMES[methodFor({ ...model, accuracy: controller.accuracy })!]
      })`,
    ]
    : [];
  return [
    `  steps      ${info.steps} of h = ${fmt(info.stepSize)}${tu}` +
    (info.steps !== model.steps
      ? ` (${model.steps} asked; rounded up to an even number per sample interval)`
      : ""),
    `             largest |E_a − E_b|·h = ${fmt(phase, 3)} rad per step; fastest coefficient rate × h = ${
      fmt(info.coefRate * info.stepSize, 3)
    }`,
    `             suggested ≥ ${info.suggestedSteps} steps (phase per step ≤ ${PHASE_PER_STEP}); ${verdict}`,
    ...suggestion,
  ];
}
