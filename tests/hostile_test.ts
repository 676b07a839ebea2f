/**
 * Hostile inputs (tests/fixtures/hostile/): each file with what it must produce, in expect.json. Every one
 * ends in its stated exit code with no stack trace; exit-0 runs must give exact populations in [0, 1] that sum
 * to 1 over all labels.
 */

import { assert, assertDeepEqual, assertEqual } from "./assert.ts";
import { runOrdo, testEngine } from "./helpers.ts";
import { constantModel } from "./engine_helpers.ts";
import { EngineError, solve } from "../engine/mod.ts";

const dir = new URL("fixtures/hostile/", import.meta.url);
const expectations = JSON.parse(Deno.readTextFileSync(new URL("expect.json", dir))).cases as Record<
  string,
  {
    item: number | string;
    args: string[];
    exit: number;
    stderr?: string[];
    json?: Record<string, unknown>;
    json_includes?: Record<string, string>;
  }
>;

/** The value at a dotted path ("analysis.targets.0.min_order"). */
function at(value: unknown, path: string): unknown {
  return path.split(".").reduce<unknown>(
    (v, key) => (v as Record<string, unknown> | undefined)?.[key],
    value,
  );
}

for (const [file, expected] of Object.entries(expectations)) {
  Deno.test(`hostile input ${file} (item ${expected.item}) ends in exit ${expected.exit} as stated`, async () => {
    const path = new URL(file.split("#")[0]!, dir).pathname;
    const [command, ...flags] = expected.args;
    const quiet = command === "inspect" || command === "init" ? [] : ["--quiet"];
    const { code, stdout, stderr } = await runOrdo([command!, path, ...flags, ...quiet]);
    assertEqual(code, expected.exit, `exit code; stderr: ${stderr}`);
    assert(!/\n\s+at /.test(stderr), `no stack trace: ${stderr}`);
    for (const part of expected.stderr ?? []) {
      assert(stderr.includes(part), `stderr has "${part}": ${stderr}`);
    }
    if (!expected.json && !expected.json_includes) return;
    const result = JSON.parse(stdout);
    for (const [key, value] of Object.entries(expected.json ?? {})) {
      assertDeepEqual(at(result, key), value, key);
    }
    for (const [key, part] of Object.entries(expected.json_includes ?? {})) {
      assert(String(at(result, key)).includes(part), `${key} has "${part}": ${at(result, key)}`);
    }
    // Exact populations lie in [0, 1]; a truncated Dyson sum is not normalised, so its populations need only be
    // finite and non-negative.
    for (const p of Object.values(result.exact as Record<string, number[]>).flat()) {
      assert(p >= 0 && p <= 1 + 1e-12, `exact population ${p}`);
    }
    for (const populations of result.series as Record<string, number[]>[]) {
      for (const p of Object.values(populations).flat()) {
        assert(Number.isFinite(p) && p >= 0, `partial sum ${p}`);
      }
    }
    if (result.labels.length === result.levels.length) {
      const last = result.times.length - 1;
      const total = result.labels.reduce((s: number, l: string) => s + result.exact[l][last], 0);
      assert(Math.abs(total - 1) < 1e-8, `exact populations sum to ${total}`);
    }
  });
}

Deno.test("item 3: an engine run whose numbers overflow throws EngineError (exit 3), never returns NaN", async () => {
  const engine = await testEngine();
  // A start state with amplitudes of 1.7e308 (the case builder normalises; here it goes to the engine
  // directly): mixing the two levels overflows double precision, and the engine must not return infinities.
  const h0 = new Float64Array([0, 0, 0, 0, 0, 0, 1, 0]);
  const v = new Float64Array([0, 0, 1, 0, 1, 0, 0, 0]);
  let thrown: unknown;
  try {
    solve(engine, constantModel(h0, v, new Float64Array([1.7e308, 0, 1.7e308, 0]), 1, 3, 6));
  } catch (e) {
    thrown = e;
  }
  assert(thrown instanceof EngineError && !thrown.byInput, `EngineError (exit 3), got ${thrown}`);
  assert(String((thrown as Error).message).includes("overflowed"), String(thrown));
});

Deno.test("item 11: an absurd ‖H‖·h in a stepped run is refused by the engine at once, not run for hours", async () => {
  const engine = await testEngine();
  const h0 = new Float64Array([0, 0, 0, 0, 0, 0, 1, 0]);
  const v = new Float64Array([0, 0, 1, 0, 1, 0, 0, 0]);
  const model = constantModel(h0, v, new Float64Array([1, 0, 0, 0]), 10, 3, 2);
  model.perturbation[0]!.coefficient = {
    kind: "sampled",
    sample: (times, out) =>
      times.forEach((t, k) => ((out[2 * k] = 1e300 * Math.cos(t)), (out[2 * k + 1] = 0))),
  };
  let thrown: unknown;
  try {
    solve(engine, { ...model, steps: 100 });
  } catch (e) {
    thrown = e;
  }
  assert(thrown instanceof EngineError && thrown.byInput, `EngineError by input, got ${thrown}`);
  assert(String((thrown as Error).message).includes("sub-steps"), String(thrown));
});

