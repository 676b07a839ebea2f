/**
 * Operator notation: an `op` string is an ordinary expression in which
 * operators are values, written as on paper.
 *
 * - `|e><g|`: a ket-bra on labels (of the whole space, or of the one
 *   subsystem that has both labels, embedded by tensor product);
 * - `Sx_q Sy_q Sz_q S+_q S-_q`, `σx_q σy_q σz_q σ+_q σ-_q` on a spin q;
 *   `a_m` and `n_m` on an oscillator m (see local_operators.ts);
 * - `I`, the identity; `X†` (or `X'`), the adjoint of any operator X;
 * - sums, products (`*` is the operator product, across subsystems too),
 *   scalar factors from params, whole powers `X^2`; a number added to an
 *   operator means that number times the identity; a trailing `+ h.c.` adds
 *   the Hermitian conjugate.
 *
 * The text is rewritten for the parser only in ways that keep every
 * character's position (ket-bras become placeholders of the same length,
 * `S+` becomes `S$`, `†` becomes `'`), and every message quotes the text
 * as written.
 *
 * @module
 */

import type { MathNode } from "mathjs";
import { CaseError, type KeyPath, quoted } from "./errors.ts";
import { type Complex, ComplexMatrix, type Operator } from "./complex_matrix.ts";
import { SparseComplexMatrix, TooDenseError } from "./sparse_matrix.ts";
import { compileNode, parseExpression, type Scope, toComplex, withinDepth } from "./expression.ts";
import { constantCode, isFunctionName } from "./expression_builtins.ts";
import { asWritten, IDENTITY, localMatrix, splitLocal, symbolsOf, toParserForm } from "./local_operators.ts";
import type { Space } from "./space.ts";

/** A trailing `+ h.c.` (or `+ H.c.`): the term's Hermitian conjugate is added. */
export const HC_SUFFIX = /\+\s*h\.c\.?\s*$/i;

/** Names the notation reserves (no param may use them). */
export const OPERATOR_NAMES: readonly string[] = [IDENTITY];

type OpValue = { kind: "scalar"; z: Complex } | { kind: "op"; m: Operator };

/** Identity and zero matrices of the space's storage, and a small dense local matrix in it. */
interface Kit {
  identity(n: number): Operator;
  zeros(n: number): Operator;
  local(m: ComplexMatrix): Operator;
}

const DENSE: Kit = {
  identity: (n) => ComplexMatrix.identity(n),
  zeros: (n) => new ComplexMatrix(n, n),
  local: (m) => m,
};

const SPARSE: Kit = {
  identity: (n) => SparseComplexMatrix.identity(n),
  zeros: (n) => new SparseComplexMatrix(n, n),
  local: (m) => SparseComplexMatrix.fromDense(m.rows, m.cols, m.data),
};
type Fail = (what: string, fix?: string) => never;

/** What a name in an operator expression stands for, when it is an operator. */
type Named =
  | { kind: "ketbra"; bra: string; ket: string }
  | { kind: "identity" }
  | { kind: "local"; symbol: string; subsystem: number };

/**
 * Evaluates an `op` string to a matrix on the space.
 *
 * @param source the operator expression as written
 * @param space the Hilbert space
 * @param scope parameters (time is not allowed in operators)
 * @param path where it sits in the case
 * @returns the matrix and whether a trailing `+ h.c.` asked for the conjugate
 * @example
 * ```ts
 * import { ok as assert } from "node:assert/strict";
 * import { evaluateOperator } from "./operators.ts";
 * import { productSpace } from "./space.ts";
 * const space = productSpace([{ name: "atom", kind: "levels", labels: ["g", "e"] }]);
 * const { matrix } = evaluateOperator("0.5*|e><g| + h.c.", space, { params: new Map(), allowTime: false }, ["op"]);
 * assert(matrix.get(1, 0).re === 0.5);
 * ```
 */
