/**
 * The terms of `[unperturbed]` (H0) and `[perturbation]` (V): each a matrix
 * (explicit, or in operator notation) times an optional coefficient of t,
 * with its Hermitian-conjugate partner when asked for; assembled, checked for
 * finiteness and Hermiticity, and turned into the engine's operator terms.
 *
 * @module
 */

import { CaseError, type KeyPath } from "./errors.ts";
import type { MatrixSpec, SectionSpec, TermSpec } from "./schema.ts";
import { type Complex, ComplexMatrix, type Operator } from "./complex_matrix.ts";
import { forEachEntry, SparseComplexMatrix } from "./sparse_matrix.ts";
import {
  type Compiled,
  compileExpression,
  isFiniteValue,
  type Scope,
  toComplex,
  type Value,
} from "./expression.ts";
import { evaluateOperator, HC_SUFFIX } from "./operators.ts";
import { entryValue, showValue } from "./params.ts";
import type { Space } from "./space.ts";
import type { UnitConvention } from "./units.ts";
import type { Coefficient, OperatorTerm } from "../../engine/model.ts";

/** The two parts of H(t) = H0(t) + λ·V(t). */
export type Section = "unperturbed" | "perturbation";

/** One assembled term, kept for reports. */
export interface AssembledTerm {
  section: Section;
  path: KeyPath;
  /** The matrix in rad per time unit (dense or sparse, as the space stores operators). */
  matrix: Operator;
  /** The coefficient (undefined: the constant 1). */
  coef: Compiled | undefined;
  /** This is the Hermitian-conjugate partner of the previous term. */
  conjugate: boolean;
}

