/**
 * The `ordo` command line: parses arguments, dispatches to a command, and
 * turns every error into a message and an exit code (0 success, 1 a check
 * failed, 2 bad input, 3 internal error). Results go to stdout; progress and
 * diagnostics to stderr.
 *
 * @module
 */

import { parseArgs, type ParseArgsConfig } from "node:util";
import { CaseError, UsageError } from "./case/errors.ts";
import { buildCase, type BuildOptions } from "./case/build.ts";
import { readCase } from "./case/parse.ts";
import { formatInspection, inspectCase } from "./analysis/inspection.ts";
import { EXAMPLES, initCase } from "./commands/init.ts";
import { formatRun, runCase, runJson } from "./analysis/outcome.ts";
import { EngineError, loadEngine } from "../engine/mod.ts";
import { VERSION } from "./base/version.ts";
import { progressBar } from "./report/progress.ts";

const HELP = `ordo ${VERSION}: how far is each Dyson order from the exact evolution?

usage: ordo <command> [options]

commands:
  run CASE        Dyson series and exact propagation for one case: table and verdict
                  --json              the result as JSON on stdout (nothing else there)
                  --order N           highest Dyson order (overrides [series] order)
                  --steps N           integrator steps (overrides [grid] steps)
                  --set name=value    override a param (repeatable)
                  --targets a,b       labels to report (overrides [series] targets)
                  --at t              report at the recorded time nearest to t
                  --quiet             no progress on stderr
                  --out DIR           also write result.json, populations.csv, report.html
  sweep CASE      a parameter sweep over the case's [sweep] grid: points.csv, report.html
                  --out DIR           the sweep folder (required)
                  --vary n=a:b:k[:log] sweep param n (or strength, λ) from a to b in k values
                  --workers N         parallel workers (default: all cores)
                  --resume            continue an interrupted sweep in DIR
                  --shard k/n         run the k-th of n slices into its own file
                  --set, --order, --steps, --targets, --quiet as for run
  sweep --merge DIR                   combine shard files, checking every point is there once
  sweep CASE --out DIR --emit-array SCRIPT --shards N
                                      write a Slurm job-array script (bash SCRIPT submits it)
  check CASE      the case's [[approx]] formulas against exact propagation: PASS/FAIL
                  --vary, --workers, --set, --order, --steps, --quiet as for sweep
  inspect CASE    parse and validate: dimension, spectrum, Bohr frequencies, steps, memory
                  --set name=value    override a param (repeatable)
  init NAME       write a starter case NAME.toml
                  --example NAME      one of: ${Object.keys(EXAMPLES).join(", ")}
                  --force             overwrite an existing file
  bench           the performance benchmark suite

exit codes: 0 success, 1 a check failed, 2 bad input, 3 internal error
`;

function usage(message: string): never {
  throw new UsageError(message);
}

function parseOrFail(
  args: string[],
  options: NonNullable<ParseArgsConfig["options"]>,
) {
  try {
    return parseArgs({ args, options, allowPositionals: true, strict: true });
  } catch (e) {
    return usage(
      `${(e as Error).message.replace(/\. To specify.*$/s, "")}; see \`ordo --help\``,
    );
  }
}

function integerFlag(value: unknown, flag: string): number | undefined {
  if (value === undefined) return undefined;
  const n = Number(value);
  if (!Number.isInteger(n)) {
    usage(`${flag} takes a whole number, got "${value}"`);
  }
  return n;
}

function buildOptions(values: Record<string, unknown>): BuildOptions {
  const set: Record<string, string> = {};
  for (const item of (values.set as string[] | undefined) ?? []) {
    const eq = item.indexOf("=");
    if (eq <= 0) usage(`--set takes name=value, got "${item}"`);
    set[item.slice(0, eq).trim()] = item.slice(eq + 1).trim();
  }
  const targets = values.targets === undefined
    ? undefined
    : String(values.targets).split(",").map((s) => s.trim()).filter(Boolean);
  return {
    set,
    order: integerFlag(values.order, "--order"),
    steps: integerFlag(values.steps, "--steps"),
    targets,
  };
}