export function evaluateOperator(
  source: string,
  space: Space,
  scope: Scope,
  path: KeyPath,
): { matrix: Operator; hc: boolean } {
  const fail: Fail = (what, fix) => {
    throw new CaseError(`in ${quoted(source)}: ${what}`, path, fix);
  };
  const kit = space.storage === "sparse" ? SPARSE : DENSE;
  const { text, hc, ketbras } = readNotation(source, fail);
  const node = parseExpression(toParserForm(text), path, source);
  const names = new Map<string, Named | undefined>();
  const named = (name: string): Named | undefined => {
    if (!names.has(name)) names.set(name, classify(name, ketbras, space, scope, fail));
    return names.get(name);
  };
  const walker = new OperatorWalker(space, scope, path, source, named, fail, kit);
  const value = withinDepth(() => {
    checkNames(node, named, scope, space, fail);
    try {
      return walker.walk(node);
    } catch (e) {
      if (!(e instanceof TooDenseError)) throw e;
      return fail(
        `${e.message}: too dense to assemble as a sparse operator`,
        "sparse storage is for sums of local terms; write the operator as such a sum, or shrink the space",
      );
    }
  }, fail);
  if (value.kind === "scalar") {
    return fail(
      "this is a number, not an operator",
      `multiply by an operator, e.g. "(${source}) * ${IDENTITY}" for a multiple of the identity`,
    );
  }
  return { matrix: value.m, hc };
}

/**
 * The text with a trailing `+ h.c.` blanked out and each ket-bra replaced by a placeholder name of the
 * same length (`|e><g|` → `$k0$$$`), so that the parser's positions are the user's.
 */
function readNotation(
  source: string,
  fail: Fail,
): { text: string; hc: boolean; ketbras: [string, string][] } {
  if (source.includes("$")) fail('"$" is not part of the operator notation');
  const suffix = HC_SUFFIX.exec(source);
  let text = suffix ? source.slice(0, suffix.index) + " ".repeat(suffix[0].length) : source;
  if (/h\.c\./i.test(text)) fail('"h.c." can only stand at the end, as "… + h.c."');
  const ketbras: [string, string][] = [];
  text = text.replace(/\|([^|<>]*)>\s*<([^|<>]*)\|/g, (all, ket: string, bra: string) => {
    if (!ket.trim() || !bra.trim()) fail(`the ket-bra ${all} needs a label in both the ket and the bra`);
    const name = `$k${ketbras.length}`;
    ketbras.push([ket.trim(), bra.trim()]);
    return name.length <= all.length ? name.padEnd(all.length, "$") : fail("too many ket-bras in one term");
  });
  if (text.includes("|")) {
    fail("a ket-bra is malformed", 'write it as |a><b| with level labels a and b, e.g. "|e><g|"');
  }
  return { text, hc: suffix !== null, ketbras };
}

/** What a name stands for: an operator, or undefined for a scalar (param, constant, t). */
function classify(
  name: string,
  ketbras: [string, string][],
  space: Space,
  scope: Scope,
  fail: Fail,
): Named | undefined {
  const ket = /^\$k(\d+)\$*$/.exec(name);
  if (ket) {
    const [k, b] = ketbras[Number(ket[1])]!;
    return { kind: "ketbra", ket: k, bra: b };
  }
  if (name === IDENTITY) return { kind: "identity" };
  const local = splitLocal(name);
  if (!local) return undefined;
  const k = space.subsystems.findIndex((s) => s.name === local.subsystem);
  if (k < 0) {
    if (scope.params.has(name)) return undefined; // a param that happens to look like a subscripted symbol
    return fail(
      `${asWritten(name)}: there is no subsystem "${local.subsystem}"`,
      `subsystems are: ${space.subsystems.map((s) => `${s.name} (${s.kind})`).join(", ")}`,
    );
  }
  const sub = space.subsystems[k]!;
  if (scope.params.has(name)) {
    fail(`the param ${name} has the name of the operator ${asWritten(name)}`, "rename the param");
  }
  if (sub.kind !== local.kind) {
    return fail(
      `${asWritten(name)}: ${local.written} is ${
        local.kind === "spin" ? "a spin" : "an oscillator"
      } operator, ` +
        `but ${sub.name} is ${
          sub.kind === "levels"
            ? "a set of labelled levels"
            : `a${sub.kind === "oscillator" ? "n" : ""} ${sub.kind}`
        }`,
      sub.kind === "levels"
        ? `on ${sub.name} use ket-bras such as |${sub.labels[1] ?? sub.labels[0]}><${sub.labels[0]}|`
        : `on ${sub.name} use ${symbolsOf(sub.kind).map((s) => `${s}_${sub.name}`).join(", ")}`,
    );
  }
  return { kind: "local", symbol: local.symbol, subsystem: k };
}

