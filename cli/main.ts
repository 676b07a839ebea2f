/**
 * The `ordo` command line: dispatches to a command (each in cli/commands/,
 * parsing its own flags) and turns every error into a message and an exit
 * code (0 success, 1 a check failed, 2 bad input, 3 internal error). Results
 * go to stdout; progress and diagnostics to stderr. Commands are imported
 * only when called, so `--help` and `--version` load nothing heavy.
 *
 * @module
 */

import { CaseError, OutputError, UsageError } from "./case/errors.ts";
import { EngineError } from "../engine/mod.ts";
import { VERSION } from "./base/version.ts";
import { EXAMPLES } from "./base/examples.ts";

/** The commands, each loaded on demand. */
const COMMANDS: Record<string, () => Promise<(args: string[]) => Promise<number>>> = {
  run: async () => (await import("./commands/run.ts")).runCommand,
  sweep: async () => (await import("./commands/sweep.ts")).sweepCommand,
  check: async () => (await import("./commands/check.ts")).checkCommand,
  inspect: async () => (await import("./commands/inspect.ts")).inspectCommand,
  init: async () => (await import("./commands/init.ts")).initCommand,
  bench: async () => (await import("./commands/bench.ts")).benchCommand,
};

/** Each command's usage, shown by `ordo --help` (all of them) and `ordo COMMAND --help` (its own). */
const USAGE: Record<string, string> = {
  run: `  run CASE        Dyson series and exact propagation for one case: table and verdict
                  --json              the result as JSON on stdout (nothing else there)
                  --order N           highest Dyson order (overrides [series] order)
                  --accuracy A        steps chosen by the engine for this accuracy (overrides [grid])
                  --steps N           fixed integrator steps (overrides [grid])
                  --set name=value    override a param (repeatable)
                  --targets a,b       labels to report (overrides [series] targets)
                  --at t              report at the recorded time nearest to t
                  --show amplitude    also the amplitude (modulus, phase) of each partial sum
                  --basis eigen       report in H0's eigenstates (default: bare, the case's labels)
                  --picture interaction  amplitudes as e^{iH0 t}ψ (default: schrodinger, ψ itself)
                  --subspace a,b      also the gate on these levels: fidelity, leakage, Magnus per order
                  --operators sparse  how operators are stored: auto (sparse above d = 256), dense, sparse
                  --quiet             no progress on stderr
                  --out DIR           also write result.json, populations.csv, report.html`,
  sweep: `  sweep CASE      a parameter sweep over the case's [sweep] grid: points.csv, report.html
                  --out DIR           the sweep folder (required)
                  --vary n=a:b:k[:log] sweep param n (or strength, λ) from a to b in k values
                  --workers N         parallel workers (default: all cores)
                  --resume            continue an interrupted sweep in DIR
                  --shard k/n         run the k-th of n slices into its own file
                  --set, --order, --accuracy, --steps, --targets, --quiet as for run
  sweep --merge DIR                   combine shard files, checking every point is there once
  sweep CASE --out DIR --emit-array SCRIPT --shards N
                                      write a Slurm job-array script (bash SCRIPT submits it)`,
  check: `  check CASE      the case's [[approx]] formulas against exact propagation: PASS/FAIL
                  --vary, --workers, --set, --order, --accuracy, --steps, --quiet as for sweep`,
  inspect: `  inspect CASE    parse and validate: dimension, spectrum, Bohr frequencies, steps, memory
                  --set name=value    override a param (repeatable)
                  --operators sparse  how operators are stored: auto, dense, sparse
                  --subspace a,b      the gate's columns and their memory`,
  init: `  init NAME       write a starter case NAME.toml
                  --example NAME      one of: ${Object.keys(EXAMPLES).join(", ")}
                  --force             overwrite an existing file`,
  bench:
    `  bench           the performance benchmark suite (with a side-by-side run of bench/scipy_dyson.py)`,
};

const EXIT_CODES = "exit codes: 0 success, 1 a check failed, 2 bad input, 3 internal error";

