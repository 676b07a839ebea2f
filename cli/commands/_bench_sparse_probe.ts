/**
 * Runs one sparse (or dense) benchmark model in its own process and prints its wall time, steps, non-zeros and
 * peak resident memory as JSON. Used by `ordo bench`:
 * `_bench_sparse_probe.ts d perRow order accuracy sparse|dense offdiagonal|diagonal` (H0's form).
 *
 * @module
 */
import { loadEngine, solve } from "../../engine/mod.ts";
import { sparseModel } from "./_bench_cases.ts";

const [d, perRow, order, accuracy, dense, h0] = Deno.args;
const engine = await loadEngine();
const model = sparseModel(
  Number(d),
  Number(perRow),
  Number(order),
  Number(accuracy),
  dense === "dense",
  h0 === "diagonal",
);
const started = performance.now();
const result = solve(engine, model);
const ms = performance.now() - started;
const status = Deno.readTextFileSync("/proc/self/status");
const hwm = /VmHWM:\s+(\d+) kB/.exec(status);
console.log(JSON.stringify({
  ms,
  steps: result.steps,
  scheme: result.scheme,
  nonZeros: model.perturbation[0]!.sparse?.column.length ?? null,
  peakKiB: hwm ? Number(hwm[1]) : null,
}));
