/**
 * The benchmark's start-up rows (private to the commands): `ordo --help`, `ordo run cases/two_level.toml` and the
 * peak memory of `ordo run` on a d = 8 case, each as a user runs it (a new `deno run` process, the permissions of
 * the `ordo` task), the best and the median of five.
 *
 * @module
 */

import { caseText, dense } from "./_bench_cases.ts";

const ROOT = new URL("../../", import.meta.url).pathname;
/** `deno run` as the `ordo` task runs it (deno.json): its permissions and its V8 flag. */
export const ORDO_RUN = [
  "run",
  "--allow-read",
  "--allow-write",
  "--allow-sys=hostname",
  "--allow-env=INIT_CWD",
  // a young generation of at most 1 MB: a short run never grows it to 16 MB (the peak memory row)
  "--v8-flags=--max-semi-space-size=1",
];
const ORDO = [...ORDO_RUN, ROOT + "cli/main.ts"];
const REPEATS = 5;

/** Wall time of one `ordo ARGS` in ms, and its peak resident memory in KiB when /usr/bin/time can tell. */
async function ordo(args: string[], withTime: boolean): Promise<{ ms: number; peakKiB?: number }> {
  const started = performance.now();
  const [command, all] = withTime
    ? ["/usr/bin/time", ["-f", "ordo-peak-kib %M", Deno.execPath(), ...ORDO, ...args]]
    : [Deno.execPath(), [...ORDO, ...args]];
  const out = await new Deno.Command(command, { args: all, stdout: "null", stderr: "piped", cwd: ROOT })
    .output();
  const ms = performance.now() - started;
  if (!out.success) throw new Error(`ordo ${args.join(" ")} failed`);
  const peak = /ordo-peak-kib (\d+)/.exec(new TextDecoder().decode(out.stderr));
  return { ms, peakKiB: peak ? Number(peak[1]) : undefined };
}

async function hasTime(): Promise<boolean> {
  try {
    return (await new Deno.Command("/usr/bin/time", { args: ["-f", "%M", "true"], stderr: "null" }).output())
      .success;
  } catch {
    return false;
  }
}

const best = (xs: number[]) => Math.min(...xs);
const middle = (xs: number[]) => xs.slice().sort((a, b) => a - b)[Math.floor(xs.length / 2)]!;
const fmt = (x: number) => Number(x.toPrecision(3)).toString();

/**
 * The start-up rows.
 *
 * @param log progress lines
 * @returns table rows: measurement, value, baseline, ratio, target
 */
export async function startupRows(log: (s: string) => void): Promise<string[][]> {
  log("start-up: ordo --help, ordo run cases/two_level.toml, peak memory of ordo run on a d=8 case");
  const help: number[] = [], twoLevel: number[] = [], memory: number[] = [];
  const measureMemory = await hasTime();
  const file = Deno.makeTempFileSync({ suffix: ".toml" });
  Deno.writeTextFileSync(file, caseText(dense(8), 1e-8));
  try {
    await ordo(["--help"], false); // warm the module cache
    for (let k = 0; k < REPEATS; k++) {
      help.push((await ordo(["--help"], false)).ms);
      twoLevel.push((await ordo(["run", "cases/two_level.toml", "--quiet"], false)).ms);
      if (measureMemory) memory.push((await ordo(["run", file, "--quiet"], true)).peakKiB ?? NaN);
    }
  } finally {
    Deno.removeSync(file);
  }
  const time = (xs: number[]) => `${fmt(best(xs) / 1000)} s (median ${fmt(middle(xs) / 1000)} s)`;
  return [
    ["start-up: ordo --help (a new process)", time(help), "", "", "≤ 0.15 s"],
    ["start-up: ordo run cases/two_level.toml (a new process)", time(twoLevel), "", "", "≤ 0.4 s"],
    [
      "peak memory of ordo run, dense driven d=8, N=6, accuracy 1e-8 (max RSS)",
      measureMemory
        // /usr/bin/time reports KiB; the target is in MB (10⁶ bytes), so both are shown
        ? `${fmt(best(memory) / 1024)} MiB = ${fmt(best(memory) * 1.024 / 1000)} MB (median ${
          fmt(middle(memory) * 1.024 / 1000)
        } MB)`
        : "not measured (needs /usr/bin/time)",
      "",
      "",
      "≤ 80 MB",
    ],
  ];
}