const HELP = `ordo ${VERSION}: how far is each Dyson order from the exact evolution?

usage: ordo <command> [options]        (ordo <command> --help for one command)

commands:
${Object.values(USAGE).join("\n")}

${EXIT_CODES}
`;

async function main(argv: string[]): Promise<number> {
  const [command, ...rest] = argv;
  if (!command || command === "--help" || command === "-h" || command === "help") {
    console.log(HELP);
    return 0;
  }
  if (command === "--version") {
    console.log(VERSION);
    return 0;
  }
  const load = Object.hasOwn(COMMANDS, command) ? COMMANDS[command] : undefined;
  if (load && (rest.includes("--help") || rest.includes("-h"))) {
    console.log(`usage: ordo ${command} …\n\n${USAGE[command]}\n\n${EXIT_CODES}`);
    return 0;
  }
  if (!load) {
    throw new UsageError(
      `unknown command "${command}"; commands are ${Object.keys(COMMANDS).join(", ")} (see \`ordo --help\`)`,
    );
  }
  return await (await load())(rest);
}

/**
 * Runs the command line and returns the exit code; messages go to stderr,
 * never a stack trace (set ORDO_DEBUG=1 to see one for internal errors).
 *
 * @param argv the arguments after `ordo`
 * @returns 0 success, 1 a check failed, 2 bad input, 3 internal error
 */
export async function cli(argv: string[]): Promise<number> {
  const { log, error } = console;
  // Everything printed passes through one filter: control characters from a case (a title that would clear
  // the screen or retitle the window) are shown, never obeyed.
  console.log = (...items: unknown[]) => log(...items.map(printable));
  console.error = (...items: unknown[]) => error(...items.map(printable));
  try {
    return await main(argv);
  } catch (e) {
    return report(e);
  } finally {
    console.log = log;
    console.error = error;
  }
}

/** Control characters other than newline and tab, written out as \xNN. */
export function printable(item: unknown): unknown {
  if (typeof item !== "string") return item;
  return item.replace(CONTROL, (c) => `\\x${c.charCodeAt(0).toString(16).padStart(2, "0")}`);
}

/** C0 controls but newline and tab, DEL, and C1 controls. */
// deno-lint-ignore no-control-regex
const CONTROL = /[\x00-\x08\x0b-\x1f\x7f-\x9f]/g;

/** The message and exit code of an error: never a stack trace unless ORDO_DEBUG asks for one. */
function report(e: unknown): number {
  if (e instanceof CaseError) {
    console.error(`ordo: ${e.report()}`);
    return 2;
  }
  if (e instanceof UsageError) {
    console.error(`ordo: ${e.message}`);
    return 2;
  }
  if (e instanceof OutputError) {
    console.error(`ordo: ${e.message}`);
    return 3;
  }
  if (e instanceof EngineError) {
    console.error(`ordo: ${e.byInput ? "cannot propagate this case" : "engine failure"}: ${e.message}`);
    return e.byInput ? 2 : 3;
  }
  console.error(`ordo: internal error: ${(e as Error)?.message ?? e}`);
  if (debugging()) console.error((e as Error)?.stack);
  return 3;
}

/** Whether ORDO_DEBUG is set; false where the environment may not be read (no --allow-env). */
function debugging(): boolean {
  try {
    return Boolean(Deno.env.get("ORDO_DEBUG"));
  } catch {
    return false;
  }
}

if (import.meta.main) {
  adoptCallerFolder();
  Deno.exit(await cli(Deno.args));
}

/**
 * `deno task` starts a command in the folder of deno.json and says where it was called from in INIT_CWD; the
 * user's relative paths mean that folder, so ordo works there. (Installed as a command, it starts there.)
 */
function adoptCallerFolder(): void {
  let caller: string | undefined;
  try {
    caller = Deno.env.get("INIT_CWD");
  } catch {
    return; // the environment may not be read: stay where started
  }
  if (caller) Deno.chdir(caller);
}