function oneCase(positionals: string[], command: string): string {
  if (positionals.length !== 1) {
    usage(
      `${command} takes one case file, e.g. \`ordo ${command} cases/two_level.toml\``,
    );
  }
  return positionals[0]!;
}

async function sweepCommand(rest: string[]): Promise<number> {
  const { values, positionals } = parseOrFail(rest, {
    out: { type: "string" },
    workers: { type: "string" },
    vary: { type: "string", multiple: true },
    resume: { type: "boolean" },
    shard: { type: "string" },
    merge: { type: "string" },
    "emit-array": { type: "string" },
    shards: { type: "string" },
    order: { type: "string" },
    steps: { type: "string" },
    set: { type: "string", multiple: true },
    targets: { type: "string" },
    quiet: { type: "boolean" },
  });
  const { emitArrayScript, Interrupted, mergeShards, runSweep } = await import("./sweep/pool.ts");
  const { parseShard, parseVary } = await import("./sweep/grid.ts");
  if (values.merge !== undefined) {
    const n = await mergeShards(String(values.merge));
    console.log(`merged ${n} points into ${values.merge}/points.csv (report: ${values.merge}/report.html)`);
    return 0;
  }
  const file = oneCase(positionals, "sweep");
  if (values.out === undefined) {
    usage("sweep needs --out DIR, the folder for points.csv, sweep.json and report.html");
  }
  const out = String(values.out);
  const vary = ((values.vary as string[] | undefined) ?? []).map(parseVary);
  if (values["emit-array"] !== undefined) {
    const shards = integerFlag(values.shards, "--shards");
    if (!shards || shards < 1) usage("--emit-array needs --shards N, the number of array tasks");
    // Pass the flags that shape the sweep on to every shard.
    const passed = ["--vary", "--set", "--order", "--steps", "--targets"];
    const extra: string[] = [];
    rest.forEach((arg, k) => {
      if (passed.includes(arg) && rest[k + 1] !== undefined) extra.push(arg, rest[k + 1]!);
    });
    emitArrayScript(String(values["emit-array"]), file, out, shards!, extra);
    console.log(
      `wrote ${values["emit-array"]}: submit it with \`bash ${values["emit-array"]}\` on the cluster`,
    );
    return 0;
  }
  const workers = integerFlag(values.workers, "--workers") ?? navigator.hardwareConcurrency;
  if (workers < 1) usage("--workers takes a whole number ≥ 1");
  try {
    const r = await runSweep(file, {
      out,
      workers,
      resume: Boolean(values.resume),
      shard: values.shard === undefined ? undefined : parseShard(String(values.shard)),
      vary,
      build: buildOptions(values),
      quiet: Boolean(values.quiet),
    });
    const rate = r.written / Math.max(r.seconds, 1e-9);
    console.log(
      `sweep: ${r.written} points in ${r.seconds.toFixed(1)} s (${rate.toFixed(1)} points/s, ${
        r.reusedSeries ? "λ only: series reused" : `${workers} worker${workers > 1 ? "s" : ""}`
      })` + (r.skipped ? `; ${r.skipped} were already done` : "") +
        `; ${r.skipped + r.written} of ${r.total} in ${out}`,
    );
    return 0;
  } catch (e) {
    if (e instanceof Interrupted) {
      console.error(`ordo: interrupted; every finished point is in ${out}; continue with --resume`);
      return 130;
    }
    throw e;
  }
}

async function checkCommand(rest: string[]): Promise<number> {
  const { values, positionals } = parseOrFail(rest, {
    workers: { type: "string" },
    vary: { type: "string", multiple: true },
    order: { type: "string" },
    steps: { type: "string" },
    set: { type: "string", multiple: true },
    quiet: { type: "boolean" },
  });
  const { runCheck, formatCheck } = await import("./commands/check.ts");
  const { parseVary } = await import("./sweep/grid.ts");
  const report = await runCheck(oneCase(positionals, "check"), {
    workers: integerFlag(values.workers, "--workers") ?? navigator.hardwareConcurrency,
    vary: ((values.vary as string[] | undefined) ?? []).map(parseVary),
    build: buildOptions(values),
    quiet: Boolean(values.quiet),
  });
  console.log(formatCheck(report));
  return report.approximations.every((a) => a.pass) ? 0 : 1;
}

