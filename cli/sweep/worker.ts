/**
 * A sweep worker: one engine instance, points evaluated on request.
 * Protocol: `{ kind: "init", setup }` → `{ kind: "ready" }`; then
 * `{ kind: "point", index, values }` → `{ kind: "done", result }` or
 * `{ kind: "error", message, index }`.
 *
 * @module
 */
/// <reference lib="deno.worker" />

import { EngineError, loadEngine } from "../../engine/mod.ts";
import { CaseError } from "../case/errors.ts";
import { PointEvaluator, type SweepSetup } from "./point.ts";

let evaluator: PointEvaluator | undefined;

self.onmessage = async (event: MessageEvent) => {
  const msg = event.data as
    | { kind: "init"; setup: SweepSetup }
    | { kind: "point"; index: number; values: number[] };
  try {
    if (msg.kind === "init") {
      evaluator = new PointEvaluator(await loadEngine(), msg.setup);
      self.postMessage({ kind: "ready" });
    } else {
      self.postMessage({ kind: "done", result: evaluator!.evaluate(msg.index, msg.values) });
    }
  } catch (e) {
    self.postMessage({
      kind: "error",
      index: msg.kind === "point" ? msg.index : -1,
      message: e instanceof CaseError ? e.report() : `${(e as Error)?.message ?? e}`,
      // A case error or an engine failure the input caused is the user's to fix (exit 2); anything else is ours.
      byInput: e instanceof CaseError || (e instanceof EngineError && e.byInput),
    });
  }
};
