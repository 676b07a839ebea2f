/**
 * `ordo bench`: the performance benchmark. Every ratio is against a baseline
 * measured in the same run on the same machine:
 *
 * (a) the engine against the same scheme written with mathjs complex matrices;
 * (b) the SIMD micro-kernel against the scalar reference kernel;
 * (c) the dense kernel's GFLOP/s against a peak measured on the spot (a tight
 *     f64x2 multiply-add loop in the same wasm module);
 * plus wall times of the three reference cases and the peak memory of a
 * 10⁶-step run (measured in a subprocess).
 *
 * @module
 */

import { eigh, type Engine, type Kernel, loadEngine, solve } from "../../engine/mod.ts";
import { mathjsScheme } from "./_mathjs_scheme.ts";
import { dense, drivenModel, timeIndependent, twoLevel } from "./_bench_cases.ts";
import { median, scipyRows } from "./_bench_scipy.ts";
import { startupRows } from "./_bench_startup.ts";
import { compileExpression } from "../case/expression.ts";
import { seeded } from "../base/seeded.ts";

function time(fn: () => void): number {
  const start = performance.now();
  fn();
  return performance.now() - start;
}

/** Kernel rate in GFLOP/s: Y += α·A·X with r vectors, 8 flops per complex multiply-add. */
function kernelRate(engine: Engine, d: number, r: number, simd: boolean): number {
  const e = engine.exports;
  e.arenaReset();
  const a = e.arenaAlloc(16 * d * d), x = e.arenaAlloc(16 * d * r), y = e.arenaAlloc(16 * d * r);
  const scratch = e.arenaAlloc(e.packedScratchBytes(d, r));
  const random = seeded(1);
  new Float64Array(e.memory.buffer, a, 2 * d * d).forEach((_, k, m) => (m[k] = random() - 0.5));
  new Float64Array(e.memory.buffer, x, 2 * d * r).forEach((_, k, m) => (m[k] = random() - 0.5));
  // the drivers' kernel for several vectors (packed SIMD), or the scalar reference
  const call: Kernel = simd
    ? (a, d, x, y, r, ar, ai) => e.zgemvPacked(a, d, x, y, r, ar, ai, scratch)
    : e.zgemvRef;
  const flops = 8 * d * d * r;
  const reps = Math.max(1, Math.round(2e8 / flops));
  call(a, d, x, y, r, 1e-3, 0); // warm up
  let best = Infinity;
  for (let trial = 0; trial < 5; trial++) {
    best = Math.min(
      best,
      time(() => {
        for (let k = 0; k < reps; k++) call(a, d, x, y, r, 1e-3, 0);
      }),
    );
  }
  return flops * reps / (best * 1e6);
}

function warmPeak(engine: Engine): void {
  for (let k = 0; k < 200; k++) engine.exports.peakLoop(10_000, 1e-9, 1e-12); // let the engine tier up
}

/** Trials of each stepping-loop size (see {@link kernelRows}). */
const LOOP_TRIALS = 10;

/**
 * One short timing of the register-only loop, in GFLOP/s. The machine's speed can change within a run, so each
 * ratio to the peak takes the peak measured between its own trials (the best of those), not one from the start.
 */
function peakOnce(engine: Engine, iterations = 5_000_000): number {
  return engine.exports.PEAK_FLOPS_PER_ITERATION.value * iterations /
    (time(() => engine.exports.peakLoop(iterations, 1e-9, 1e-12)) * 1e6);
}

/** CPU time of all cores, in clock ticks: its total and the part stolen by a hypervisor. */
type CpuTimes = { total: number; steal: number };

/** The machine's CPU time so far, or undefined where /proc/stat cannot be read. */
function cpuTimes(): CpuTimes | undefined {
  try {
    const fields = Deno.readTextFileSync("/proc/stat").split("\n")[0]!.trim().split(/\s+/).slice(1).map(
      Number,
    );
    // user nice system idle iowait irq softirq steal (guest times are already in user and nice)
    const total = fields.slice(0, 8).reduce((a, b) => a + b, 0);
    return { total, steal: fields[7] ?? 0 };
  } catch {
    return undefined; // no /proc/stat (not Linux): nothing to say
  }
}

