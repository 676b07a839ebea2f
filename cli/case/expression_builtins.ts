/**
 * The built-in vocabulary of case expressions and the JavaScript each piece
 * compiles to: constants, real and complex functions, pulse shapes,
 * arithmetic and comparisons, with complex arithmetic for generated code.
 *
 * @module
 */

import type { Complex } from "./complex_matrix.ts";
import { PULSES } from "./pulses.ts";

/** Compiled code and whether its value is real ("r") or complex ("c"). */
export type Kind = "r" | "c";
/** A piece of generated JavaScript. */
export interface Code {
  kind: Kind;
  js: string;
}
/** Raises the case error of the expression being compiled. */
export type Fail = (what: string, fix?: string) => never;

/** Complex arithmetic used by generated code. */
export const C = {
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

/** The helper that turns a frequency or energy in the case's unit into rad per time unit (see Scope). */
export const ANGULAR = "angular";

/** Every built-in name an expression may use (for error messages and validation). */
export const BUILTIN_NAMES: readonly string[] = [
  ...Object.keys(CONSTANTS),
  ...Object.keys(COMPLEX_CAPABLE),
  ...Object.keys(REAL_ONLY),
  ...PARTS,
  ...Object.keys(PULSES),
  ANGULAR,
];

/** The code of a built-in constant, or undefined (own names only: nothing inherited is a constant). */
export function constantCode(name: string): Code | undefined {
  return Object.hasOwn(CONSTANTS, name) ? CONSTANTS[name] : undefined;
}

/** Whether name is a built-in function. */
export function isFunctionName(name: string): boolean {
  return BUILTIN_NAMES.includes(name) && !Object.hasOwn(CONSTANTS, name);
}

const toC = (c: Code): string => (c.kind === "c" ? c.js : `C.c(${c.js},0)`);

/** The code of `cond ? a : b`. */
export function conditionalCode(cond: Code, a: Code, b: Code, fail: Fail): Code {
  if (cond.kind === "c") fail("a condition must be real");
  if (a.kind === "r" && b.kind === "r") {
    return { kind: "r", js: `(${cond.js}!==0?${a.js}:${b.js})` };
  }
  return { kind: "c", js: `(${cond.js}!==0?${toC(a)}:${toC(b)})` };
}

/** The code of a mathjs operator node applied to compiled operands. */
export function operatorCode(fn: string, op: string, args: Code[], fail: Fail): Code {
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
}

/** The code of a call to a built-in function (the name is known to be one) with compiled arguments. */
export function functionCode(name: string, args: Code[], fail: Fail): Code {
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
}
