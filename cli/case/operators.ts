/**
 * Operator notation: ket-bras on level labels and local operators of named
 * subsystems (labelled levels, spins, truncated oscillators), embedded in
 * the composite space by tensor products. An `op` string is an ordinary
 * expression in which these operators are values:
 *
 * - `|e><g|` ket-bra on labels (of the whole space, or of one subsystem when
 *   the labels belong to exactly one);
 * - spin: `sx(q) sy(q) sz(q)` (components of S), `splus(q) sminus(q)`,
 *   `sigmax(q) sigmay(q) sigmaz(q)` (= 2·S);
 * - oscillator: `a(m)`, `adag(m)`, `num(m)`;
 * - any subsystem: `id(q)`; any operator: `dag(X)`;
 * - sums, products (`*` is the operator product), scalar factors from
 *   params, `X^2`; a number added to an operator means that number times
 *   the identity; a trailing `+ h.c.` adds the Hermitian conjugate.
 *
 * @module
 */

import type { MathNode } from "mathjs";
import { CaseError, type KeyPath } from "./errors.ts";
import { type Complex, ComplexMatrix } from "./complex_matrix.ts";
import { compileNode, parseExpression, type Scope, toComplex } from "./expression.ts";
import type { Space, Subsystem } from "./space.ts";

/** Spin-s operators S_z, S_+ in the basis m = s…−s. */
function spinMatrices(s: number): { sz: ComplexMatrix; splus: ComplexMatrix } {
  const n = Math.round(2 * s) + 1;
  const sz = new ComplexMatrix(n, n), splus = new ComplexMatrix(n, n);
  for (let k = 0; k < n; k++) {
    const m = s - k;
    sz.set(k, k, m);
    // S+|m> = sqrt(s(s+1) − m(m+1)) |m+1>, and |m+1> is index k−1.
    if (k > 0) splus.set(k - 1, k, Math.sqrt(s * (s + 1) - m * (m + 1)));
  }
  return { sz, splus };
}

/** The annihilation operator truncated to n Fock states: a|k> = √k |k−1>. */
function lowering(n: number): ComplexMatrix {
  const a = new ComplexMatrix(n, n);
  for (let k = 1; k < n; k++) a.set(k - 1, k, Math.sqrt(k));
  return a;
}

const SPIN_OPS = [
  "sx",
  "sy",
  "sz",
  "splus",
  "sminus",
  "sigmax",
  "sigmay",
  "sigmaz",
];
const OSC_OPS = ["a", "adag", "num"];
/** Names of the operator functions (reserved: no param may use them). */
export const OPERATOR_FUNCTIONS: readonly string[] = [
  ...SPIN_OPS,
  ...OSC_OPS,
  "id",
  "dag",
  "ketbra",
];

/** The local operator `name` on subsystem `sub`, or undefined if it does not apply there. */
function localOperator(
  name: string,
  sub: Subsystem,
): ComplexMatrix | undefined {
  const n = sub.labels.length;
  if (name === "id") return ComplexMatrix.identity(n);
  if (sub.kind === "spin" && SPIN_OPS.includes(name)) {
    const { sz, splus } = spinMatrices(sub.spin!);
    const sminus = splus.dagger();
    const half = { re: 0.5, im: 0 };
    const sx = splus.add(sminus).scale(half);
    const sy = splus.sub(sminus).scale({ re: 0, im: -0.5 });
    const two = { re: 2, im: 0 };
    const table: Record<string, ComplexMatrix> = {
      sx,
      sy,
      sz,
      splus,
      sminus,
      sigmax: sx.scale(two),
      sigmay: sy.scale(two),
      sigmaz: sz.scale(two),
    };
    return table[name];
  }
  if (sub.kind === "oscillator" && OSC_OPS.includes(name)) {
    const a = lowering(n);
    if (name === "a") return a;
    if (name === "adag") return a.dagger();
    return a.dagger().mul(a);
  }
  return undefined;
}

/** Embeds a local operator of subsystem k into the whole space. */
function embed(space: Space, k: number, local: ComplexMatrix): ComplexMatrix {
  let out = ComplexMatrix.identity(1);
  space.subsystems.forEach((sub, j) => {
    out = out.kron(j === k ? local : ComplexMatrix.identity(sub.labels.length));
  });
  return out;
}

type OpValue = { kind: "scalar"; z: Complex } | {
  kind: "op";
  m: ComplexMatrix;
};