/** The share of CPU time stolen since `mark`, as a percentage, or undefined where it cannot be read. */
function stolenSince(mark: CpuTimes | undefined): string | undefined {
  const now = cpuTimes();
  if (!mark || !now || now.total <= mark.total) return undefined;
  return `${(100 * (now.steal - mark.steal) / (now.total - mark.total)).toFixed(0)}%`;
}

function table(rows: string[][]): string {
  const widths = rows[0]!.map((_, c) => Math.max(...rows.map((r) => r[c]!.length)));
  return rows.map((r) => r.map((cell, c) => cell.padEnd(widths[c]!)).join("  ")).join("\n");
}

const fmt = (x: number, digits = 3) => Number(x.toPrecision(digits)).toString();

type Row = string[];
const log = (s: string) => console.error(`bench: ${s}`);

/**
 * `ordo bench`: runs the benchmark and prints the table.
 *
 * @returns the exit code
 */
export async function benchCommand(): Promise<number> {
  const engine = await loadEngine();
  const run = cpuTimes();
  const head: Row[] = [
    ["measurement", "value", "baseline (same run)", "ratio", "target"],
    samplingRow(),
    ...engineRows(engine),
  ];
  const loop = cpuTimes();
  const kernels = kernelRows(engine);
  const loopSteal = stolenSince(loop);
  const middle: Row[] = [
    ...propagatorRows(engine),
    ...(await sparseRows()),
    await memoryRow(),
    ...await startupRows(log),
  ];
  const comparison = cpuTimes();
  const scipy = await scipyRows(log);
  const comparisonSteal = stolenSince(comparison);
  console.log(table([...head, ...kernels, ...middle, ...scipy]));
  const whole = stolenSince(run);
  if (whole !== undefined) {
    console.log(
      `\nCPU time taken by the hypervisor (steal, /proc/stat) during this run: ${whole}; during the stepping-loop and ` +
        `kernel rows: ${loopSteal}; during the SciPy comparison: ${comparisonSteal}. Above a few percent, timings ` +
        "swing from run to run (a virtual machine sharing its cores).",
    );
  }
  console.log(
    "\nbaselines: the mathjs scheme is timed over a few steps (300 for d=2, 4 for d=64) and scaled per step;",
  );
  console.log(
    "it does not run the step-doubled reference that the engine also computes, so the engine ratio is conservative.",
  );
  return 0;
}

function samplingRow(): Row {
  log("sampling a coefficient expression");
  const coef = compileExpression("A*gauss(t, t0, w)*cos(wd*t)", {
    params: new Map([["A", 0.3], ["t0", 10], ["w", 2], ["wd", 5.1]]),
    allowTime: true,
  }, ["coef"]);
  const sampleTimes = Float64Array.from({ length: 1_000_000 }, (_, k) => k * 2e-5);
  const sampleOut = new Float64Array(2_000_000);
  coef.sample(sampleTimes, sampleOut); // warm up
  let sampling = Infinity;
  for (let trial = 0; trial < 3; trial++) {
    sampling = Math.min(
      sampling,
      time(() => coef.sample(sampleTimes, sampleOut)),
    );
  }
  return ["10⁶ samples of A·gauss(t,t0,w)·cos(wd·t)", `${fmt(sampling)} ms`, "", "", "well under 1 s"];
}

function engineRows(engine: Engine): Row[] {
  const rows: Row[] = [];
  const comparisons = [
    { label: "two-level", model: twoLevel(), mathjsSteps: 300, target: "" },
    { label: "dense d=64", model: dense(64), mathjsSteps: 4, target: "≥ 20×" },
  ];
  for (const { label, model, mathjsSteps, target } of comparisons) {
    log(`driven ${label}, N=6, 20000 steps`);
    const engineMs = time(() => solve(engine, drivenModel(model, 20000)));
    const mathjsMs = mathjsScheme(model, mathjsSteps, 20000);
    rows.push([
      `(a) ${label}, engine vs mathjs scheme`,
      `${fmt(engineMs)} ms (${fmt(1000 * engineMs / 20000)} µs/step)`,
      `${fmt(mathjsMs * 1000)} µs/step`,
      `${fmt(mathjsMs * 20000 / engineMs)}×`,
      target,
    ]);
  }
  log("time-independent d=300, N=4");
  const tiModel = timeIndependent(300);
  const ti = time(() => solve(engine, tiModel));
  rows.push(["time-independent d=300, N=4, 101 samples", `${fmt(ti)} ms`, "", "", "about 1 s"]);
  return rows;
}

