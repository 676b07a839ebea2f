/**
 * Test helpers: tolerance-aware comparisons, running the CLI in-process
 * with captured output, and small complex-number utilities.
 *
 * @module
 */

import { AssertionError } from "node:assert/strict";
import { cli } from "../cli/main.ts";
import { type Engine, loadEngine } from "../engine/mod.ts";
export { seeded } from "../cli/base/seeded.ts";

/** Fails unless |actual − expected| ≤ abs + rel·|expected|. */
export function assertClose(
  actual: number,
  expected: number,
  tol: { abs?: number; rel?: number },
  what = "",
): void {
  const allowed = (tol.abs ?? 0) + (tol.rel ?? 0) * Math.abs(expected);
  const diff = Math.abs(actual - expected);
  if (!(diff <= allowed)) {
    throw new AssertionError({
      message: `${what ? what + ": " : ""}got ${actual}, expected ${expected} (difference ${
        diff.toExponential(3)
      } > allowed ${allowed.toExponential(3)})`,
    });
  }
}

let engine: Promise<Engine> | undefined;
/** One engine per test file. */
export function testEngine(): Promise<Engine> {
  engine ??= loadEngine();
  return engine;
}

/** Runs `ordo ARGS` in-process, capturing what it prints. */
export async function runOrdo(
  args: string[],
): Promise<{ code: number; stdout: string; stderr: string }> {
  const out: string[] = [], err: string[] = [];
  const log = console.log, error = console.error;
  console.log = (...a: unknown[]) => out.push(a.join(" "));
  console.error = (...a: unknown[]) => err.push(a.join(" "));
  try {
    const code = await cli(args);
    return { code, stdout: out.join("\n"), stderr: err.join("\n") };
  } finally {
    console.log = log;
    console.error = error;
  }
}

/** Writes case text to a temporary file and returns its path. */
export function tempCase(text: string, ext = ".toml"): string {
  const path = Deno.makeTempFileSync({ suffix: ext });
  Deno.writeTextFileSync(path, text);
  return path;
}

/** A random Hermitian d×d matrix (interleaved, row-major) with entries of size about `scale`. */
export function randomHermitian(
  d: number,
  random: () => number,
  scale = 1,
): Float64Array {
  const m = new Float64Array(2 * d * d);
  for (let i = 0; i < d; i++) {
    m[2 * (i * d + i)] = scale * (2 * random() - 1);
    for (let j = i + 1; j < d; j++) {
      const re = scale * (2 * random() - 1), im = scale * (2 * random() - 1);
      m[2 * (i * d + j)] = re;
      m[2 * (i * d + j) + 1] = im;
      m[2 * (j * d + i)] = re;
      m[2 * (j * d + i) + 1] = -im;
    }
  }
  return m;
}