/** The terms of one section, as written (single term or `terms`), with their paths. */
export function sectionTerms(
  name: Section,
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

/** How many matrices a section assembles to (a conjugate partner counts as one more), known before building any. */
export function termCount(name: Section, section: SectionSpec): number {
  return sectionTerms(name, section).reduce(
    (n, { term }) => n + (term.hc || HC_SUFFIX.test(term.op ?? "") ? 2 : 1),
    0,
  );
}

/**
 * Assembles the terms of one section in rad per time unit.
 *
 * @param name which section
 * @param section the section as written
 * @param space the Hilbert space
 * @param params the case's params
 * @param units the unit convention (its energy factor scales every matrix)
 * @param relocate puts file and line on an error found later, when a coefficient is sampled
 * @returns the terms, each conjugate partner right after its term
 */
export function assembleSection(
  name: Section,
  section: SectionSpec,
  space: Space,
  params: Map<string, Value>,
  units: UnitConvention,
  relocate: (e: CaseError) => CaseError,
): AssembledTerm[] {
  const out: AssembledTerm[] = [];
  const constScope: Scope = { params, allowTime: false };
  for (const { term, path } of sectionTerms(name, section)) {
    const written = termMatrix(term, path, space, constScope);
    const entryFailure = firstNonFinite(written.matrix);
    if (entryFailure) {
      throw new CaseError(
        `matrix entry (${entryFailure}) is not finite`,
        path,
        "check the params it uses",
      );
    }
    const matrix = written.matrix.scale({ re: units.energyFactor, im: 0 });
    const scaledFailure = firstNonFinite(matrix);
    if (scaledFailure) {
      throw new CaseError(
        `matrix entry (${scaledFailure}) overflows double precision once converted from ${units.energy} ` +
          `to rad/${units.time} (× ${units.energyFactor.toPrecision(6)})`,
        path,
        "check the size of the entry and the [units] energy unit",
      );
    }
    const hc = written.hc;
    let coef: Compiled | undefined;
    if (term.coef !== undefined && term.coef !== 1) {
      const scope = { params, allowTime: true, angularFactor: units.energyFactor };
      coef = compileExpression(String(term.coef), scope, [...path, "coef"]);
      if (!coef.usesTime && !isFiniteValue(coef.at(0))) {
        throw relocate(
          new CaseError(
            `coef is ${showValue(coef.at(0))}`,
            [...path, "coef"],
            "check the params it uses",
          ),
        );
      }
    }
    out.push({ section: name, path, matrix, coef, conjugate: false });
    if (hc) out.push({ section: name, path, matrix: matrix.dagger(), coef, conjugate: true });
  }
  return out;
}

/** A term's matrix as written (explicit or in operator notation), and whether it asks for its conjugate. */
function termMatrix(
  term: TermSpec,
  path: KeyPath,
  space: Space,
  scope: Scope,
): { matrix: Operator; hc: boolean } {
  if ((term.matrix === undefined) === (term.op === undefined)) {
    throw new CaseError(
      "a term needs exactly one of matrix and op",
      path,
      'write matrix = [[…]] or op = "…"',
    );
  }
  if (term.matrix) {
    const dense = explicitMatrix(term.matrix, space.dim, scope, [...path, "matrix"]);
    return {
      matrix: space.storage === "sparse"
        ? SparseComplexMatrix.fromDense(space.dim, space.dim, dense.data)
        : dense,
      hc: term.hc ?? false,
    };
  }
  const r = evaluateOperator(term.op!, space, scope, [...path, "op"]);
  if (r.hc && term.hc) {
    throw new CaseError(
      'asks for the conjugate twice ("+ h.c." and hc = true)',
      path,
      "keep one of them",
    );
  }
  return { matrix: r.matrix, hc: r.hc || (term.hc ?? false) };
}

function firstNonFinite(m: Operator): string | undefined {
  let found: string | undefined;
  forEachEntry(m, (i, j, z) => {
    if (found === undefined && (!Number.isFinite(z.re) || !Number.isFinite(z.im))) found = `${i}, ${j}`;
  });
  return found;
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

/** The value of a term's coefficient at t (conjugated for a conjugate partner). */
export function coefAt(term: AssembledTerm, t: number): Complex {
  if (!term.coef) return { re: 1, im: 0 };
  const z = toComplex(term.coef.at(t));
  return term.conjugate ? { re: z.re, im: -z.im } : z;
}

/** The sum of terms at time t (stored as the terms are). */
export function assembleAt(terms: AssembledTerm[], d: number, t: number): Operator {
  let sum: Operator = terms[0]?.matrix instanceof SparseComplexMatrix
    ? new SparseComplexMatrix(d, d)
    : new ComplexMatrix(d, d);
  for (const term of terms) sum = sum.add(term.matrix.scale(coefAt(term, t)));
  return sum;
}

/**
 * Checks that every coefficient of a section is finite at the given times.
 *
 * @throws {CaseError} naming the coefficient, its value and the time
 */
export function checkCoefficientsFinite(terms: AssembledTerm[], times: number[]): void {
  const timeDependent = terms.some((t) => t.coef?.usesTime);
  for (const t of timeDependent ? times : [times[0]!]) {
    for (const term of terms) {
      const c = coefAt(term, t);
      if (!Number.isFinite(c.re) || !Number.isFinite(c.im)) {
        throw new CaseError(
          `coef "${term.coef!.source}" is ${c.re}${c.im ? ` + ${c.im}i` : ""} at t = ${t}`,
          [...term.path, "coef"],
          "make the expression finite over the whole time window (division by zero? log or sqrt of a negative number?)",
        );
      }
    }
  }
}

/**
 * The engine's view of a term: its matrix and a coefficient, sampled in chunks and checked for finiteness.
 *
 * @param term the assembled term
 * @param relocate puts file and line on an error raised while sampling
 * @returns the engine's operator term
 */
export function engineTerm(term: AssembledTerm, relocate: (e: CaseError) => CaseError): OperatorTerm {
  const coefficient = coefficientOf(term, relocate);
  if (term.matrix instanceof SparseComplexMatrix) {
    return { matrix: new Float64Array(0), sparse: term.matrix.toCsr(), coefficient };
  }
  return { matrix: (term.matrix as ComplexMatrix).data, coefficient };
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
