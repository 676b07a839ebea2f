/**
 * `ordo run CASE`: the series and the exact propagation for one case; the
 * order-by-order table and verdict on stdout (or the JSON result with
 * `--json`), and the report files with `--out DIR`.
 *
 * @module
 */

import { buildCase } from "../case/build.ts";
import { readCase } from "../case/parse.ts";
import { runCase, type RunOutcome } from "../analysis/outcome.ts";
import { formatRun } from "../analysis/table.ts";
import { runJson } from "../analysis/result_json.ts";
import { progressBar } from "../report/progress.ts";
import { ensureOutputDir, isSystemError } from "../report/output_dir.ts";
import { OutputError } from "../case/errors.ts";
import { loadEngine, wantsHelper } from "../../engine/mod.ts";
import { buildOptions, CASE_FLAGS, oneCase, parseOrFail, usage } from "./_args.ts";

/** `--show population` (the default) or `--show amplitude`. */
function showOf(value: unknown): "population" | "amplitude" {
  if (value === undefined || value === "population") return "population";
  if (value === "amplitude") return "amplitude";
  return usage(`--show takes population or amplitude, got "${value}"`);
}

/**
 * `ordo run CASE [--json] [--out DIR] [--at t] …`.
 *
 * @param args the arguments after `run`
 * @returns the exit code
 */
export async function runCommand(args: string[]): Promise<number> {
  const { values, positionals } = parseOrFail(args, {
    json: { type: "boolean" },
    show: { type: "string" },
    out: { type: "string" },
    at: { type: "string" },
    ...CASE_FLAGS,
  });
  const file = oneCase(positionals, "run");
  const built = buildCase(readCase(file), buildOptions(values));
  const at = values.at === undefined ? undefined : Number(values.at);
  if (at !== undefined && !Number.isFinite(at)) {
    usage(`--at takes a time, got "${values.at}"`);
  }
  if (values.out !== undefined) ensureOutputDir(String(values.out), "--out");
  // a large dense case shares its matrix products with a second thread, which joins when its worker is up (the
  // run does not wait for it)
  const engine = await loadEngine(undefined, { helper: wantsHelper(built.model), waitForHelper: false });
  const progress = values.quiet ? undefined : await progressBar("propagating");
  let outcome: RunOutcome;
  try {
    outcome = runCase(engine, built, at, progress?.update);
  } finally {
    progress?.stop();
    engine.close();
  }
  if (values.json) console.log(JSON.stringify(runJson(outcome)));
  else console.log(formatRun(outcome, showOf(values.show)));
  if (values.out !== undefined) {
    const { writeReport } = await import("../report/run_report.ts");
    let files: string[];
    try {
      files = await writeReport(outcome, String(values.out));
    } catch (e) {
      if (!isSystemError(e)) throw e;
      throw new OutputError(`cannot write the report files in ${values.out}: ${(e as Error).message}`);
    }
    console.error(`ordo: wrote ${files.join(", ")}`);
  }
  return 0;
}
