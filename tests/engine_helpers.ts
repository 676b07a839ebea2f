/**
 * Helpers for engine tests: build a model from case text and solve it, and
 * read amplitudes and populations out of a result.
 *
 * @module
 */

import { buildCase, type BuildOptions, type BuiltCase } from "../cli/case/build.ts";
import { parseCase } from "../cli/case/parse.ts";
import { type Model, type Result, solve } from "../engine/mod.ts";
import { testEngine } from "./helpers.ts";

/** Builds and solves case text. */
export async function solveText(
  text: string,
  options: BuildOptions = {},
): Promise<{ built: BuiltCase; result: Result }> {
  const built = buildCase(parseCase(text, "test.toml"), options);
  const result = solve(await testEngine(), built.model);
  return { built, result };
}

/** Amplitude of basis state a at sample k. */
export function amplitude(
  states: Float64Array,
  d: number,
  k: number,
  a: number,
): { re: number; im: number } {
  return { re: states[2 * (k * d + a)]!, im: states[2 * (k * d + a) + 1]! };
}

/** |amplitude|². */
export function population(
  states: Float64Array,
  d: number,
  k: number,
  a: number,
): number {
  const z = amplitude(states, d, k, a);
  return z.re * z.re + z.im * z.im;
}

/** The partial sum ψ0 + … + ψn as a state array. */
export function partialSum(result: Result, n: number): Float64Array {
  const out = new Float64Array(result.exact.length);
  for (let m = 0; m <= n; m++) {
    result.terms[m]!.forEach((x, k) => (out[k]! += x));
  }
  return out;
}

/** Largest |a_k − b_k| over two state arrays. */
export function maxDifference(a: Float64Array, b: Float64Array): number {
  let m = 0;
  for (let k = 0; k < a.length; k++) m = Math.max(m, Math.abs(a[k]! - b[k]!));
  return m;
}

/** A two-level case: H0 = delta·|e><e|, V = g·coef·(|e><g| + h.c.). */
export function twoLevel(
  delta: number,
  g: number,
  tEnd: number,
  opts: { coef?: string; steps?: number; samples?: number; order?: number } = {},
) {
  return `
[params]
delta = ${delta}
g = ${g}
[levels]
names = ["g", "e"]
[unperturbed]
op = "delta*|e><e|"
[perturbation]
op = "g*|e><g| + h.c."
${opts.coef ? `coef = "${opts.coef}"` : ""}
[start]
state = "g"
[grid]
t_end = ${tEnd}
steps = ${opts.steps ?? 1}
samples = ${opts.samples ?? 11}
[series]
order = ${opts.order ?? 4}
`;
}

/** A time-independent model straight from matrices (interleaved, row-major): H0, V, ψ0 on [0, t]. */
export function constantModel(
  h0: Float64Array,
  v: Float64Array,
  initial: Float64Array,
  t: number,
  samples: number,
  order: number,
): Model {
  const one = { kind: "constant", re: 1, im: 0 } as const;
  return {
    dim: initial.length / 2,
    unperturbed: [{ matrix: h0, coefficient: one }],
    perturbation: [{ matrix: v, coefficient: one }],
    strength: 1,
    initial,
    tStart: 0,
    tEnd: t,
    steps: 1,
    samples,
    order,
  };
}

/**
 * H = ωa†a + f(t)(a + a†) on 16 Fock states from |0⟩ with f = F·gauss(t, 15, w) over [0, 30], recorded at 3 times:
 * Glauber's driven oscillator (Phys. Rev. 131, 1963). `grid` is the [grid] line choosing steps or an accuracy.
 */
export function drivenOscillator(omega: number, force: number, w: number, grid: string): string {
  return `
[params]
omega = ${omega}
F = ${force}
w = ${w}
[subsystems]
m = { oscillator = 16 }
[unperturbed]
op = "omega*n_m"
[perturbation]
op = "a_m + a_m†"
coef = "F*gauss(t, 15, w)"
[start]
state = "0"
[grid]
t_end = 30
${grid}
samples = 3
[series]
order = 10
`;
}

/** Glauber's Poisson populations of the coherent state that drivenOscillator() ends in: P(n) for n < count. */
export function glauberPopulations(omega: number, force: number, w: number, count: number): number[] {
  // |α|² with α = −i∫f(s)e^{iωs}ds = F·w·√(2π)·e^{iωc}·e^{−ω²w²/2} over the line (the window cuts e^{−28} of it)
  const mean = (force * w * Math.sqrt(2 * Math.PI)) ** 2 * Math.exp(-omega * omega * w * w);
  const out: number[] = [];
  let factorial = 1;
  for (let n = 0; n < count; n++) {
    if (n > 0) factorial *= n;
    out.push(Math.exp(-mean) * mean ** n / factorial);
  }
  return out;
}