Deno.test("item 16: values in the Slurm script are never run by the shell, at submission or in the jobs", async () => {
  const tmp = Deno.makeTempDirSync();
  const marker = `${tmp}/ran`;
  const evil = `g=0.05$(touch ${marker})\`touch ${marker}\``;
  const caseFile = new URL("explicit_partner.toml", dir).pathname;
  const script = `${tmp}/submit.sh`;
  const out = `${tmp}/o'ut $(touch ${marker})`;
  const made = await runOrdo([
    "sweep",
    caseFile,
    "--out",
    out,
    "--emit-array",
    script,
    "--shards",
    "2",
    "--set",
    evil,
  ]);
  assertEqual(made.code, 0, made.stderr);
  // A stand-in sbatch keeps each job script it is given; ORDO stands in for ordo and prints its arguments.
  const bin = `${tmp}/bin`;
  Deno.mkdirSync(bin);
  Deno.writeTextFileSync(
    `${bin}/sbatch`,
    `#!/usr/bin/env bash\nn=$(ls "${tmp}" | grep -c '^job-' || true)\ncat > "${tmp}/job-$n.sh"\necho 42\n`,
  );
  Deno.chmodSync(`${bin}/sbatch`, 0o755);
  const env = { PATH: `${bin}:${Deno.env.get("PATH")}`, ORDO: "printf [%s]\\n", SLURM_ARRAY_TASK_ID: "1" };
  const submit = await new Deno.Command("bash", { args: [script], env }).output();
  assert(submit.success, new TextDecoder().decode(submit.stderr));
  const jobs = [...Deno.readDirSync(tmp)].filter((e) => e.name.startsWith("job-")).map((e) =>
    `${tmp}/${e.name}`
  );
  assertEqual(jobs.length, 2, "an array job and a merge job");
  const printed: string[] = [];
  for (const job of jobs) {
    const run = await new Deno.Command("bash", { args: [job], env }).output();
    assert(run.success, new TextDecoder().decode(run.stderr));
    printed.push(new TextDecoder().decode(run.stdout));
  }
  const args = printed.join("");
  assert(args.includes(`[${evil}]`), `the --set value arrives as written: ${args}`);
  assert(args.includes(`[${out}]`), `the folder arrives as written: ${args}`);
  assert(args.includes("[1/2]"), `the shard comes from SLURM_ARRAY_TASK_ID: ${args}`);
  let ran = true;
  try {
    Deno.statSync(marker);
  } catch {
    ran = false;
  }
  assert(!ran, "nothing in a value was run");
});

Deno.test("item 11: a case file longer than the limit (10 million targets) and /dev/zero are refused unread", async () => {
  const big = Deno.makeTempFileSync({ suffix: ".toml" });
  const head = Deno.readTextFileSync(new URL("explicit_partner.toml", dir)).replace(/\[series\][^]*$/, "");
  const file = Deno.openSync(big, { write: true });
  const encoder = new TextEncoder();
  file.writeSync(encoder.encode(head + "[series]\norder = 2\ntargets = ["));
  const chunk = encoder.encode('"g", '.repeat(100_000));
  for (let k = 0; k < 100; k++) file.writeSync(chunk); // 10⁷ targets, 50 MB
  file.writeSync(encoder.encode('"e"]\n'));
  file.close();
  for (const path of [big, "/dev/zero"]) {
    const started = performance.now();
    const { code, stderr } = await runOrdo(["run", path, "--quiet"]);
    assertEqual(code, 2, stderr);
    assert(stderr.includes("is longer than the 16 MiB a case file may be"), stderr);
    assert(performance.now() - started < 20_000, "refused without reading on");
  }
});

