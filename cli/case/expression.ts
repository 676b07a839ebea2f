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

import type { MathNode } from "mathjs";
// mathjs's parser alone, bundled by `deno task build` (mathjs_parse.ts says why)
// @ts-types="./mathjs_parse.ts"
import { parse as parseMath } from "./mathjs_parse.bundle.js";
import { CaseError, type KeyPath, quoted } from "./errors.ts";
import type { Complex } from "./complex_matrix.ts";
import { PULSES } from "./pulses.ts";
import {
  ANGULAR,
  BUILTIN_NAMES,
  C,
  type Code,
  conditionalCode,
  constantCode,
  type Fail,
  functionCode,
  isFunctionName,
  operatorCode,
} from "./expression_builtins.ts";

export { BUILTIN_NAMES } from "./expression_builtins.ts";

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
  /**
   * What `angular(x)` multiplies by: from the case's energy or frequency unit to rad per time unit (2π for
   * GHz with ns). 1 when the case is dimensionless.
   */
  angularFactor?: number;
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

/**
 * Parses an expression with mathjs, turning its syntax errors into case errors.
 *
 * @param source the text to parse
 * @param path where it sits in the case
 * @param shown the text as the user wrote it, when `source` is a same-length rewrite of it (messages quote it)
 * @returns the parsed node
 */
export function parseExpression(source: string, path: KeyPath, shown = source): MathNode {
  if (source.length > MAX_EXPRESSION_LENGTH) {
    throw new CaseError(
      `the expression ${quoted(shown)} is longer than the ${MAX_EXPRESSION_LENGTH} characters ordo reads`,
      path,
      "split it into several terms, or use params for repeated parts",
    );
  }
  try {
    return parseMath(source);
  } catch (e) {
    const message = (e as Error).message;
    const at = /\(char (\d+)\)/.exec(message);
    const before = at ? shown.slice(0, Math.max(0, Number(at[1]) - 1)) : "";
    const where = at ? `, just after "${before.length > 40 ? `…${before.slice(-40)}` : before}"` : "";
    throw new CaseError(
      `cannot parse the expression ${quoted(shown)}: ${message}${where}`,
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
  const fail: Fail = (what, fix) => {
    throw new CaseError(`in ${quoted(source)}: ${what}`, path, fix);
  };

  const symbol = (name: string): Code => {
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
      return { kind: typeof value === "number" ? "r" : "c", js: `K[${consts.length - 1}]` };
    }
    const known = [...scope.params.keys(), ...(scope.allowTime ? ["t"] : []), ...(scope.variables ?? [])];
    return constantCode(name) ??
      fail(`unknown name "${name}"`, `use one of: ${[...known, ...BUILTIN_NAMES].join(", ")}`);
  };

  const call = (name: string, args: MathNode[]): Code => {
    if (name === ANGULAR) {
      if (args.length !== 1) fail(`${ANGULAR}() takes one frequency or energy, in the case's unit`);
      const x = gen(args[0]!), factor = `(${scope.angularFactor ?? 1})`;
      return x.kind === "r"
        ? { kind: "r", js: `(${x.js}*${factor})` }
        : { kind: "c", js: `C.mul(${x.js},C.c(${factor},0))` };
    }
    if (!isFunctionName(name)) {
      if (scope.params.has(name)) {
        fail(`"${name}" is a parameter, not a function`, `write ${name}*(...) to multiply`);
      }
      fail(`unknown function "${name}"`, `use one of: ${BUILTIN_NAMES.filter(isFunctionName).join(", ")}`);
    }
    return functionCode(name, args.map(gen), fail);
  };

  const gen = (n: MathNode): Code => {
    // deno-lint-ignore no-explicit-any
    const node = n as any;
    switch (n.type) {
      case "ParenthesisNode":
        return gen(node.content);
      case "ConstantNode":
        if (typeof node.value !== "number") fail(`${JSON.stringify(node.value)} is not a number`);
        return { kind: "r", js: `(${String(node.value)})` };
      case "SymbolNode":
        return symbol(node.name);
      case "OperatorNode":
        return operatorCode(node.fn, node.op, node.args.map(gen), fail);
      case "ConditionalNode":
        return conditionalCode(gen(node.condition), gen(node.trueExpr), gen(node.falseExpr), fail);
      case "FunctionNode":
        if (node.fn.type !== "SymbolNode") fail("only named functions can be called");
        return call(node.fn.name, node.args);
      default:
        return fail(
          `${n.type.replace("Node", "").toLowerCase()} syntax is not supported`,
          "use arithmetic, comparisons, cond ? a : b, and the listed functions",
        );
    }
  };

  const code = withinDepth(() => gen(node), fail);
  const body = `return (${["t", ...(scope.variables ?? [])].join(",")}) => ${code.js};`;
  const fn = new Function("C", "P", "K", body)(C, PULSES, consts) as (t: number, ...v: number[]) => Value;
  return { source, usesTime, isComplex: code.kind === "c", at: fn, sample: sampler(fn, code.kind === "c") };
}

/** The longest expression ordo reads (longer ones are refused before parsing). */
export const MAX_EXPRESSION_LENGTH = 20_000;

/** Runs a recursive walk, turning a stack overflow on a deeply nested expression into a case error. */
export function withinDepth<T>(walk: () => T, fail: (what: string, fix?: string) => never): T {
  try {
    return walk();
  } catch (e) {
    if (e instanceof RangeError) {
      return fail("the expression is nested too deeply to evaluate", "split it into several terms or params");
    }
    throw e;
  }
}

/** Samples a compiled function at many times into interleaved (re, im). */
function sampler(
  fn: (t: number) => Value,
  isComplex: boolean,
): (times: Float64Array, out: Float64Array) => void {
  return isComplex
    ? (times, out) => {
      for (let k = 0; k < times.length; k++) {
        const z = fn(times[k]!) as Complex;
        out[2 * k] = z.re;
        out[2 * k + 1] = z.im;
      }
    }
    : (times, out) => {
      for (let k = 0; k < times.length; k++) {
        out[2 * k] = fn(times[k]!) as number;
        out[2 * k + 1] = 0;
      }
    };
}

/** Real and imaginary parts of a value. */
export function toComplex(v: Value): Complex {
  return typeof v === "number" ? { re: v, im: 0 } : v;
}

/** Whether a value is finite (both parts). */
export function isFiniteValue(v: Value): boolean {
  return typeof v === "number" ? Number.isFinite(v) : Number.isFinite(v.re) && Number.isFinite(v.im);
}