function kernelRows(engine: Engine): Row[] {
  log("kernels");
  const rows: Row[] = [];
  warmPeak(engine);
  // The whole accuracy-driven run (basis change, Runge–Kutta stages with their phases and combinations, error
  // estimates, recording) against the peak, counting only its matrix products as work; H0's eigen-decomposition is
  // handed over, as `ordo run` does. This machine's speed swings (the same run takes up to twice as long for a
  // second or more at a time, while the register-only peak barely moves), so the three sizes take their trials in
  // turn over several seconds, a peak after each: the best rate against the best peak (the same work each time),
  // and the median of each trial's ratio to the peak next to it, which shows the swings.
  const sizes = [64, 128, 256].map((d) => {
    const model = { ...drivenModel(dense(d), 1), accuracy: 1e-8, samples: 2 };
    model.unperturbedEigen = eigh(engine, model.unperturbed[0]!.matrix, d);
    solve(engine, model);
    engine.exports.takeKernelFlops();
    return { d, model, ms: Infinity, flops: 0, ratios: [] as number[] };
  });
  let peak = 0;
  for (let trial = 0; trial < LOOP_TRIALS; trial++) {
    for (const size of sizes) {
      const ms = time(() => solve(engine, size.model));
      size.flops = engine.exports.takeKernelFlops();
      size.ms = Math.min(size.ms, ms);
      const here = peakOnce(engine);
      peak = Math.max(peak, here);
      size.ratios.push(size.flops / (ms * 1e6) / here);
    }
  }
  for (const { d, ms, flops, ratios } of sizes) {
    const rate = flops / (ms * 1e6);
    rows.push([
      `stepping loop, dense d=${d}, N=6, accuracy 1e-8 (its matrix products' GFLOP/s) vs f64x2 peak (best of ${LOOP_TRIALS} trials in turn; median trial ${
        fmt(100 * median(ratios))
      }%)`,
      `${fmt(rate)} GFLOP/s`,
      `${fmt(peak)} GFLOP/s`,
      `${fmt(100 * rate / peak)}%`,
      "≥ 60%",
    ]);
  }
  for (const d of [64, 128]) {
    const simd = kernelRate(engine, d, 7, true), ref = kernelRate(engine, d, 7, false);
    const peakHere = Math.max(peakOnce(engine), peakOnce(engine), peakOnce(engine));
    rows.push([
      `(b) kernel d=${d}, 7 vectors, packed SIMD vs reference`,
      `${fmt(simd)} GFLOP/s`,
      `${fmt(ref)} GFLOP/s`,
      `${fmt(simd / ref)}×`,
      "≥ 1.5×",
    ]);
    rows.push([
      `(c) kernel d=${d} vs measured f64x2 peak`,
      `${fmt(simd)} GFLOP/s`,
      `${fmt(peakHere)} GFLOP/s`,
      `${fmt(100 * simd / peakHere)}%`,
      "≥ 50%",
    ]);
  }
  return rows;
}

/**
 * Propagator mode: r columns of the propagator in one run (every product takes all columns at once) against r
 * runs of one column each, on the dense driven case with an accuracy (the best of three of each).
 */
function propagatorRows(engine: Engine): Row[] {
  const rows: Row[] = [];
  for (const [d, r] of [[16, 4], [64, 4], [64, 8]] as const) {
    log(`propagator columns, dense d=${d}, ${r} columns`);
    const base = { ...drivenModel(dense(d), 1), accuracy: 1e-8, samples: 2 };
    base.unperturbedEigen = eigh(engine, base.unperturbed[0]!.matrix, d);
    const column = (j: number) => {
      const initial = new Float64Array(2 * d);
      initial[2 * j] = 1;
      return initial;
    };
    const stacked = { ...base, columns: r, initial: new Float64Array(2 * d * r) };
    for (let j = 0; j < r; j++) stacked.initial.set(column(j), 2 * d * j);
    const lone = Array.from({ length: r }, (_, j) => ({ ...base, initial: column(j) }));
    let together = Infinity, apart = Infinity;
    for (let trial = 0; trial < 3; trial++) {
      together = Math.min(together, time(() => solve(engine, stacked)));
      apart = Math.min(apart, time(() => lone.forEach((m) => solve(engine, m))));
    }
    rows.push([
      `propagator mode, dense d=${d}, N=6, accuracy 1e-8: ${r} columns in one run vs ${r} runs`,
      `${fmt(together)} ms`,
      `${fmt(apart)} ms`,
      `${fmt(together / apart)}×`,
      "< 1×",
    ]);
  }
  return rows;
}

