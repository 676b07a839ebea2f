// The hostile round on sweep folders and output paths (items 6–9 and 12): finished rows are never
// overwritten, damaged rows are recomputed, one sweep writes a file at a time, a full disk is exit 3 with
// nothing lost, and bad output paths are exit 2 before any computation.
import { assert, assertEqual } from "./assert.ts";
import { runOrdo, tempCase } from "./helpers.ts";
import { twoLevel } from "./engine_helpers.ts";

const MAIN = new URL("../cli/main.ts", import.meta.url).pathname;

function sweepCase(gCount = 3, dCount = 2): string {
  return twoLevel(1, 0.05, 20, { coef: "gauss(t, 10, 3)", steps: 200, samples: 3, order: 3 }) + `
[sweep]
g = { from = 0.01, to = 0.3, count = ${gCount}, scale = "log" }
delta = { from = 0.5, to = 2.0, count = ${dCount} }
`;
}

/** A finished sweep of `text` in a new folder: the folder and its points.csv. */
async function finished(text: string): Promise<{ dir: string; csv: string }> {
  const dir = Deno.makeTempDirSync();
  const { code, stderr } = await runOrdo(["sweep", tempCase(text), "--out", dir, "--quiet"]);
  assertEqual(code, 0, stderr);
  return { dir, csv: Deno.readTextFileSync(`${dir}/points.csv`) };
}

Deno.test("item 6: a folder whose sweep.json is missing, empty or damaged is refused and its rows kept", async () => {
  const text = sweepCase();
  const file = tempCase(text);
  const manifests: [string, string | undefined][] = [
    ["missing", undefined],
    ["empty", ""],
    ["not JSON", "{ordo"],
    ["another shape", '{"ordo": "0.1.0"}'],
  ];
  for (const [what, manifest] of manifests) {
    const { dir, csv } = await finished(text);
    if (manifest === undefined) Deno.removeSync(`${dir}/sweep.json`);
    else Deno.writeTextFileSync(`${dir}/sweep.json`, manifest);
    for (const resume of [[], ["--resume"]]) {
      const { code, stderr } = await runOrdo(["sweep", file, "--out", dir, "--quiet", ...resume]);
      assertEqual(code, 2, `${what} ${resume}: ${stderr}`);
      assert(stderr.includes("nothing was overwritten"), stderr);
      assertEqual(Deno.readTextFileSync(`${dir}/points.csv`), csv, `${what}: the rows are kept`);
    }
  }
  // A foreign points.csv in an otherwise empty folder, and an empty --out.
  const foreign = Deno.makeTempDirSync();
  Deno.writeTextFileSync(`${foreign}/points.csv`, "x,y\n1,2\n");
  assertEqual((await runOrdo(["sweep", file, "--out", foreign, "--quiet"])).code, 2);
  assertEqual(Deno.readTextFileSync(`${foreign}/points.csv`), "x,y\n1,2\n");
  const empty = await runOrdo(["sweep", file, "--out", "", "--quiet"]);
  assertEqual(empty.code, 2);
  assert(empty.stderr.includes("--out needs a folder name"), empty.stderr);
});

Deno.test("item 7: resume drops damaged, duplicated, off-grid and cut rows, recomputes them, and ends identical", async () => {
  const text = sweepCase(4, 3);
  const { csv: reference } = await finished(text);
  const lines = reference.trimEnd().split("\n");
  const damagedRows = [
    lines[0]!,
    lines[1]!,
    "garbage,line,here",
    lines[2]!,
    lines[2]!, // duplicated
    "9.75" + lines[3]!.slice(lines[3]!.indexOf(",")), // a key off the grid
    lines[4]!.slice(0, 12), // cut short in the middle of the file
    lines[5]!.replace(/,[^,]+$/, ",x"), // a cell that is not a number
    lines[6]!,
  ];
  for (const ending of ["\n", "\r\n"]) {
    const dir = Deno.makeTempDirSync();
    const file = tempCase(text);
    assertEqual((await runOrdo(["sweep", file, "--out", dir, "--quiet"])).code, 0);
    Deno.writeTextFileSync(`${dir}/points.csv`, damagedRows.join(ending) + ending);
    const { code, stdout, stderr } = await runOrdo(["sweep", file, "--out", dir, "--resume"]);
    assertEqual(code, 0, stderr);
    assert(stderr.includes("dropped 5 damaged rows"), stderr);
    assert(stdout.includes("3 were already done; 12 of 12"), stdout);
    assertEqual(Deno.readTextFileSync(`${dir}/points.csv`), reference, `line ends ${JSON.stringify(ending)}`);
  }
});

