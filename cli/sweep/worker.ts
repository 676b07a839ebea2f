/**
 * A sweep worker: one engine instance, points evaluated on request.
 * Protocol: `{ kind: "init", setup }` → `{ kind: "ready" }`; then
 * `{ kind: "point", index, values }` → `{ kind: "done", result }` or
 * `{ kind: "error", message, index }`.
 *
 * @module
 */
/// <reference lib="deno.worker" />

import { loadEngine } from "../../engine/mod.ts";
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
      caseError: e instanceof CaseError,
    });
  }
};