Deno.test("items 13-15: markup is escaped in both reports, terminal escapes are not printed raw, CSV cells cannot run", async () => {
  const file = new URL("injection.toml", dir).pathname;
  const out = Deno.makeTempDirSync();
  const printed: string[] = [];
  for (
    const args of [["run", file, "--out", `${out}/run`], ["sweep", file, "--out", `${out}/sweep`], [
      "check",
      file,
    ]]
  ) {
    const { code, stdout, stderr } = await runOrdo([...args, "--quiet"]);
    assert(code === 0 || code === 1, `${args[0]}: ${stderr}`);
    printed.push(stdout, stderr);
  }
  // deno-lint-ignore no-control-regex
  const control = /[\x00-\x08\x0b-\x1f\x7f]/;
  for (const text of printed) assert(!control.test(text), `no raw control character: ${text}`);
  assert(printed.join("").includes("\\x1b]0;pwned"), "escapes are shown, written out");
  for (const report of [`${out}/run/report.html`, `${out}/sweep/report.html`]) {
    const html = Deno.readTextFileSync(report);
    assert(!html.includes("<script>alert"), `${report}: the title's markup is escaped`);
    assert(html.includes("&lt;script&gt;alert("), `${report}: and shown as text`);
  }
  const csv = Deno.readTextFileSync(`${out}/run/populations.csv`).split("\n");
  for (const label of ['"\'=HYPERLINK(""http://x"")"', '"\'@SUM(1)"', '"\'+1"', '"\'-2"']) {
    assert(csv.some((line) => line.split(",")[1] === label || line.includes(`,${label},`)), `cell ${label}`);
  }
  const formulaLike = (cell: string) => /^[=+\-@]/.test(cell) && !Number.isFinite(Number(cell));
  assert(!csv.some((line) => line.split(",").some(formulaLike)), "no cell but a number begins with = + - @");
});

Deno.test("item 17: the ordo task runs without -A, net, run or all of env, and run, sweep and check work with its flags", async () => {
  const root = new URL("../", import.meta.url);
  const tasks = JSON.parse(Deno.readTextFileSync(new URL("deno.json", root))).tasks;
  for (const name of ["ordo", "demo"]) {
    const command: string = tasks[name].command;
    assert(!/(^|\s)(-A|--allow-all|--allow-net|--allow-run|--allow-ffi)(\s|=|$)/.test(command), command);
    // the environment only by name (INIT_CWD: the folder the task was called from), never all of it
    assert(!/(^|\s)--allow-env(\s|$)/.test(command), command);
  }
  const flags = (tasks.ordo.command as string).split(/\s+/).filter((w) => w.startsWith("--allow-"));
  const out = Deno.makeTempDirSync();
  const cases = new URL("cases/", root).pathname;
  for (
    const args of [
      ["run", `${cases}leaky_transmon.toml`, "--out", `${out}/run`],
      ["sweep", `${cases}weak_drive_check.toml`, "--out", `${out}/sweep`, "--workers", "2"],
      ["check", `${cases}weak_drive_check.toml`],
      ["inspect", `${cases}two_level.toml`],
    ]
  ) {
    const main = new URL("cli/main.ts", root).pathname;
    const r = await new Deno.Command(Deno.execPath(), { args: ["run", ...flags, main, ...args] }).output();
    const stderr = new TextDecoder().decode(r.stderr);
    assert(
      r.code === 0 || (args[0] === "check" && r.code === 1),
      `${args[0]} with ${flags.join(" ")}: ${stderr}`,
    );
    assert(!/NotCapable|Requires .* access/.test(stderr), stderr);
  }
});

Deno.test("item 12: an eigensolver that cannot converge on a pathological matrix is a refusal by input (exit 2)", async () => {
  const engine = await testEngine();
  const h0 = new Float64Array([0, 0, 1e300, 0, 1e300, 0, Infinity, 0]);
  const v = new Float64Array([0, 0, 1, 0, 1, 0, 0, 0]);
  let thrown: unknown;
  try {
    solve(engine, constantModel(h0, v, new Float64Array([1, 0, 0, 0]), 1, 3, 2));
  } catch (e) {
    thrown = e;
  }
  assert(thrown instanceof EngineError && thrown.byInput, `EngineError by input, got ${thrown}`);
});

Deno.test("paths are the caller's: `deno task ordo` run from another folder reads and writes there", async () => {
  const root = new URL("../", import.meta.url).pathname;
  const elsewhere = Deno.makeTempDirSync();
  Deno.copyFileSync(`${root}cases/two_level.toml`, `${elsewhere}/mine.toml`);
  // As from a shell: no INIT_CWD inherited from the task running these tests (deno task keeps one it is given).
  const env = Deno.env.toObject();
  delete env.INIT_CWD;
  const args = [
    "task",
    "--quiet",
    "--config",
    `${root}deno.json`,
    "ordo",
    "run",
    "mine.toml",
    "--out",
    "out",
  ];
  const r = await new Deno.Command(Deno.execPath(), {
    args: [...args, "--quiet"],
    cwd: elsewhere,
    clearEnv: true,
    env,
  })
    .output();
  assert(r.success, new TextDecoder().decode(r.stderr));
  assert(Deno.statSync(`${elsewhere}/out/result.json`).isFile, "the report is written where the user is");
  const help = await new Deno.Command(Deno.execPath(), {
    args: ["run", "--allow-read", `${root}cli/main.ts`, "sweep", "--help"],
  }).output();
  const text = new TextDecoder().decode(help.stdout);
  assert(help.success && text.includes("usage: ordo sweep") && text.includes("--resume"), text);
});