/** The operators a user can write in this space, with an example, for messages. */
export function notationHelp(space: Space): string {
  const spin = space.subsystems.find((s) => s.kind === "spin")?.name ?? "q";
  const osc = space.subsystems.find((s) => s.kind === "oscillator")?.name ?? "m";
  const on = (kind: "spin" | "oscillator", name: string) =>
    symbolsOf(kind).map((s) => `${s}_${name}`).join(" ");
  return `operators are written as on paper: |a><b| (ket-bra on labels); ${IDENTITY} (identity); ` +
    `on a spin ${spin}: ${on("spin", spin)} (σ = 2S); on an oscillator ${osc}: a_${osc} (lowering), ` +
    `n_${osc} (number, a_${osc}†a_${osc}); X† or X' (adjoint of any X); "+ h.c." at the end; ` +
    `e.g. "g*(σ+_${spin}*a_${osc} + σ-_${spin}*a_${osc}†)"`;
}

/** Refuses names and calls the notation does not know, with the list of what it does know. */
function checkNames(
  node: MathNode,
  named: (name: string) => Named | undefined,
  scope: Scope,
  space: Space,
  fail: Fail,
): void {
  node.traverse((child, _path, parent) => {
    // deno-lint-ignore no-explicit-any
    const c = child as any;
    if (c.type === "FunctionNode" && c.fn?.type === "SymbolNode" && !isFunctionName(c.fn.name)) {
      fail(`${asWritten(c.fn.name)}(…) is not part of the notation`, notationHelp(space));
    }
    // deno-lint-ignore no-explicit-any
    const isCallee = (parent as any)?.type === "FunctionNode" && (parent as any).fn === child;
    if (c.type !== "SymbolNode" || isCallee) return;
    const name: string = c.name;
    if (named(name) || scope.params.has(name) || constantCode(name) || name === "t") return;
    fail(`unknown name "${asWritten(name)}"`, notationHelp(space));
  });
}

/** Evaluates a checked operator expression, matrices for operators and complex numbers for scalars. */
class OperatorWalker {
  constructor(
    readonly space: Space,
    readonly scope: Scope,
    readonly path: KeyPath,
    readonly source: string,
    readonly named: (name: string) => Named | undefined,
    readonly fail: Fail,
    readonly kit: Kit,
  ) {}

