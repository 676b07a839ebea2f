/**
 * `[params]`: named numbers of a case, evaluated in the order written, each an
 * expression of the earlier ones; `--set` replaces a written value.
 *
 * @module
 */

import { CaseError, type KeyPath } from "./errors.ts";
import type { EntrySpec } from "./schema.ts";
import {
  BUILTIN_NAMES,
  compileExpression,
  isFiniteValue,
  type Scope,
  toComplex,
  type Value,
} from "./expression.ts";
import { OPERATOR_NAMES } from "./operators.ts";

/** The name under which λ, the bookkeeping strength of V, is swept and used in formulas. */
export const STRENGTH = "strength";

/** What a param name must look like. */
const NAME = /^[A-Za-z_][A-Za-z0-9_]*$/;

const RESERVED = new Set([
  "t",
  "row",
  "col",
  STRENGTH, // λ, sweepable by this name
  ...BUILTIN_NAMES,
  ...OPERATOR_NAMES,
]);

/** A value as the user would write it: `0.5`, `0.5+0.2i`. */
export function showValue(v: Value): string {
  const z = toComplex(v);
  return z.im === 0 ? String(z.re) : `${z.re}${z.im < 0 ? "-" : "+"}${Math.abs(z.im)}i`;
}

/**
 * Evaluates `[params]` in order; `--set` values replace the written ones.
 *
 * @param written the `[params]` table as parsed
 * @param set `--set` overrides, name → expression
 * @param angularFactor what `angular(x)` multiplies by (the case's unit to rad per time unit)
 * @returns every param's value, in the order written
 * @throws {CaseError} for an unusable or reserved name, an unknown `--set` name, or a non-finite value
 */
export function evaluateParams(
  written: Record<string, EntrySpec>,
  set: Record<string, string>,
  angularFactor = 1,
): Map<string, Value> {
  const params = new Map<string, Value>();
  for (const name of Object.keys(set)) {
    if (!Object.hasOwn(written, name)) {
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
    const scope: Scope = { params, allowTime: false, angularFactor };
    const value = Object.hasOwn(set, name)
      ? compileExpression(set[name]!, scope, path).at(0)
      : entryValue(entry, scope, path);
    if (!isFiniteValue(value)) {
      throw new CaseError(
        `param ${name} evaluates to ${showValue(value)}`,
        path,
        "check the expression: every param must be a finite number",
      );
    }
    params.set(name, value);
  }
  return params;
}

/**
 * A number, an expression, or an `[re, im]` pair → its value.
 *
 * @param entry the entry as written
 * @param scope the params it may use
 * @param path where it sits in the case
 * @returns the value
 */
export function entryValue(entry: EntrySpec, scope: Scope, path: KeyPath): Value {
  if (typeof entry === "number") return entry;
  if (typeof entry === "string") {
    return compileExpression(entry, scope, path).at(0);
  }
  const re = toComplex(entryValue(entry[0], scope, [...path, 0]));
  const im = toComplex(entryValue(entry[1], scope, [...path, 1]));
  return { re: re.re - im.im, im: re.im + im.re };
}