async function main(argv: string[]): Promise<number> {
  const [command, ...rest] = argv;
  if (
    !command || command === "--help" || command === "-h" || command === "help"
  ) {
    console.log(HELP);
    return 0;
  }
  if (command === "--version") {
    console.log(VERSION);
    return 0;
  }
  switch (command) {
    case "run": {
      const { values, positionals } = parseOrFail(rest, {
        json: { type: "boolean" },
        out: { type: "string" },
        order: { type: "string" },
        steps: { type: "string" },
        set: { type: "string", multiple: true },
        targets: { type: "string" },
        at: { type: "string" },
        quiet: { type: "boolean" },
      });
      const file = oneCase(positionals, "run");
      const built = buildCase(readCase(file), buildOptions(values));
      const at = values.at === undefined ? undefined : Number(values.at);
      if (at !== undefined && !Number.isFinite(at)) {
        usage(`--at takes a time, got "${values.at}"`);
      }
      const engine = await loadEngine();
      const progress = values.quiet ? undefined : progressBar("propagating");
      let outcome;
      try {
        outcome = runCase(engine, built, at, progress?.update);
      } finally {
        progress?.stop();
      }
      if (values.json) console.log(JSON.stringify(runJson(outcome)));
      else console.log(formatRun(outcome));
      if (values.out) {
        const { writeReport } = await import("./report/run_report.ts");
        const files = await writeReport(outcome, String(values.out));
        console.error(`ordo: wrote ${files.join(", ")}`);
      }
      return 0;
    }
    case "inspect": {
      const { values, positionals } = parseOrFail(rest, {
        set: { type: "string", multiple: true },
      });
      const built = buildCase(
        readCase(oneCase(positionals, "inspect")),
        buildOptions(values),
      );
      const engine = await loadEngine();
      console.log(formatInspection(built, inspectCase(engine, built)));
      return 0;
    }
    case "init": {
      const { values, positionals } = parseOrFail(rest, {
        example: { type: "string" },
        force: { type: "boolean" },
      });
      if (positionals.length !== 1) {
        usage(
          "init takes the name of the file to write, e.g. `ordo init my_case`",
        );
      }
      const path = initCase(
        positionals[0]!,
        values.example as string | undefined,
        Boolean(values.force),
      );
      console.error(
        `ordo: wrote ${path}; try \`ordo inspect ${path}\` then \`ordo run ${path}\``,
      );
      return 0;
    }
    case "bench": {
      const { runBench } = await import("./commands/bench.ts");
      await runBench();
      return 0;
    }
    case "sweep":
      return await sweepCommand(rest);
    case "check":
      return await checkCommand(rest);
    default:
      return usage(
        `unknown command "${command}"; commands are run, inspect, init, bench (see \`ordo --help\`)`,
      );
  }
}

/**
 * Runs the command line and returns the exit code; messages go to stderr,
 * never a stack trace (set ORDO_DEBUG=1 to see one for internal errors).
 *
 * @param argv the arguments after `ordo`
 * @returns 0 success, 1 a check failed, 2 bad input, 3 internal error
 */
export async function cli(argv: string[]): Promise<number> {
  try {
    return await main(argv);
  } catch (e) {
    if (e instanceof CaseError) {
      console.error(`ordo: ${e.report()}`);
      return 2;
    }
    if (e instanceof UsageError) {
      console.error(`ordo: ${e.message}`);
      return 2;
    }
    if (e instanceof EngineError) {
      console.error(`ordo: engine failure: ${e.message}`);
      return 3;
    }
    console.error(`ordo: internal error: ${(e as Error)?.message ?? e}`);
    if (Deno.env.get("ORDO_DEBUG")) console.error((e as Error)?.stack);
    return 3;
  }
}

if (import.meta.main) Deno.exit(await cli(Deno.args));