  #containsOperator(n: MathNode): boolean {
    let found = false;
    n.traverse((child) => {
      // deno-lint-ignore no-explicit-any
      if ((child as any).type === "SymbolNode" && this.named((child as any).name)) found = true;
    });
    return found;
  }

  #matrix(v: OpValue): Operator {
    return v.kind === "op" ? v.m : this.kit.identity(this.space.dim).scale(v.z);
  }

  walk(n: MathNode): OpValue {
    if (!this.#containsOperator(n)) {
      return { kind: "scalar", z: toComplex(compileNode(n, this.source, this.scope, this.path).at(0)) };
    }
    // deno-lint-ignore no-explicit-any
    const node = n as any;
    switch (n.type) {
      case "ParenthesisNode":
        return this.walk(node.content);
      case "SymbolNode":
        return { kind: "op", m: this.#named(this.named(node.name)!) };
      case "OperatorNode":
        return this.#operator(node.fn, node.op, (node.args as MathNode[]).map((a) => this.walk(a)));
      case "FunctionNode":
        return this.fail(`${node.fn.name}() takes numbers, not operators`);
      default:
        return this.fail(`${n.type.replace("Node", "").toLowerCase()} syntax cannot hold operators`);
    }
  }

  #named(named: Named): Operator {
    const { space, kit } = this;
    if (named.kind === "identity") return kit.identity(space.dim);
    if (named.kind === "local") {
      const sub = space.subsystems[named.subsystem]!;
      return embed(space, named.subsystem, kit.local(localMatrix(named.symbol, sub)), kit);
    }
    return ketbra(space, named.ket, named.bra, this.fail, kit);
  }

  #operator(fn: string, op: string, args: OpValue[]): OpValue {
    const [x, y] = args as [OpValue, OpValue];
    const m = (v: OpValue) => this.#matrix(v);
    switch (fn) {
      case "unaryPlus":
        return x;
      case "unaryMinus":
        return { kind: "op", m: m(x).scale({ re: -1, im: 0 }) };
      case "ctranspose":
      case "transpose":
        return { kind: "op", m: m(x).dagger() };
      case "add":
        return { kind: "op", m: m(x).add(m(y)) };
      case "subtract":
        return { kind: "op", m: m(x).sub(m(y)) };
      case "multiply":
        if (x.kind === "scalar") return { kind: "op", m: m(y).scale(x.z) };
        if (y.kind === "scalar") return { kind: "op", m: x.m.scale(y.z) };
        return { kind: "op", m: x.m.mul(y.m) };
      case "divide": {
        if (y.kind !== "scalar") return this.fail("cannot divide by an operator");
        const d = y.z.re * y.z.re + y.z.im * y.z.im;
        return { kind: "op", m: m(x).scale({ re: y.z.re / d, im: -y.z.im / d }) };
      }
      case "pow": {
        const p = y.kind === "scalar" ? y.z : undefined;
        if (!p || p.im !== 0 || !Number.isInteger(p.re) || p.re < 0) {
          return this.fail("an operator can only be raised to a whole power ≥ 0, e.g. n_m^2");
        }
        return { kind: "op", m: m(x).power(p.re) };
      }
    }
    return this.fail(`the operator "${op}" cannot act on operators`);
  }
}

/** Embeds a local operator of subsystem k into the whole space. */
function embed(space: Space, k: number, local: Operator, kit: Kit): Operator {
  if (local instanceof SparseComplexMatrix) return embedSparse(space, k, local);
  let out = kit.identity(1);
  space.subsystems.forEach((sub, j) => {
    out = out.kron(j === k ? local : kit.identity(sub.labels.length));
  });
  return out;
}

/**
 * I ⊗ L ⊗ I written entry by entry (row-major product labels: the left factors vary slowest): the same matrix as
 * the chain of tensor products, without building the identities' intermediate products.
 */
function embedSparse(space: Space, k: number, local: SparseComplexMatrix): SparseComplexMatrix {
  const n = local.rows;
  const right = space.subsystems.slice(k + 1).reduce((p, s) => p * s.labels.length, 1);
  return SparseComplexMatrix.fromRows(space.dim, space.dim, (row, push) => {
    // row = (l·n + a)·right + r
    const r = row % right, a = Math.floor(row / right) % n, l = Math.floor(row / (right * n));
    local.forEachInRow(a, (b, re, im) => push((l * n + b) * right + r, re, im));
  });
}

/** |a><b| on full product labels, or on the one subsystem that has both labels. */
function ketbra(space: Space, a: string, b: string, fail: Fail, kit: Kit): Operator {
  const i = space.labels.indexOf(a), j = space.labels.indexOf(b);
  if (i >= 0 && j >= 0) {
    const m = kit.zeros(space.dim);
    m.set(i, j, 1);
    return m;
  }
  const owners = space.subsystems
    .map((s, k) => ({ s, k }))
    .filter(({ s }) => s.labels.includes(a) && s.labels.includes(b));
  if (owners.length === 1) {
    const { s, k } = owners[0]!;
    const local = new ComplexMatrix(s.labels.length, s.labels.length);
    local.set(s.labels.indexOf(a), s.labels.indexOf(b), 1);
    return embed(space, k, kit.local(local), kit);
  }
  const shown = space.labels.slice(0, 12).join(", ") + (space.labels.length > 12 ? ", …" : "");
  if (owners.length > 1) {
    return fail(
      `|${a}><${b}| is ambiguous: subsystems ${
        owners.map((o) => o.s.name).join(" and ")
      } both have these labels`,
      `write the full product labels, e.g. |${space.labels[0]}><${space.labels[1] ?? space.labels[0]}|`,
    );
  }
  return fail(`unknown label in |${a}><${b}|`, `labels are: ${shown}`);
}
