/**
 * The worker pool of sweeps and checks: one engine per Deno Worker, points
 * handed out as workers free up, results passed back as they finish.
 *
 * @module
 */

import { UsageError } from "../case/errors.ts";
import type { PointResult, SweepSetup } from "./point.ts";

/** Raised when a sweep is interrupted (SIGINT); finished points are on disk. */
export class Interrupted extends Error {
  constructor() {
    super("interrupted");
    this.name = "Interrupted";
  }
}

/** A point to evaluate. */
export interface PointJob {
  index: number;
  values: number[];
}

/**
 * Evaluates points on a pool of workers, calling onResult as each finishes.
 *
 * @param setup shared setup
 * @param points the points
 * @param workers how many workers
 * @param onResult called on the main thread for each finished point
 * @param signal aborts the pool (workers are terminated)
 */
export async function evaluatePool(
  setup: SweepSetup,
  points: PointJob[],
  workers: number,
  onResult: (r: PointResult) => void,
  signal?: AbortSignal,
): Promise<void> {
  if (points.length === 0) return;
  const count = Math.max(1, Math.min(workers, points.length));
  const pool: Worker[] = [];
  let next = 0, done = 0;
  await new Promise<void>((resolve, reject) => {
    const stop = (error: Error) => {
      for (const w of pool) w.terminate();
      reject(error);
    };
    signal?.addEventListener("abort", () => stop(new Interrupted()), { once: true });
    const dispatch = (w: Worker) => {
      if (next >= points.length) return;
      const job = points[next++]!;
      w.postMessage({ kind: "point", index: job.index, values: job.values });
    };
    for (let i = 0; i < count; i++) {
      const w = new Worker(new URL("./worker.ts", import.meta.url).href, { type: "module" });
      pool.push(w);
      w.onmessage = (event: MessageEvent) => {
        const msg = event.data;
        if (msg.kind === "ready") dispatch(w);
        else if (msg.kind === "done") {
          try {
            onResult(msg.result as PointResult);
          } catch (e) {
            // A result that cannot be kept (a full disk) stops the pool: never an uncaught error in a callback.
            stop(e as Error);
            return;
          }
          done++;
          if (done === points.length) {
            for (const x of pool) x.terminate();
            resolve();
          } else dispatch(w);
        } else {
          const job = points.find((p) => p.index === msg.index);
          const where = job ? ` (at ${setup.axes.map((a, j) => `${a} = ${job.values[j]}`).join(", ")})` : "";
          // The point goes on the first line, before the report's "fix:" line.
          const [first, ...more] = String(msg.message).split("\n");
          const message = [`${first}${where}`, ...more].join("\n");
          stop(msg.byInput ? new UsageError(message) : new Error(`a sweep worker failed: ${message}`));
        }
      };
      w.onerror = (e) => {
        e.preventDefault();
        stop(new Error(`a sweep worker failed: ${e.message}`));
      };
      w.postMessage({ kind: "init", setup });
    }
  });
}