/** One sparse (or dense) probe in its own process: wall time, steps and peak memory. */
async function sparseProbe(d: number, dense: boolean, diagonal: boolean) {
  const out = await new Deno.Command(Deno.execPath(), {
    args: [
      "run",
      "-A",
      new URL("./_bench_sparse_probe.ts", import.meta.url).pathname,
      String(d),
      "20",
      "4",
      "1e-8",
      dense ? "dense" : "sparse",
      diagonal ? "diagonal" : "offdiagonal",
    ],
    stdout: "piped",
    stderr: "inherit",
  }).output();
  if (!out.success) throw new Error(`the sparse probe at d=${d} failed`);
  return JSON.parse(new TextDecoder().decode(out.stdout)) as {
    ms: number;
    steps: number;
    peakKiB: number | null;
  };
}

/**
 * Sparse operators: random sparse models (about 20 non-zeros a row in V, and in H0 unless it is diagonal; N = 4,
 * accuracy 1e-8), each in its own process (so its peak memory is its own), with H0 diagonal (the interaction
 * picture keeps V's pattern) and not (the Schrödinger picture): d = 1024 sparse against the same matrices dense,
 * and d = 2^12, 2^14 sparse.
 */
async function sparseRows(): Promise<Row[]> {
  const rows: Row[] = [];
  for (const diagonal of [true, false]) {
    const form = diagonal ? "H0 diagonal" : "H0 not diagonal";
    log(`sparse against dense, d=1024, ${form} (subprocesses)`);
    const sparse = await sparseProbe(1024, false, diagonal), dense = await sparseProbe(1024, true, diagonal);
    rows.push([
      `sparse vs dense operators, d=1024, ${form}, ~20 non-zeros a row, N=4, accuracy 1e-8 (whole solve)`,
      `${fmt(sparse.ms)} ms (${sparse.steps} steps)`,
      `${fmt(dense.ms)} ms (${dense.steps} steps)`,
      `${fmt(dense.ms / sparse.ms)}× faster`,
      "≥ 20× faster",
    ]);
    for (const d of [4096, 16384]) {
      log(`sparse d=${d}, ${form} (subprocess)`);
      const run = await sparseProbe(d, false, diagonal);
      rows.push([
        `sparse d=${d}, ${form}, ~20 non-zeros a row, N=4, accuracy 1e-8: time (${run.steps} steps), peak memory`,
        `${fmt(run.ms / 1000)} s, ${run.peakKiB ? fmt(run.peakKiB / 1024) : "?"} MiB`,
        "",
        "",
        d === 16384 ? "< 60 s, < 1 GB" : "",
      ]);
    }
  }
  return rows;
}

async function memoryRow(): Promise<Row> {
  log("peak memory of a 10⁶-step d=8 run (subprocess)");
  let peakKiB: number | null = null;
  try {
    const probe = await new Deno.Command(Deno.execPath(), {
      args: ["run", "-A", new URL("./_bench_memory_probe.ts", import.meta.url).pathname],
      stdout: "piped",
      stderr: "inherit",
    }).output();
    if (probe.success) peakKiB = JSON.parse(new TextDecoder().decode(probe.stdout)).peakKiB;
  } catch {
    log("the memory probe needs a subprocess: run `deno task bench` (which allows one) to measure it");
  }
  return [
    "peak memory, 10⁶ steps, d=8, N=6 (process high-water mark)",
    peakKiB ? `${fmt(peakKiB / 1024)} MiB` : "not measured",
    "",
    "",
    "< 300 MB",
  ];
}
