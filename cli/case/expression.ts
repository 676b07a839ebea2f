/**
 * Expressions in case files: parsed by a locked-down mathjs instance, then
 * compiled by our own code generator into plain JavaScript over an
 * allow-list of node types, names and functions. Nothing else is reachable
 * from an expression: no `import`, no `evaluate`, no units, no property
 * access. Compiling once and running plain arithmetic makes sampling on a
 * grid fast (a Gaussian times a cosine runs at tens of millions of samples
 * per second).
 *
 * @module
 */

import { all, create, type MathNode } from "mathjs";
import { CaseError, type KeyPath } from "./errors.ts";
import type { Complex } from "./complex_matrix.ts";
import { PULSES } from "./pulses.ts";

const math = create(all!);
/** The only mathjs entry point we use: the parser. */
const parseMath = math.parse;
// Lock the instance down (common practice for untrusted mathjs input).
const refuse = () => {
  throw new Error("disabled in ordo expressions");
};
math.import({
  import: refuse,
  createUnit: refuse,
  evaluate: refuse,
  parse: refuse,
  simplify: refuse,
  derivative: refuse,
  compile: refuse,
  resolve: refuse,
}, { override: true });

/** A parameter value: real or complex. */
export type Value = number | Complex;

/** What an expression may refer to besides the built-in names. */
export interface Scope {
  /** Parameters by name, in the order they were defined. */
  params: ReadonlyMap<string, Value>;
  /** Whether the time `t` may appear. */
  allowTime: boolean;
  /** Further variables passed at evaluation, after t (e.g. row and col of a matrix entry). */
  variables?: readonly string[];
}

/** A compiled expression. */
export interface Compiled {
  /** The text as written. */
  readonly source: string;
  /** Whether `t` appears in it. */
  readonly usesTime: boolean;
  /** Whether its value may be complex. */
  readonly isComplex: boolean;
  /** The value at time t (pass 0 when time is not allowed), then the scope's variables. */
  at(t: number, ...variables: number[]): Value;
  /** Samples at `times` into `out` as interleaved (re, im). */
  sample(times: Float64Array, out: Float64Array): void;
}

type Kind = "r" | "c";
interface Code {
  kind: Kind;
  js: string;
}

/** Complex arithmetic used by generated code. */
const C = {
  c: (re: number, im: number): Complex => ({ re, im }),
  add: (a: Complex, b: Complex): Complex => ({
    re: a.re + b.re,
    im: a.im + b.im,
  }),
  sub: (a: Complex, b: Complex): Complex => ({
    re: a.re - b.re,
    im: a.im - b.im,
  }),
  mul: (a: Complex, b: Complex): Complex => ({
    re: a.re * b.re - a.im * b.im,
    im: a.re * b.im + a.im * b.re,
  }),
  div: (a: Complex, b: Complex): Complex => {
    const d = b.re * b.re + b.im * b.im;
    return {
      re: (a.re * b.re + a.im * b.im) / d,
      im: (a.im * b.re - a.re * b.im) / d,
    };
  },
  neg: (a: Complex): Complex => ({ re: -a.re, im: -a.im }),
  conj: (a: Complex): Complex => ({ re: a.re, im: -a.im }),
  abs: (a: Complex): number => Math.hypot(a.re, a.im),
  arg: (a: Complex): number => Math.atan2(a.im, a.re),
  exp: (a: Complex): Complex => {
    const m = Math.exp(a.re);
    return { re: m * Math.cos(a.im), im: m * Math.sin(a.im) };
  },
  log: (a: Complex): Complex => ({
    re: Math.log(Math.hypot(a.re, a.im)),
    im: Math.atan2(a.im, a.re),
  }),
  sqrt: (a: Complex): Complex => {
    const r = Math.hypot(a.re, a.im);
    const re = Math.sqrt(0.5 * (r + a.re));
    const im = Math.sqrt(0.5 * (r - a.re));
    return { re, im: a.im < 0 ? -im : im };
  },
  pow: (a: Complex, b: Complex): Complex => {
    if (a.re === 0 && a.im === 0) {
      return b.re === 0 && b.im === 0 ? { re: 1, im: 0 } : { re: 0, im: 0 };
    }
    return C.exp(C.mul(b, C.log(a)));
  },
  sin: (a: Complex): Complex => ({
    re: Math.sin(a.re) * Math.cosh(a.im),
    im: Math.cos(a.re) * Math.sinh(a.im),
  }),
  cos: (a: Complex): Complex => ({
    re: Math.cos(a.re) * Math.cosh(a.im),
    im: -Math.sin(a.re) * Math.sinh(a.im),
  }),
  tan: (a: Complex): Complex => C.div(C.sin(a), C.cos(a)),
  sinh: (a: Complex): Complex => ({
    re: Math.sinh(a.re) * Math.cos(a.im),
    im: Math.cosh(a.re) * Math.sin(a.im),
  }),
  cosh: (a: Complex): Complex => ({
    re: Math.cosh(a.re) * Math.cos(a.im),
    im: Math.sinh(a.re) * Math.sin(a.im),
  }),
  tanh: (a: Complex): Complex => C.div(C.sinh(a), C.cosh(a)),
};

