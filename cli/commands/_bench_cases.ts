/**
 * The benchmark's models (private to the commands): a driven two-level system,
 * dense random d-level systems, and the 10⁶-step memory probe.
 *
 * @module
 */

import { type Engine, type Model, solve } from "../../engine/mod.ts";
import type { BaselineModel } from "./_mathjs_scheme.ts";
import { seeded } from "../base/seeded.ts";

/** A random Hermitian matrix as [re, im] entries, entries of size `scale`. */
export function hermitian(d: number, random: () => number, scale: number): number[][][] {
  const m = Array.from({ length: d }, () => Array.from({ length: d }, () => [0, 0]));
  for (let i = 0; i < d; i++) {
    m[i]![i] = [scale * (2 * random() - 1), 0];
    for (let j = i + 1; j < d; j++) {
      const re = scale * (2 * random() - 1), im = scale * (2 * random() - 1);
      m[i]![j] = [re, im];
      m[j]![i] = [re, -im];
    }
  }
  return m;
}

const flat = (m: number[][][]) => Float64Array.from(m.flat(2));
const one = { kind: "constant", re: 1, im: 0 } as const;
const drive = (t: number) => Math.exp(-0.5 * ((t - 10) / 3) ** 2) * Math.cos(1.1 * t);

export function drivenModel(baseline: BaselineModel, steps: number): Model {
  const initial = new Float64Array(2 * baseline.dim);
  initial[0] = 1;
  return {
    dim: baseline.dim,
    unperturbed: [{ matrix: flat(baseline.h0), coefficient: one }],
    perturbation: [{
      matrix: flat(baseline.v),
      coefficient: {
        kind: "sampled",
        sample: (ts, out) => ts.forEach((t, k) => ((out[2 * k] = drive(t)), (out[2 * k + 1] = 0))),
      },
    }],
    strength: 1,
    initial,
    tStart: 0,
    tEnd: baseline.tEnd,
    steps,
    samples: 101,
    order: baseline.order,
  };
}

export function twoLevel(): BaselineModel {
  return {
    dim: 2,
    h0: [[[0, 0], [0, 0]], [[0, 0], [1, 0]]],
    v: [[[0, 0], [0.1, 0]], [[0.1, 0], [0, 0]]],
    f: drive,
    order: 6,
    tEnd: 20,
  };
}

export function dense(d: number): BaselineModel {
  const random = seeded(d);
  return {
    dim: d,
    h0: hermitian(d, random, 2 / Math.sqrt(d)),
    v: hermitian(d, random, 0.1 / Math.sqrt(d)),
    f: drive,
    order: 6,
    tEnd: 20,
  };
}

/** A time-independent random d-level case to order 4, recorded at 101 samples. */
export function timeIndependent(d: number): Model {
  const random = seeded(d);
  return {
    dim: d,
    unperturbed: [{ matrix: flat(hermitian(d, random, 2 / Math.sqrt(d))), coefficient: one }],
    perturbation: [{ matrix: flat(hermitian(d, random, 0.1 / Math.sqrt(d))), coefficient: one }],
    strength: 1,
    initial: Float64Array.from({ length: 2 * d }, (_, k) => (k === 0 ? 1 : 0)),
    tStart: 0,
    tEnd: 10,
    steps: 1,
    samples: 101,
    order: 4,
  };
}

/** The 10⁶-step d = 8 run whose peak memory the benchmark reports (run in a subprocess). */
export function memoryProbe(engine: Engine): void {
  const model = drivenModel({ ...dense(8), order: 6 }, 1_000_000);
  solve(engine, model);
  const status = Deno.readTextFileSync("/proc/self/status");
  const hwm = /VmHWM:\s+(\d+) kB/.exec(status);
  console.log(JSON.stringify({ peakKiB: hwm ? Number(hwm[1]) : null }));
}

/**
 * A random sparse d-level model with about `perRow` non-zeros a row in H0 and in V (Hermitian, CSR), V driven by
 * a Gaussian pulse, to order N with an accuracy; or the same matrices dense (for the dense path's time).
 */
export function sparseModel(
  d: number,
  perRow: number,
  order: number,
  accuracy: number,
  dense = false,
  diagonalH0 = false,
): Model {
  const random = seeded(d + perRow);
  const build = (scale: number, partners = perRow / 2) => {
    const rows: Map<number, [number, number]>[] = Array.from({ length: d }, () => new Map());
    for (let i = 0; i < d; i++) {
      rows[i]!.set(i, [scale * (2 * random() - 1), 0]);
      for (let k = 0; k < partners; k++) {
        const j = Math.floor(random() * d);
        if (j === i) continue;
        const re = scale * (random() - 0.5), im = scale * (random() - 0.5);
        rows[i]!.set(j, [re, im]);
        rows[j]!.set(i, [re, -im]);
      }
    }
    if (dense) {
      const m = new Float64Array(2 * d * d);
      rows.forEach((row, i) =>
        row.forEach(([re, im], j) => ((m[2 * (i * d + j)] = re), (m[2 * (i * d + j) + 1] = im)))
      );
      return { matrix: m };
    }
    const rowStart = new Int32Array(d + 1), column: number[] = [], values: number[] = [];
    rows.forEach((row, i) => {
      for (const j of [...row.keys()].sort((a, b) => a - b)) {
        column.push(j);
        values.push(...row.get(j)!);
      }
      rowStart[i + 1] = column.length;
    });
    return {
      matrix: new Float64Array(0),
      sparse: { rowStart, column: Int32Array.from(column), values: Float64Array.from(values) },
    };
  };
  const initial = new Float64Array(2 * d);
  initial[0] = 1;
  return {
    dim: d,
    unperturbed: [{ ...build(diagonalH0 ? 2 : 0.3, diagonalH0 ? 0 : perRow / 2), coefficient: one }],
    perturbation: [{
      ...build(0.02),
      coefficient: {
        kind: "sampled",
        sample: (ts, out) =>
          ts.forEach((t, k) => ((out[2 * k] = Math.exp(-0.5 * ((t - 5) / 1.5) ** 2)), (out[2 * k + 1] = 0))),
      },
    }],
    strength: 1,
    initial,
    tStart: 0,
    tEnd: 10,
    steps: 1,
    samples: 2,
    order,
    accuracy,
  };
}

/** A case file of the dense driven model, for `ordo run` as a user runs it. */
export function caseText(model: BaselineModel, accuracy: number): string {
  const matrix = (m: number[][][]) =>
    "[\n" + m.map((row) => `  [${row.map(([re, im]) => `[${re}, ${im}]`).join(", ")}]`).join(",\n") + "\n]";
  return `title = "bench: driven dense d=${model.dim}"
[unperturbed]
matrix = ${matrix(model.h0)}
[perturbation]
matrix = ${matrix(model.v)}
coef = "exp(-0.5*((t - 10)/3)^2)*cos(1.1*t)"
[start]
state = "0"
[grid]
t_end = ${model.tEnd}
accuracy = ${accuracy}
samples = 2
[series]
order = ${model.order}
`;
}
