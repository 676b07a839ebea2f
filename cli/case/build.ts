/**
 * From a parsed case to the engine's model: parameters evaluated, the space
 * and its labels, every term assembled and checked (shape, Hermiticity,
 * finiteness), the start state, grid, series settings and memory estimate.
 *
 * @module
 */

import { CaseError, type KeyPath } from "./errors.ts";
import type { EntrySpec, MatrixSpec, SectionSpec, TermSpec } from "./schema.ts";
import { type Complex, ComplexMatrix } from "./complex_matrix.ts";
import {
  BUILTIN_NAMES,
  type Compiled,
  compileExpression,
  isFiniteValue,
  type Scope,
  toComplex,
  type Value,
} from "./expression.ts";
import {
  evaluateOperator,
  OPERATOR_FUNCTIONS,
  productSpace,
  type Space,
  spinLabels,
  type Subsystem,
} from "./operators.ts";
import { type CaseSource, withLocation } from "./parse.ts";
import { resolveUnits, type UnitConvention } from "./units.ts";
import { STRENGTH } from "../sweep/grid.ts";
import {
  type Coefficient,
  estimateMemory,
  type Model,
  type OperatorTerm,
  RECORD_LIMIT_BYTES,
  WASM_LIMIT_BYTES,
} from "../../engine/model.ts";

/** Command-line overrides of a case. */
export interface BuildOptions {
  /** `--set name=value`: replace a param's value (an expression of earlier params). */
  set?: Record<string, string>;
  /** `--order N`. */
  order?: number;
  /** `--steps N`. */
  steps?: number;
  /** `--targets a,b`. */
  targets?: string[];
}

/** One assembled term, kept for reports. */
export interface AssembledTerm {
  section: "unperturbed" | "perturbation";
  path: KeyPath;
  /** The matrix in rad per time unit. */
  matrix: ComplexMatrix;
  /** The coefficient (undefined: the constant 1). */
  coef: Compiled | undefined;
  /** This is the Hermitian-conjugate partner of the previous term. */
  conjugate: boolean;
}

/** A case ready for the engine, with everything a report needs. */
export interface BuiltCase {
  source: CaseSource;
  title: string;
  params: Map<string, Value>;
  units: UnitConvention;
  space: Space;
  targets: string[];
  tolerance: number;
  terms: AssembledTerm[];
  model: Model;
  warnings: string[];
}