/** Functions of one argument that accept complex input (name → real JS). */
const COMPLEX_CAPABLE: Record<string, string> = {
  sin: "Math.sin",
  cos: "Math.cos",
  tan: "Math.tan",
  exp: "Math.exp",
  log: "Math.log",
  sqrt: "Math.sqrt",
  sinh: "Math.sinh",
  cosh: "Math.cosh",
  tanh: "Math.tanh",
};

/** Real-only functions: name → [JS function, arity (−1 = any ≥ 1)]. */
const REAL_ONLY: Record<string, [string, number]> = {
  asin: ["Math.asin", 1],
  acos: ["Math.acos", 1],
  atan: ["Math.atan", 1],
  atan2: ["Math.atan2", 2],
  sign: ["Math.sign", 1],
  floor: ["Math.floor", 1],
  ceil: ["Math.ceil", 1],
  round: ["Math.round", 1],
  min: ["Math.min", -1],
  max: ["Math.max", -1],
  hypot: ["Math.hypot", -1],
};

/** Functions that take any value and return a real or the conjugate. */
const PARTS = ["abs", "re", "im", "arg", "conj"];

const CONSTANTS: Record<string, Code> = {
  pi: { kind: "r", js: "Math.PI" },
  e: { kind: "r", js: "Math.E" },
  tau: { kind: "r", js: "(2*Math.PI)" },
  i: { kind: "c", js: "C.c(0,1)" },
};

/** Every built-in name an expression may use (for error messages and validation). */
export const BUILTIN_NAMES: readonly string[] = [
  ...Object.keys(CONSTANTS),
  ...Object.keys(COMPLEX_CAPABLE),
  ...Object.keys(REAL_ONLY),
  ...PARTS,
  ...Object.keys(PULSES),
];

/** Parses an expression with mathjs, turning its syntax errors into case errors. */
export function parseExpression(source: string, path: KeyPath): MathNode {
  try {
    return parseMath(source);
  } catch (e) {
    throw new CaseError(
      `cannot parse the expression "${source}": ${(e as Error).message}`,
      path,
      'write plain arithmetic with params, t, pi, e, i and the listed functions, e.g. "g*gauss(t, 10, 2)*cos(w*t)"',
    );
  }
}

/**
 * Compiles an expression string against a scope.
 *
 * @param source the expression text
 * @param scope parameters and whether `t` may appear
 * @param path where the expression sits in the case (for errors)
 * @returns the compiled expression
 * @example
 * ```ts
 * import { ok as assert } from "node:assert/strict";
 * import { compileExpression } from "./expression.ts";
 * const f = compileExpression("g*cos(w*t)", { params: new Map([["g", 2], ["w", 0]]), allowTime: true }, ["coef"]);
 * assert(f.at(1) === 2);
 * ```
 */
export function compileExpression(
  source: string,
  scope: Scope,
  path: KeyPath,
): Compiled {
  return compileNode(parseExpression(source, path), source, scope, path);
}