Deno.test("item 8: a second sweep on a locked points file is refused; a stale lock is taken over", async () => {
  const text = sweepCase();
  const file = tempCase(text);
  const dir = Deno.makeTempDirSync();
  Deno.writeTextFileSync(`${dir}/points.csv.lock`, JSON.stringify({ pid: Deno.pid, host: Deno.hostname() }));
  const locked = await runOrdo(["sweep", file, "--out", dir, "--quiet"]);
  assertEqual(locked.code, 2);
  assert(locked.stderr.includes(`another sweep (process ${Deno.pid}`), locked.stderr);
  // A process id that cannot exist (above Linux's pid_max) left the lock: it is stale.
  Deno.writeTextFileSync(`${dir}/points.csv.lock`, JSON.stringify({ pid: 2 ** 30, host: Deno.hostname() }));
  const stale = await runOrdo(["sweep", file, "--out", dir, "--quiet"]);
  assertEqual(stale.code, 0, stale.stderr);
  let lockLeft = true;
  try {
    Deno.statSync(`${dir}/points.csv.lock`);
  } catch {
    lockLeft = false;
  }
  assert(!lockLeft, "the lock is released when the sweep ends");
});

/** Runs `mount` (as root on Linux); false where that is not allowed. */
async function mount(args: string[]): Promise<boolean> {
  try {
    return (await new Deno.Command("mount", { args, stdout: "null", stderr: "null" }).output()).success;
  } catch {
    return false;
  }
}

Deno.test("item 9: a full disk during a sweep is exit 3 with a message, no trace, no stray file; --resume finishes", async () => {
  const text = sweepCase(12, 10);
  const { csv: reference } = await finished(text);
  const dir = Deno.makeTempDirSync();
  if (!await mount(["-t", "tmpfs", "-o", "size=12k", "tmpfs", dir])) {
    console.log("skipped: cannot mount a small tmpfs here (needs root on Linux)");
    return;
  }
  try {
    const file = tempCase(text);
    const full = await new Deno.Command(Deno.execPath(), {
      args: ["run", "-A", MAIN, "sweep", file, "--out", `${dir}/s`, "--quiet", "--workers", "1"],
    }).output();
    const stderr = new TextDecoder().decode(full.stderr);
    assertEqual(full.code, 3, stderr);
    assert(/No space left on device/.test(stderr) && stderr.includes("--resume"), stderr);
    assert(!/\n\s+at /.test(stderr), `no stack trace: ${stderr}`);
    assert([...Deno.readDirSync(`${dir}/s`)].every((e) => !e.name.endsWith(".tmp")), "no stray .tmp file");
    assert(await mount(["-o", "remount,size=4m", dir]), "remount larger");
    const resumed = await runOrdo(["sweep", file, "--out", `${dir}/s`, "--resume", "--quiet"]);
    assertEqual(resumed.code, 0, resumed.stderr);
    assertEqual(Deno.readTextFileSync(`${dir}/s/points.csv`), reference);
  } finally {
    await new Deno.Command("umount", { args: ["-l", dir] }).output();
  }
});

Deno.test("item 12: bad output paths are exit 2 with what to fix, and run checks --out before computing", async () => {
  const file = tempCase(sweepCase());
  const aFile = Deno.makeTempFileSync();
  const run = await runOrdo(["run", file, "--out", `${aFile}/sub`, "--quiet"]);
  assertEqual(run.code, 2, run.stderr);
  assertEqual(run.stdout, "", "nothing computed or printed before the refusal");
  assert(run.stderr.includes("cannot make this folder"), run.stderr);
  const missing = `${Deno.makeTempDirSync()}/no/such/folder`;
  const init = await runOrdo(["init", `${missing}/case`]);
  assertEqual(init.code, 2, init.stderr);
  assert(init.stderr.includes("does not exist"), init.stderr);
  const emit = await runOrdo([
    "sweep",
    file,
    "--out",
    "x",
    "--emit-array",
    `${missing}/s.sh`,
    "--shards",
    "2",
  ]);
  assertEqual(emit.code, 2, emit.stderr);
  const example = await runOrdo(["init", `${Deno.makeTempDirSync()}/c`, "--example", "constructor"]);
  assertEqual(example.code, 2, example.stderr);
  const merge = Deno.makeTempDirSync();
  Deno.writeTextFileSync(`${merge}/sweep.json`, '{"axes": 3}');
  const merged = await runOrdo(["sweep", "--merge", merge]);
  assertEqual(merged.code, 2, merged.stderr);
  assert(merged.stderr.includes("is damaged"), merged.stderr);
});
