/**
 * Is H0 (or V) Hermitian at every time the engine uses it? A section is a sum
 * Σ f_k(t)·M_k. A term with its conjugate partner (`hc`, `+ h.c.`) is
 * Hermitian by construction; so is a Hermitian matrix with a real
 * coefficient. Every other term contributes to the anti-Hermitian part
 *
 *   D(t) = Σ_k [Im f_k(t)·H_k + Re f_k(t)·K_k],  M_k = H_k + i·K_k (H_k, K_k Hermitian),
 *
 * which must vanish. The constant terms' share of D is one fixed matrix, the
 * others are fixed matrices with scalar weights, so ‖D(t)‖ is the length of
 * R·w(t) for the small triangular R of a QR factorisation of those matrices
 * (modified Gram–Schmidt in the Frobenius inner product, Golub & Van Loan
 * §5.2.8): O(1) work per time. It is evaluated at every node the integrator
 * samples, so no time the engine uses goes unchecked, however short a pulse.
 *
 * @module
 */

import { CaseError } from "./errors.ts";
import { ComplexMatrix, type Operator } from "./complex_matrix.ts";
import { forEachEntry } from "./sparse_matrix.ts";
import { assembleAt, type AssembledTerm, coefAt, type Section } from "./terms.ts";
import type { Space } from "./space.ts";
import { forEachNode } from "../../engine/model.ts";

/** |D(t)| allowed relative to Σ|f_k(t)|·‖M_k‖ (round-off in assembling the matrices). */
const RELATIVE_TOLERANCE = 1e-10;

/** A matrix of the anti-Hermitian part and the weight it carries at time t. */
interface Part {
  matrix: Operator;
  weight: (t: number) => number;
}

function frobenius(m: Operator): number {
  let s = 0;
  forEachEntry(m, (_i, _j, z) => (s += z.re * z.re + z.im * z.im));
  return Math.sqrt(s);
}

/** Re Σ conj(a_ij)·b_ij (the real inner product of the entries). */
function dot(a: Operator, b: Operator): number {
  let s = 0;
  forEachEntry(a, (i, j, z) => {
    const w = b.get(i, j);
    s += z.re * w.re + z.im * w.im;
  });
  return s;
}

/** (M + M†)/2 and (M − M†)/(2i): Hermitian and "anti-Hermitian over i" parts. */
function split(m: Operator): { h: Operator; k: Operator } {
  const dag = m.dagger();
  return { h: m.add(dag).scale({ re: 0.5, im: 0 }), k: m.sub(dag).scale({ re: 0, im: -0.5 }) };
}

/** The parts of D and the scale they are judged against; terms with a partner are left out. */
function antiHermitianParts(terms: AssembledTerm[], dim: number) {
  // the zero matrix, stored as the terms are
  let constant: Operator = terms[0]?.matrix.scale({ re: 0, im: 0 }) ?? new ComplexMatrix(dim, dim);
  const parts: Part[] = [];
  const scaled: { term: AssembledTerm; norm: number }[] = [];
  terms.forEach((term, i) => {
    const paired = term.conjugate || terms[i + 1]?.conjugate === true;
    if (paired) return;
    const { h, k } = split(term.matrix);
    const hermitian = frobenius(k) === 0;
    if (!term.coef?.usesTime) {
      const c = coefAt(term, 0);
      constant = constant.add(h.scale({ re: c.im, im: 0 })).add(k.scale({ re: c.re, im: 0 }));
      scaled.push({ term, norm: frobenius(term.matrix) });
      return;
    }
    if (!term.coef.isComplex && hermitian) return;
    scaled.push({ term, norm: frobenius(term.matrix) });
    if (term.coef.isComplex) parts.push({ matrix: h, weight: (t) => coefAt(term, t).im });
    if (!hermitian) parts.push({ matrix: k, weight: (t) => coefAt(term, t).re });
  });
  parts.unshift({ matrix: constant, weight: () => 1 });
  return { parts, scaled };
}

/** R of the QR factorisation of the parts (columns), so that ‖Σ w_j P_j‖_F = ‖R·w‖₂. */
function triangularFactor(parts: Part[]): number[][] {
  const q: Operator[] = [];
  const r = parts.map(() => parts.map(() => 0));
  parts.forEach(({ matrix }, j) => {
    let v = matrix;
    q.forEach((e, i) => {
      const c = dot(e, v);
      r[i]![j] = c;
      v = v.sub(e.scale({ re: c, im: 0 }));
    });
    const norm = frobenius(v);
    r[j]![j] = norm;
    q.push(norm > 0 ? v.scale({ re: 1 / norm, im: 0 }) : v);
  });
  return r;
}

/**
 * Refuses a section that is not Hermitian at some time the engine would use.
 *
 * @param name which section
 * @param terms its assembled terms (conjugate partners right after their terms)
 * @param space the space (for labels in the message)
 * @param grid the window, steps and samples (the integrator's nodes)
 * @throws {CaseError} naming the largest |A−A†|, where and when
 */
export function checkHermitian(
  name: Section,
  terms: AssembledTerm[],
  space: Space,
  grid: { tStart: number; tEnd: number; steps: number; samples: number },
): void {
  const { parts, scaled } = antiHermitianParts(terms, space.dim);
  const r = triangularFactor(parts);
  const fails = (t: number) => {
    const w = parts.map((p) => p.weight(t));
    let defect2 = 0;
    for (let i = 0; i < w.length; i++) {
      let y = 0;
      for (let j = i; j < w.length; j++) y += r[i]![j]! * w[j]!;
      defect2 += y * y;
    }
    let scale = 0;
    for (const { term, norm } of scaled) scale += Math.hypot(coefAt(term, t).re, coefAt(term, t).im) * norm;
    return Math.sqrt(defect2) > RELATIVE_TOLERANCE * Math.max(scale, 1e-300);
  };
  const timeDependent = parts.length > 1;
  if (!timeDependent) {
    if (fails(grid.tStart)) refuse(name, terms, space, grid.tStart, false);
    return;
  }
  if (fails(grid.tStart)) refuse(name, terms, space, grid.tStart, true);
  forEachNode(grid, (t) => {
    if (fails(t)) refuse(name, terms, space, t, true);
  });
}

function refuse(
  name: Section,
  terms: AssembledTerm[],
  space: Space,
  t: number,
  timeDependent: boolean,
): never {
  const defect = assembleAt(terms, space.dim, t).hermiticityDefect();
  const at = `(${space.labels[defect.row]}, ${space.labels[defect.col]})`;
  throw new CaseError(
    `Cannot build the ${name} as it is not Hermitian: largest |A−A†| is ${
      defect.value.toPrecision(3)
    } at ${at}` +
      (timeDependent ? ` at t = ${Number(t.toPrecision(6))}` : ""),
    [name],
    "add hc = true to the term (or end its op with + h.c.), or make the matrix Hermitian; a complex or " +
      "time-dependent coef on a non-Hermitian matrix needs its conjugate partner",
  );
}
