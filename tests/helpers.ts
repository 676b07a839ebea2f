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

/**
 * The largest |(A z_k − λ_k z_k)_i| over every `stride`-th eigenpair: a fact of linear algebra (A z = λ z) to
 * check an eigen-decomposition with, in plain arithmetic.
 *
 * @param a d×d, row-major, interleaved
 * @param values the eigenvalues
 * @param vectors the eigenvectors as columns, row-major, interleaved
 * @param d the dimension
 * @param stride check every stride-th pair
 * @returns the largest residual entry
 */
export function eigenResidual(
  a: Float64Array,
  values: Float64Array,
  vectors: Float64Array,
  d: number,
  stride = 1,
): number {
  let residual = 0;
  for (let k = 0; k < d; k += stride) {
    for (let i = 0; i < d; i++) {
      let sr = -values[k]! * vectors[2 * (i * d + k)]!, si = -values[k]! * vectors[2 * (i * d + k) + 1]!;
      for (let j = 0; j < d; j++) {
        const ar = a[2 * (i * d + j)]!, ai = a[2 * (i * d + j) + 1]!;
        const zr = vectors[2 * (j * d + k)]!, zi = vectors[2 * (j * d + k) + 1]!;
        sr += ar * zr - ai * zi;
        si += ar * zi + ai * zr;
      }
      residual = Math.max(residual, Math.hypot(sr, si));
    }
  }
  return residual;
}