/** Compiles an already parsed mathjs node (see {@link compileExpression}). */
export function compileNode(
  node: MathNode,
  source: string,
  scope: Scope,
  path: KeyPath,
): Compiled {
  const consts: Value[] = [];
  let usesTime = false;
  const fail = (what: string, fix?: string): never => {
    throw new CaseError(`in "${source}": ${what}`, path, fix);
  };
  const knownNames = () =>
    [
      ...scope.params.keys(),
      ...(scope.allowTime ? ["t"] : []),
      ...(scope.variables ?? []),
      ...BUILTIN_NAMES,
    ].join(", ");
  const toC = (c: Code): string => (c.kind === "c" ? c.js : `C.c(${c.js},0)`);

  const gen = (n: MathNode): Code => {
    // deno-lint-ignore no-explicit-any
    const node = n as any;
    switch (n.type) {
      case "ParenthesisNode":
        return gen(node.content);
      case "ConstantNode": {
        if (typeof node.value !== "number") {
          fail(`${JSON.stringify(node.value)} is not a number`);
        }
        return { kind: "r", js: `(${String(node.value)})` };
      }
      case "SymbolNode": {
        const name: string = node.name;
        if (name === "t") {
          if (!scope.allowTime) {
            fail(
              "t cannot appear here: params and matrix entries are constant",
              "put the time dependence in the term's coef",
            );
          }
          usesTime = true;
          return { kind: "r", js: "t" };
        }
        if (scope.variables?.includes(name)) return { kind: "r", js: name };
        const value = scope.params.get(name);
        if (value !== undefined) {
          consts.push(value);
          return typeof value === "number"
            ? { kind: "r", js: `K[${consts.length - 1}]` }
            : { kind: "c", js: `K[${consts.length - 1}]` };
        }
        const constant = CONSTANTS[name];
        if (constant) return constant;
        return fail(`unknown name "${name}"`, `use one of: ${knownNames()}`);
      }
      case "OperatorNode":
        return genOperator(node.fn, node.op, node.args.map(gen));
      case "ConditionalNode": {
        const cond = gen(node.condition);
        if (cond.kind === "c") fail("a condition must be real");
        const a = gen(node.trueExpr), b = gen(node.falseExpr);
        if (a.kind === "r" && b.kind === "r") {
          return { kind: "r", js: `(${cond.js}!==0?${a.js}:${b.js})` };
        }
        return { kind: "c", js: `(${cond.js}!==0?${toC(a)}:${toC(b)})` };
      }
      case "FunctionNode": {
        if (node.fn.type !== "SymbolNode") {
          fail("only named functions can be called");
        }
        const name: string = node.fn.name;
        if (!BUILTIN_NAMES.includes(name) || name in CONSTANTS) {
          if (scope.params.has(name)) {
            fail(
              `"${name}" is a parameter, not a function`,
              `write ${name}*(...) to multiply`,
            );
          }
          fail(
            `unknown function "${name}"`,
            `use one of: ${BUILTIN_NAMES.filter((n) => !(n in CONSTANTS)).join(", ")}`,
          );
        }
        return genFunction(name, node.args.map(gen));
      }
      default:
        return fail(
          `${n.type.replace("Node", "").toLowerCase()} syntax is not supported`,
          "use arithmetic, comparisons, cond ? a : b, and the listed functions",
        );
    }
  };

  const genOperator = (fn: string, op: string, args: Code[]): Code => {
    const [a, b] = args as [Code, Code];
    const real = args.every((x) => x.kind === "r");
    const binaryReal: Record<string, string> = {
      add: "+",
      subtract: "-",
      multiply: "*",
      divide: "/",
    };
    const comparisons: Record<string, string> = {
      smaller: "<",
      larger: ">",
      smallerEq: "<=",
      largerEq: ">=",
      equal: "===",
      unequal: "!==",
    };
    if (fn in binaryReal) {
      if (real) return { kind: "r", js: `(${a.js}${binaryReal[fn]}${b.js})` };
      const cfn = {
        add: "add",
        subtract: "sub",
        multiply: "mul",
        divide: "div",
      }[fn as "add"];
      return { kind: "c", js: `C.${cfn}(${toC(a)},${toC(b)})` };
    }
    if (fn === "unaryMinus") {
      return real ? { kind: "r", js: `(-${a.js})` } : { kind: "c", js: `C.neg(${a.js})` };
    }
    if (fn === "unaryPlus") return a;
    if (fn === "pow") {
      if (real) return { kind: "r", js: `Math.pow(${a.js},${b.js})` };
      return { kind: "c", js: `C.pow(${toC(a)},${toC(b)})` };
    }
    if (fn in comparisons) {
      if (!real) fail(`"${op}" needs real operands`);
      return { kind: "r", js: `(${a.js}${comparisons[fn]}${b.js}?1:0)` };
    }
    if (fn === "and" || fn === "or") {
      if (!real) fail(`"${op}" needs real operands`);
      const j = fn === "and" ? "&&" : "||";
      return { kind: "r", js: `((${a.js}!==0)${j}(${b.js}!==0)?1:0)` };
    }
    if (fn === "not") return { kind: "r", js: `(${a.js}===0?1:0)` };
    return fail(
      `the operator "${op}" is not supported`,
      "use + - * / ^, comparisons, and, or, not",
    );
  };

  const genFunction = (name: string, args: Code[]): Code => {
    const arity = (n: number) => {
      if (args.length !== n) {
        fail(
          `${name}() takes ${n} argument${n === 1 ? "" : "s"}, got ${args.length}`,
        );
      }
    };
    const realArgs = () => {
      if (args.some((x) => x.kind === "c")) {
        fail(`${name}() needs real arguments`);
      }
    };
    if (name in COMPLEX_CAPABLE) {
      arity(1);
      const a = args[0]!;
      // Real input that may leave the real line (sqrt/log of a negative) shows up as NaN and is
      // reported by the sampler; complex input goes through complex arithmetic.
      if (a.kind === "r") {
        return { kind: "r", js: `${COMPLEX_CAPABLE[name]}(${a.js})` };
      }
      return { kind: "c", js: `C.${name}(${a.js})` };
    }
    const realOnly = REAL_ONLY[name];
    if (realOnly) {
      if (realOnly[1] >= 0) arity(realOnly[1]);
      else if (args.length === 0) fail(`${name}() needs at least one argument`);
      realArgs();
      return {
        kind: "r",
        js: `${realOnly[0]}(${args.map((x) => x.js).join(",")})`,
      };
    }
    if (PARTS.includes(name)) {
      arity(1);
      const a = args[0]!;
      if (a.kind === "r") {
        const realForm: Record<string, string> = {
          abs: `Math.abs(${a.js})`,
          re: a.js,
          im: "0",
          arg: `(${a.js}<0?Math.PI:0)`,
          conj: a.js,
        };
        return { kind: "r", js: realForm[name]! };
      }
      if (name === "conj") return { kind: "c", js: `C.conj(${a.js})` };
      if (name === "re") return { kind: "r", js: `(${a.js}).re` };
      if (name === "im") return { kind: "r", js: `(${a.js}).im` };
      return { kind: "r", js: `C.${name}(${a.js})` };
    }
    const pulse = PULSES[name];
    if (pulse) {
      arity(pulse.params.length + 1);
      realArgs();
      return {
        kind: "r",
        js: `P.${name}.fn(${args.map((x) => x.js).join(",")})`,
      };
    }
    return fail(`unknown function "${name}"`);
  };

  const code = gen(node);
  const body = `return (${["t", ...(scope.variables ?? [])].join(",")}) => ${code.js};`;
  const fn = new Function("C", "P", "K", body)(C, PULSES, consts) as (
    t: number,
    ...v: number[]
  ) => Value;
  const isComplex = code.kind === "c";
  const sample = isComplex
    ? (times: Float64Array, out: Float64Array) => {
      for (let k = 0; k < times.length; k++) {
        const z = fn(times[k]!) as Complex;
        out[2 * k] = z.re;
        out[2 * k + 1] = z.im;
      }
    }
    : (times: Float64Array, out: Float64Array) => {
      for (let k = 0; k < times.length; k++) {
        out[2 * k] = fn(times[k]!) as number;
        out[2 * k + 1] = 0;
      }
    };
  return { source, usesTime, isComplex, at: fn, sample };
}

/** Real and imaginary parts of a value. */
export function toComplex(v: Value): Complex {
  return typeof v === "number" ? { re: v, im: 0 } : v;
}

/** Whether a value is finite (both parts). */
export function isFiniteValue(v: Value): boolean {
  return typeof v === "number" ? Number.isFinite(v) : Number.isFinite(v.re) && Number.isFinite(v.im);
}
