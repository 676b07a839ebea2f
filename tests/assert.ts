/**
 * Small assertions on top of node:assert/strict (JSR's @std/assert is not
 * reachable here).
 *
 * @module
 */

import { AssertionError, deepStrictEqual, ok, strictEqual } from "node:assert/strict";

/** Fails unless the condition holds. */
export function assert(
  condition: unknown,
  message = "assertion failed",
): asserts condition {
  ok(condition, message);
}

/** Fails unless actual === expected. */
export function assertEqual<T>(actual: T, expected: T, message?: string): void {
  strictEqual(actual, expected, message);
}

/** Fails unless the values are deeply equal. */
export function assertDeepEqual<T>(
  actual: T,
  expected: T,
  message?: string,
): void {
  deepStrictEqual(actual, expected, message);
}

/** Fails unless fn throws an error of the given class whose message matches. */
export function assertThrows<E extends Error>(
  fn: () => unknown,
  errorClass: new (...args: never[]) => E,
  pattern?: RegExp | string,
): E {
  try {
    fn();
  } catch (e) {
    if (!(e instanceof errorClass)) {
      throw new AssertionError({
        message: `expected ${errorClass.name}, got ${e}`,
      });
    }
    const text = (e as Error).message;
    if (
      pattern &&
      !(typeof pattern === "string" ? text.includes(pattern) : pattern.test(text))
    ) {
      throw new AssertionError({
        message: `error message "${text}" does not match ${pattern}`,
      });
    }
    return e as E;
  }
  throw new AssertionError({
    message: `expected ${errorClass.name} to be thrown`,
  });
}