/**
 * Evaluates an `op` string to a matrix on the space.
 *
 * @param source the operator expression
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
): { matrix: ComplexMatrix; hc: boolean } {
  let text = source.trim();
  const hcPattern = /\+\s*h\.c\.?\s*$/;
  const hc = hcPattern.test(text);
  if (hc) text = text.replace(hcPattern, "");
  const fail = (what: string, fix?: string): never => {
    throw new CaseError(`in "${source}": ${what}`, path, fix);
  };
  if (/h\.c\./.test(text)) {
    fail('"h.c." can only stand at the end, as "… + h.c."');
  }
  // Ket-bras become calls: |a><b| → ketbra("a", "b").
  text = text.replace(
    /\|([^|<>]*)>\s*<([^|<>]*)\|/g,
    (_m, a: string, b: string) => `ketbra(${JSON.stringify(a.trim())}, ${JSON.stringify(b.trim())})`,
  );
  if (text.includes("|")) {
    fail(
      "a ket-bra is malformed",
      'write it as |a><b| with level labels a and b, e.g. "|e><g|"',
    );
  }
  const node = parseExpression(text, path);

  const containsOperator = (n: MathNode): boolean => {
    let found = false;
    n.traverse((child) => {
      // deno-lint-ignore no-explicit-any
      const c = child as any;
      if (
        c.type === "FunctionNode" && c.fn?.type === "SymbolNode" &&
        OPERATOR_FUNCTIONS.includes(c.fn.name)
      ) {
        found = true;
      }
    });
    return found;
  };

  const subsystemArg = (name: string, args: MathNode[]): number => {
    // deno-lint-ignore no-explicit-any
    const arg = args[0] as any;
    if (args.length !== 1 || arg?.type !== "SymbolNode") {
      fail(
        `${name}() takes one subsystem name, e.g. ${name}(${space.subsystems[0]?.name ?? "q"})`,
      );
    }
    const k = space.subsystems.findIndex((s) => s.name === arg.name);
    if (k < 0) {
      fail(
        `unknown subsystem "${arg.name}" in ${name}()`,
        `use one of: ${space.subsystems.map((s) => s.name).join(", ")}`,
      );
    }
    return k;
  };

  const ketbra = (a: string, b: string): ComplexMatrix => {
    const i = space.labels.indexOf(a), j = space.labels.indexOf(b);
    if (i >= 0 && j >= 0) {
      const m = new ComplexMatrix(space.dim, space.dim);
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
      return embed(space, k, local);
    }
    const shown = space.labels.slice(0, 12).join(", ") +
      (space.labels.length > 12 ? ", …" : "");
    if (owners.length > 1) {
      return fail(
        `|${a}><${b}| is ambiguous: subsystems ${
          owners.map((o) => o.s.name).join(" and ")
        } both have these labels`,
        `write the full product labels, e.g. |${space.labels[0]}><${space.labels[1] ?? space.labels[0]}|`,
      );
    }
    return fail(`unknown label in |${a}><${b}|`, `labels are: ${shown}`);
  };

  const asMatrix = (v: OpValue): ComplexMatrix =>
    v.kind === "op" ? v.m : ComplexMatrix.identity(space.dim).scale(v.z);

  const walk = (n: MathNode): OpValue => {
    if (!containsOperator(n)) {
      const value = compileNode(n, source, scope, path).at(0);
      return { kind: "scalar", z: toComplex(value) };
    }
    // deno-lint-ignore no-explicit-any
    const node = n as any;
    switch (n.type) {
      case "ParenthesisNode":
        return walk(node.content);
      case "FunctionNode": {
        const name: string = node.fn.name;
        const args: MathNode[] = node.args;
        if (name === "ketbra") {
          // deno-lint-ignore no-explicit-any
          const [a, b] = args as any[];
          if (
            args.length !== 2 || a.type !== "ConstantNode" ||
            b.type !== "ConstantNode"
          ) {
            fail("ketbra takes two labels: write |a><b|");
          }
          return { kind: "op", m: ketbra(String(a.value), String(b.value)) };
        }
        if (name === "dag") {
          if (args.length !== 1) fail("dag() takes one operator");
          return { kind: "op", m: asMatrix(walk(args[0]!)).dagger() };
        }
        const k = subsystemArg(name, args);
        const sub = space.subsystems[k]!;
        const local = localOperator(name, sub);
        if (!local) {
          const fits = sub.kind === "spin" ? SPIN_OPS : sub.kind === "oscillator" ? OSC_OPS : [];
          return fail(
            `${name}() does not apply to ${sub.name}, a subsystem of kind "${sub.kind}"`,
            fits.length
              ? `on ${sub.name} use ${fits.join(", ")} or id`
              : `on ${sub.name} use ket-bras such as |${sub.labels[1] ?? sub.labels[0]}><${sub.labels[0]}|`,
          );
        }
        return { kind: "op", m: embed(space, k, local) };
      }
      case "OperatorNode": {
        const args = (node.args as MathNode[]).map(walk);
        const [x, y] = args as [OpValue, OpValue];
        switch (node.fn) {
          case "unaryPlus":
            return x;
          case "unaryMinus":
            return { kind: "op", m: asMatrix(x).scale({ re: -1, im: 0 }) };
          case "add":
            return { kind: "op", m: asMatrix(x).add(asMatrix(y)) };
          case "subtract":
            return { kind: "op", m: asMatrix(x).sub(asMatrix(y)) };
          case "multiply":
            if (x.kind === "scalar") {
              return { kind: "op", m: asMatrix(y).scale(x.z) };
            }
            if (y.kind === "scalar") return { kind: "op", m: x.m.scale(y.z) };
            return { kind: "op", m: x.m.mul(y.m) };
          case "divide": {
            if (y.kind !== "scalar") {
              return fail("cannot divide by an operator");
            }
            const d = y.z.re * y.z.re + y.z.im * y.z.im;
            return {
              kind: "op",
              m: asMatrix(x).scale({ re: y.z.re / d, im: -y.z.im / d }),
            };
          }
          case "pow": {
            const p = y.kind === "scalar" ? y.z : undefined;
            if (!p || p.im !== 0 || !Number.isInteger(p.re) || p.re < 0) {
              return fail(
                "an operator can only be raised to a whole power ≥ 0, e.g. num(m)^2",
              );
            }
            return { kind: "op", m: asMatrix(x).power(p.re) };
          }
        }
        return fail(`the operator "${node.op}" cannot act on operators`);
      }
      default:
        return fail(
          `${n.type.replace("Node", "").toLowerCase()} syntax cannot hold operators`,
        );
    }
  };

  const value = walk(node);
  if (value.kind === "scalar") {
    return fail(
      "this is a number, not an operator",
      `multiply by an operator, e.g. "${source} * id(${space.subsystems[0]?.name ?? "q"})"`,
    );
  }
  return { matrix: value.m, hc };
}
