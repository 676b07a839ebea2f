/**
 * The local operators of the notation, as written on paper: a symbol with the
 * subsystem as its subscript. On a spin q: the components Sx_q, Sy_q, Sz_q,
 * the ladder operators S+_q, S-_q, and the Pauli operators σx_q, σy_q, σz_q
 * (σ = 2S) with σ+_q, σ-_q (= S±). On an oscillator m: the lowering operator
 * a_m and the number operator n_m = a_m†a_m. The adjoint of any operator is
 * written with a dagger (`a_m†`, or `a_m'` in ASCII), the identity is `I`.
 *
 * @module
 */

import { ComplexMatrix } from "./complex_matrix.ts";
import type { Subsystem } from "./space.ts";

/** A local operator symbol: how it is written, and its matrix on a subsystem of the kind it belongs to. */
interface LocalSymbol {
  kind: "spin" | "oscillator";
  written: string;
  matrix: (sub: Subsystem) => ComplexMatrix;
}

/** Spin-s operators S_z, S_+ in the basis m = s…−s. */
function spinMatrices(s: number): { sz: ComplexMatrix; raising: ComplexMatrix } {
  const n = Math.round(2 * s) + 1;
  const sz = new ComplexMatrix(n, n), raising = new ComplexMatrix(n, n);
  for (let k = 0; k < n; k++) {
    const m = s - k;
    sz.set(k, k, m);
    // S+|m> = sqrt(s(s+1) − m(m+1)) |m+1>, and |m+1> is index k−1.
    if (k > 0) raising.set(k - 1, k, Math.sqrt(s * (s + 1) - m * (m + 1)));
  }
  return { sz, raising };
}

/** The spin components S_x, S_y, S_z and S_±. */
function spin(sub: Subsystem) {
  const { sz, raising } = spinMatrices(sub.spin!);
  const lowering = raising.dagger();
  return {
    sx: raising.add(lowering).scale({ re: 0.5, im: 0 }),
    sy: raising.sub(lowering).scale({ re: 0, im: -0.5 }),
    sz,
    raising,
    lowering,
  };
}

/** The annihilation operator truncated to n Fock states: a|k> = √k |k−1>. */
function annihilator(n: number): ComplexMatrix {
  const a = new ComplexMatrix(n, n);
  for (let k = 1; k < n; k++) a.set(k - 1, k, Math.sqrt(k));
  return a;
}

const TWO = { re: 2, im: 0 };

/**
 * Every local symbol, keyed by the name the parser sees. `S+` and `S-` (and σ±) are not names a parser
 * accepts, so the notation's reader turns them into `S$` and `$S` (σ$, $σ) in place, keeping every
 * character's position; messages show them as written.
 */
const SYMBOLS: Record<string, LocalSymbol> = {
  Sx: { kind: "spin", written: "Sx", matrix: (q) => spin(q).sx },
  Sy: { kind: "spin", written: "Sy", matrix: (q) => spin(q).sy },
  Sz: { kind: "spin", written: "Sz", matrix: (q) => spin(q).sz },
  "S$": { kind: "spin", written: "S+", matrix: (q) => spin(q).raising },
  "$S": { kind: "spin", written: "S-", matrix: (q) => spin(q).lowering },
  "σx": { kind: "spin", written: "σx", matrix: (q) => spin(q).sx.scale(TWO) },
  "σy": { kind: "spin", written: "σy", matrix: (q) => spin(q).sy.scale(TWO) },
  "σz": { kind: "spin", written: "σz", matrix: (q) => spin(q).sz.scale(TWO) },
  "σ$": { kind: "spin", written: "σ+", matrix: (q) => spin(q).raising },
  "$σ": { kind: "spin", written: "σ-", matrix: (q) => spin(q).lowering },
  a: { kind: "oscillator", written: "a", matrix: (m) => annihilator(m.labels.length) },
  n: {
    kind: "oscillator",
    written: "n",
    matrix: (m) => {
      const a = annihilator(m.labels.length);
      return a.dagger().mul(a);
    },
  },
};

/** The identity of the whole space. */
export const IDENTITY = "I";

/** The symbols a kind of subsystem carries, as written. */
export function symbolsOf(kind: "spin" | "oscillator"): string[] {
  return Object.values(SYMBOLS).filter((s) => s.kind === kind).map((s) => s.written);
}

/** The parser's form of an operator text: `S+` → `S$`, `S-` → `$S`, `†` → `'` (same length, same positions). */
export function toParserForm(text: string): string {
  return text
    .replace(
      /(^|[^\p{L}\p{N}_$])([Sσ])([+-])(?=_)/gu,
      (_m, before: string, s: string, sign: string) => before + (sign === "+" ? `${s}$` : `$${s}`),
    )
    .replace(/†/g, "'");
}

/** A parser-form name as the user wrote it (`S$_q` → `S+_q`). */
export function asWritten(name: string): string {
  return name.replace(/^([Sσ])\$/, "$1+").replace(/^\$([Sσ])/, "$1-");
}

/** A recognised local operator: the symbol and the subsystem of its subscript. */
export interface LocalOperator {
  symbol: string;
  written: string;
  kind: "spin" | "oscillator";
  subsystem: string;
}

/**
 * Splits a name into a local symbol and its subscript, when it has that form (whatever the subscript).
 *
 * @param name a parser-form symbol name, e.g. `S$_q`, `a_mode`
 * @returns the symbol and subscript, or undefined when the name is not of the form `symbol_subscript`
 */
export function splitLocal(name: string): LocalOperator | undefined {
  const cut = name.indexOf("_");
  if (cut <= 0 || cut === name.length - 1) return undefined;
  const symbol = name.slice(0, cut);
  if (!Object.hasOwn(SYMBOLS, symbol)) return undefined;
  const { kind, written } = SYMBOLS[symbol]!;
  return { symbol, written, kind, subsystem: name.slice(cut + 1) };
}

/** The matrix of a local symbol on a subsystem of its kind. */
export function localMatrix(symbol: string, sub: Subsystem): ComplexMatrix {
  return SYMBOLS[symbol]!.matrix(sub);
}