const NAME = /^[A-Za-z_][A-Za-z0-9_]*$/;
const RESERVED = new Set([
  "t",
  "row",
  "col",
  STRENGTH, // λ, sweepable by this name
  ...BUILTIN_NAMES,
  ...OPERATOR_FUNCTIONS,
]);
const MAX_ORDER = 40;

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
  const params = evaluateParams(spec.params ?? {}, options.set ?? {});
  const constScope: Scope = { params, allowTime: false };
  const units = resolveUnits(spec.units);

  const space = buildSpace(source);
  const relocate = (err: CaseError) => withLocation(err, source.file, source.text, source.format);

  // Grid.
  const constant = (v: number | string, path: KeyPath): number => {
    if (typeof v === "number") return v;
    const value = compileExpression(v, constScope, path).at(0);
    if (typeof value !== "number") {
      throw new CaseError(`must be real, got ${show(value)}`, path);
    }
    return value;
  };
  const tStart = constant(spec.grid.t_start, ["grid", "t_start"]);
  const tEnd = constant(spec.grid.t_end, ["grid", "t_end"]);
  for (const [v, key] of [[tStart, "t_start"], [tEnd, "t_end"]] as const) {
    if (!Number.isFinite(v)) {
      throw new CaseError(
        `${key} is ${v}`,
        ["grid", key],
        "give a finite time",
      );
    }
  }
  if (!(tEnd > tStart)) {
    throw new CaseError(
      `t_end = ${tEnd} is not after t_start = ${tStart}`,
      ["grid", "t_end"],
      "set t_end larger than t_start",
    );
  }
  const steps = options.steps ?? spec.grid.steps;
  if (steps < 1) {
    throw new CaseError(
      `steps = ${steps}, but at least 1 integrator step is needed`,
      ["grid", "steps"],
      "set steps ≥ 1 (see `ordo inspect` for a suggestion)",
    );
  }
  const samples = spec.grid.samples;
  if (samples < 2) {
    throw new CaseError(
      `samples = ${samples}, but the two ends are always recorded`,
      ["grid", "samples"],
      "set samples ≥ 2",
    );
  }
  const order = options.order ?? spec.series.order;
  if (order < 0 || order > MAX_ORDER) {
    throw new CaseError(
      `order = ${order} is outside 0…${MAX_ORDER}`,
      ["series", "order"],
      "the Dyson order N counts powers of V: set 0 ≤ order ≤ 40",
    );
  }
  const strength = spec.series.strength ?? 1;
  const tolerance = spec.series.tolerance ?? 1e-6;

  // Refuse before allocating: the term counts are known from the case (a conjugate partner counts double).
  const termCount = (name: "unperturbed" | "perturbation") =>
    sectionTerms(name, spec[name]).reduce(
      (n, { term }) => n + (term.hc || /h\.c\.?\s*$/.test(term.op ?? "") ? 2 : 1),
      0,
    );
  const memory = estimateMemory({
    dim: space.dim,
    order,
    samples,
    unperturbed: Array(termCount("unperturbed")),
    perturbation: Array(termCount("perturbation")),
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

  const terms = [
    ...assembleSection(
      "unperturbed",
      spec.unperturbed,
      space,
      params,
      units,
      relocate,
    ),
    ...assembleSection(
      "perturbation",
      spec.perturbation,
      space,
      params,
      units,
      relocate,
    ),
  ];

  // Hermiticity and finiteness of the assembled parts at a few times.
  const checkTimes = Array.from(
    { length: 9 },
    (_, k) => tStart + (tEnd - tStart) * k / 8,
  );
  for (const section of ["unperturbed", "perturbation"] as const) {
    checkSection(
      section,
      terms.filter((t) => t.section === section),
      space,
      checkTimes,
    );
  }

  const initial = startState(source, space, constScope, warnings);
  guardExactWork(terms, tEnd - tStart, strength);

  const targets = options.targets ?? spec.series.targets ?? space.labels;
  targets.forEach((label, k) => {
    if (!space.labels.includes(label)) {
      throw new CaseError(
        `unknown target label "${label}"`,
        options.targets ? [] : ["series", "targets", k],
        `labels are: ${listLabels(space)}`,
      );
    }
  });

  const toEngine = (t: AssembledTerm): OperatorTerm => ({
    matrix: t.matrix.data,
    coefficient: coefficientOf(t, relocate),
  });
  const model: Model = {
    dim: space.dim,
    unperturbed: terms.filter((t) => t.section === "unperturbed").map(toEngine),
    perturbation: terms.filter((t) => t.section === "perturbation").map(
      toEngine,
    ),
    strength,
    initial,
    tStart,
    tEnd,
    steps,
    samples,
    order,
  };
  return {
    source,
    title: spec.title ?? source.file,
    params,
    units,
    space,
    targets,
    tolerance,
    terms,
    model,
    warnings,
  };
}

function gib(bytes: number): string {
  return (bytes / 1024 ** 3).toFixed(bytes < 1024 ** 3 ? 3 : 1);
}

function show(v: Value): string {
  const z = toComplex(v);
  return z.im === 0 ? String(z.re) : `${z.re}${z.im < 0 ? "-" : "+"}${Math.abs(z.im)}i`;
}

function listLabels(space: Space): string {
  return space.labels.slice(0, 16).join(", ") +
    (space.labels.length > 16 ? `, … (${space.labels.length} in all)` : "");
}

/** Evaluates `[params]` in order; `--set` values replace the written ones. */
function evaluateParams(
  written: Record<string, number | string | [number | string, number | string]>,
  set: Record<string, string>,
): Map<string, Value> {
  const params = new Map<string, Value>();
  for (const name of Object.keys(set)) {
    if (!(name in written)) {
      throw new CaseError(
        `--set names "${name}", which is not a param of this case`,
        ["params"],
        `params are: ${Object.keys(written).join(", ") || "(none)"}`,
      );
    }
  }
  for (const [name, entry] of Object.entries(written)) {
    const path = ["params", name];
    if (!NAME.test(name)) {
      throw new CaseError(
        `"${name}" is not a usable name`,
        path,
        "start with a letter; use letters, digits and _",
      );
    }
    if (RESERVED.has(name)) {
      throw new CaseError(
        `"${name}" is a built-in name`,
        path,
        "choose another name for this param",
      );
    }
    const scope: Scope = { params, allowTime: false };
    let value: Value;
    if (name in set) value = compileExpression(set[name]!, scope, path).at(0);
    else value = entryValue(entry, scope, path);
    if (!isFiniteValue(value)) {
      throw new CaseError(
        `param ${name} evaluates to ${show(value)}`,
        path,
        "check the expression: every param must be a finite number",
      );
    }
    params.set(name, value);
  }
  return params;
}

/** A number, expression, or [re, im] pair → value. */
function entryValue(entry: EntrySpec, scope: Scope, path: KeyPath): Value {
  if (typeof entry === "number") return entry;
  if (typeof entry === "string") {
    return compileExpression(entry, scope, path).at(0);
  }
  const re = toComplex(entryValue(entry[0], scope, [...path, 0]));
  const im = toComplex(entryValue(entry[1], scope, [...path, 1]));
  return { re: re.re - im.im, im: re.im + im.re };
}

function buildSpace(source: CaseSource): Space {
  const spec = source.spec;
  const checkLabels = (labels: string[], path: KeyPath) => {
    labels.forEach((label, k) => {
      if (!label || /[,|<>]/.test(label)) {
        throw new CaseError(
          `level label "${label}" is empty or contains , | < or >`,
          [...path, k],
          "use short names such as g, e, f",
        );
      }
      if (labels.indexOf(label) !== k) {
        throw new CaseError(`level label "${label}" appears twice`, [
          ...path,
          k,
        ], "give each level its own name");
      }
    });
  };
  if (spec.levels && spec.subsystems) {
    throw new CaseError("both [levels] and [subsystems] are given", [
      "subsystems",
    ], "use [levels] for one system, [subsystems] for a composite one");
  }
  if (spec.levels) {
    const { names, count } = spec.levels;
    if ((names === undefined) === (count === undefined)) {
      throw new CaseError(
        "give exactly one of names and count",
        ["levels"],
        'e.g. names = ["g", "e"], or count = 100 for levels "0" … "99"',
      );
    }
    const labels = names ?? Array.from({ length: count! }, (_, k) => String(k));
    checkLabels(labels, ["levels", "names"]);
    return productSpace([{ name: "levels", kind: "levels", labels }]);
  }
  if (spec.subsystems) {
    const subsystems: Subsystem[] = [];
    for (const [name, sub] of Object.entries(spec.subsystems)) {
      const path = ["subsystems", name];
      if (!NAME.test(name)) {
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
  // Neither: the dimension comes from the first explicit matrix.
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

/** The terms of one section, as written (single term or `terms`), with their paths. */
function sectionTerms(
  name: string,
  section: SectionSpec,
): { term: TermSpec; path: KeyPath }[] {
  const single = section.matrix !== undefined || section.op !== undefined;
  if (
    section.terms &&
    (single || section.coef !== undefined || section.hc !== undefined)
  ) {
    throw new CaseError(
      "has both terms and a matrix/op/coef of its own",
      [name],
      `put every term in [[${name}.terms]]`,
    );
  }
  if (section.terms) {
    if (section.terms.length === 0) {
      throw new CaseError(
        "terms is empty",
        [name, "terms"],
        "give at least one term",
      );
    }
    return section.terms.map((term, k) => ({ term, path: [name, "terms", k] }));
  }
  if (!single) {
    throw new CaseError(
      "has no matrix, op or terms",
      [name],
      `write matrix = [[…]], op = "…", or [[${name}.terms]] entries`,
    );
  }
  return [{ term: section, path: [name] }];
}

function assembleSection(
  name: "unperturbed" | "perturbation",
  section: SectionSpec,
  space: Space,
  params: Map<string, Value>,
  units: UnitConvention,
  relocate: (e: CaseError) => CaseError,
): AssembledTerm[] {
  const out: AssembledTerm[] = [];
  const constScope: Scope = { params, allowTime: false };
  for (const { term, path } of sectionTerms(name, section)) {
    if ((term.matrix === undefined) === (term.op === undefined)) {
      throw new CaseError(
        "a term needs exactly one of matrix and op",
        path,
        'write matrix = [[…]] or op = "…"',
      );
    }
    let matrix: ComplexMatrix;
    let hc = term.hc ?? false;
    if (term.matrix) {
      matrix = explicitMatrix(term.matrix, space.dim, constScope, [
        ...path,
        "matrix",
      ]);
    } else {
      const r = evaluateOperator(term.op!, space, constScope, [...path, "op"]);
      matrix = r.matrix;
      if (r.hc && term.hc) {
        throw new CaseError(
          'asks for the conjugate twice ("+ h.c." and hc = true)',
          path,
          "keep one of them",
        );
      }
      hc ||= r.hc;
    }
    const entryFailure = firstNonFinite(matrix);
    if (entryFailure) {
      throw new CaseError(
        `matrix entry (${entryFailure}) is not finite`,
        path,
        "check the params it uses",
      );
    }
    matrix = matrix.scale({ re: units.energyFactor, im: 0 });
    let coef: Compiled | undefined;
    if (term.coef !== undefined && term.coef !== 1) {
      coef = compileExpression(String(term.coef), { params, allowTime: true }, [
        ...path,
        "coef",
      ]);
      if (!coef.usesTime && !isFiniteValue(coef.at(0))) {
        throw relocate(
          new CaseError(
            `coef is ${show(coef.at(0))}`,
            [...path, "coef"],
            "check the params it uses",
          ),
        );
      }
    }
    out.push({ section: name, path, matrix, coef, conjugate: false });
    if (hc) {
      out.push({
        section: name,
        path,
        matrix: matrix.dagger(),
        coef,
        conjugate: true,
      });
    }
  }
  return out;
}

/** Taylor sub-steps the time-independent scheme may take before a case is called unreasonable. */
const MAX_SUBSTEPS = 1e7;

/**
 * A time-independent case is propagated exactly by Taylor sub-steps of ‖H‖·h ≤ 2; refuse one so long
 * (‖H‖·T in the tens of millions) that it would run for hours, rather than appear to hang.
 */
function guardExactWork(terms: AssembledTerm[], span: number, strength: number): void {
  if (terms.some((t) => t.coef?.usesTime)) return;
  let norm = 0;
  for (const t of terms) {
    const c = t.coef ? Math.hypot(toComplex(t.coef.at(0)).re, toComplex(t.coef.at(0)).im) : 1;
    let row = 0;
    for (let i = 0; i < t.matrix.rows; i++) {
      let sum = 0;
      for (let j = 0; j < t.matrix.cols; j++) sum += Math.hypot(t.matrix.get(i, j).re, t.matrix.get(i, j).im);
      row = Math.max(row, sum);
    }
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

function firstNonFinite(m: ComplexMatrix): string | undefined {
  for (let i = 0; i < m.rows; i++) {
    for (let j = 0; j < m.cols; j++) {
      const z = m.get(i, j);
      if (!Number.isFinite(z.re) || !Number.isFinite(z.im)) return `${i}, ${j}`;
    }
  }
  return undefined;
}

function explicitMatrix(
  spec: MatrixSpec,
  dim: number,
  scope: Scope,
  path: KeyPath,
): ComplexMatrix {
  const m = new ComplexMatrix(dim, dim);
  if (!Array.isArray(spec)) {
    const entry = compileExpression(spec.entry, {
      ...scope,
      variables: ["row", "col"],
    }, [...path, "entry"]);
    for (let i = 0; i < dim; i++) {
      for (let j = 0; j < dim; j++) {
        const z = toComplex(entry.at(0, i, j));
        m.set(i, j, z.re, z.im);
      }
    }
    return m;
  }
  const rows = spec;
  if (rows.length !== dim) {
    throw new CaseError(
      `has ${rows.length} rows, but the space has dimension ${dim}`,
      path,
      `write a ${dim}×${dim} matrix (one row per level)`,
    );
  }
  rows.forEach((row, i) => {
    if (row.length !== dim) {
      throw new CaseError(
        `row ${i} has ${row.length} entries; the matrix must be square, ${dim}×${dim}`,
        [...path, i],
        `give every row ${dim} entries`,
      );
    }
    row.forEach((entry, j) => {
      const z = toComplex(entryValue(entry, scope, [...path, i, j]));
      m.set(i, j, z.re, z.im);
    });
  });
  return m;
}

/** The value of a term's coefficient at t. */
function coefAt(term: AssembledTerm, t: number): Complex {
  if (!term.coef) return { re: 1, im: 0 };
  const z = toComplex(term.coef.at(t));
  return term.conjugate ? { re: z.re, im: -z.im } : z;
}

function checkSection(
  name: string,
  terms: AssembledTerm[],
  space: Space,
  times: number[],
): void {
  const timeDependent = terms.some((t) => t.coef?.usesTime);
  for (const t of timeDependent ? times : [times[0]!]) {
    let sum = new ComplexMatrix(space.dim, space.dim);
    let scale = 0;
    for (const term of terms) {
      const c = coefAt(term, t);
      if (!Number.isFinite(c.re) || !Number.isFinite(c.im)) {
        throw new CaseError(
          `coef "${term.coef!.source}" is ${c.re}${c.im ? ` + ${c.im}i` : ""} at t = ${t}`,
          [...term.path, "coef"],
          "make the expression finite over the whole time window (division by zero? log or sqrt of a negative number?)",
        );
      }
      const part = term.matrix.scale(c);
      scale = Math.max(scale, part.maxAbs());
      sum = sum.add(part);
    }
    const defect = sum.hermiticityDefect();
    if (defect.value > 1e-10 * Math.max(scale, 1e-300)) {
      const at = `(${space.labels[defect.row]}, ${space.labels[defect.col]})`;
      throw new CaseError(
        `Cannot build the ${name} as it is not Hermitian: largest |A−A†| is ${
          defect.value.toPrecision(3)
        } at ${at}` +
          (timeDependent ? ` at t = ${t}` : ""),
        [name],
        "add hc = true to the term (or end its op with + h.c.), or make the matrix Hermitian; a complex coef needs its conjugate partner",
      );
    }
  }
}

function coefficientOf(
  term: AssembledTerm,
  relocate: (e: CaseError) => CaseError,
): Coefficient {
  const coef = term.coef;
  if (!coef) return { kind: "constant", re: 1, im: 0 };
  if (!coef.usesTime) {
    const z = coefAt(term, 0);
    return { kind: "constant", re: z.re, im: z.im };
  }
  const conjugate = term.conjugate;
  return {
    kind: "sampled",
    sample(times: Float64Array, out: Float64Array) {
      coef.sample(times, out);
      for (let k = 0; k < times.length; k++) {
        if (conjugate) out[2 * k + 1] = -out[2 * k + 1]!;
        if (
          !Number.isFinite(out[2 * k]!) || !Number.isFinite(out[2 * k + 1]!)
        ) {
          throw relocate(
            new CaseError(
              `coef "${coef.source}" is not finite at t = ${times[k]}`,
              [...term.path, "coef"],
              "make the expression finite over the whole time window (division by zero? log or sqrt of a negative number?)",
            ),
          );
        }
      }
    },
  };
}

function startState(
  source: CaseSource,
  space: Space,
  scope: Scope,
  warnings: string[],
): Float64Array {
  const start = source.spec.start;
  if ((start.state === undefined) === (start.amplitudes === undefined)) {
    throw new CaseError(
      "give exactly one of state and amplitudes",
      ["start"],
      'e.g. state = "g", or amplitudes = [1, 0, …]',
    );
  }
  const psi = new Float64Array(2 * space.dim);
  if (start.state !== undefined) {
    const k = space.labels.indexOf(start.state);
    if (k < 0) {
      throw new CaseError(
        `unknown label "${start.state}"`,
        ["start", "state"],
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
  let norm2 = 0;
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
    norm2 += z.re * z.re + z.im * z.im;
  });
  if (!(norm2 > 0)) {
    throw new CaseError(
      "all amplitudes are zero",
      ["start", "amplitudes"],
      "give a non-zero state",
    );
  }
  if (Math.abs(norm2 - 1) > 1e-12) {
    warnings.push(
      `[start] amplitudes have norm ${Math.sqrt(norm2).toPrecision(6)}; normalised to 1`,
    );
    psi.forEach((x, k) => (psi[k] = x / Math.sqrt(norm2)));
  }
  return psi;
}
