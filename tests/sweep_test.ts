// Sweeps: grid construction, CSV rows against single runs, resume after a hard
// kill, shards and merge, λ sweeps that reuse the series, and `ordo check`.
import { assert, assertDeepEqual, assertEqual, assertThrows } from "./assert.ts";
import { assertClose, runOrdo, tempCase } from "./helpers.ts";
import { twoLevel } from "./engine_helpers.ts";
import { axisValues, buildGrid, parseVary, pointValues, shardPoints } from "../cli/sweep/grid.ts";
import { parseCase } from "../cli/case/parse.ts";
import { CaseError, UsageError } from "../cli/case/errors.ts";

const MAIN = new URL("../cli/main.ts", import.meta.url).pathname;

/** A driven two-level case with a 2-parameter sweep (g × delta). */
function sweepCase(gCount = 6, dCount = 5, steps = 400): string {
  return twoLevel(1, 0.05, 20, { coef: "gauss(t, 10, 3)", steps, samples: 3, order: 4 }) + `
[sweep]
g = { from = 0.01, to = 0.3, count = ${gCount}, scale = "log" }
delta = { from = 0.5, to = 2.0, count = ${dCount} }
`;
}

Deno.test("axisValues() and buildGrid() make linear, log and listed axes and their outer product", () => {
  assertDeepEqual(axisValues(0, 1, 5, "linear"), [0, 0.25, 0.5, 0.75, 1]);
  const log = axisValues(0.01, 1, 3, "log");
  assertClose(log[1]!, 0.1, { rel: 1e-15 });
  assertEqual(log[2], 1, "ends are exact");
  assertDeepEqual(parseVary("g=1:2:3").values, [1, 1.5, 2]);
  assertThrows(() => parseVary("g=1:2"), UsageError, "name=from:to:count");
  const spec = parseCase(sweepCase() + "\n", "x.toml").spec;
  const grid = buildGrid({ ...spec, sweep: { ...spec.sweep, delta: { values: [3, 1] } } });
  assertEqual(grid.size, 12);
  // first axis slowest
  assertDeepEqual(pointValues(grid, 0), [0.01, 3]);
  assertDeepEqual(pointValues(grid, 1), [0.01, 1]);
  assertClose(pointValues(grid, 2)[0]!, 0.01 * 30 ** (1 / 5), { rel: 1e-15 });
  // shards partition the grid
  const all = [1, 2, 3].flatMap((k) => shardPoints(grid, k, 3)).sort((a, b) => a - b);
  assertDeepEqual(all, [...Array(12).keys()]);
  assertThrows(() => buildGrid(spec, [parseVary("nope=1:2:3")]), CaseError, 'cannot sweep "nope"');
});

Deno.test("sweep rows equal single `ordo run` results at the same points", async () => {
  const file = tempCase(sweepCase(3, 2));
  const dir = Deno.makeTempDirSync();
  const { code, stderr } = await runOrdo(["sweep", file, "--out", dir, "--workers", "2", "--quiet"]);
  assertEqual(code, 0, stderr);
  const lines = Deno.readTextFileSync(`${dir}/points.csv`).trim().split("\n");
  const header = lines[0]!.split(",");
  assertDeepEqual(header.slice(0, 4), ["g", "delta", "exact:g", "order0:g"]);
  assertEqual(lines.length - 1, 6);
  for (const line of lines.slice(1)) {
    const cells = line.split(",");
    const { stdout } = await runOrdo([
      "run",
      file,
      "--json",
      "--quiet",
      "--set",
      `g=${cells[0]}`,
      "--set",
      `delta=${cells[1]}`,
    ]);
    const r = JSON.parse(stdout);
    for (const label of ["g", "e"]) {
      assertEqual(Number(cells[header.indexOf(`exact:${label}`)]), r.final.exact[label], `exact:${label}`);
      for (let n = 0; n <= 4; n++) {
        assertEqual(
          Number(cells[header.indexOf(`order${n}:${label}`)]),
          r.final.series[n][label],
          `order${n}:${label}`,
        );
      }
      const minOrder = r.analysis.targets.find((t: { label: string }) => t.label === label).min_order;
      assertEqual(cells[header.indexOf(`min_order:${label}`)], minOrder === null ? "" : String(minOrder));
    }
  }
  assert(Deno.readTextFileSync(`${dir}/report.html`).includes("<svg"), "the sweep writes its map report");
});

Deno.test("a sweep killed with SIGKILL and resumed loses nothing and duplicates nothing", async () => {
  const file = tempCase(sweepCase(12, 10, 6000)); // 120 points, a few ms each
  const reference = Deno.makeTempDirSync(), killed = Deno.makeTempDirSync();
  assertEqual((await runOrdo(["sweep", file, "--out", reference, "--workers", "2", "--quiet"])).code, 0);
  const child = new Deno.Command(Deno.execPath(), {
    args: ["run", "-A", MAIN, "sweep", file, "--out", killed, "--workers", "1", "--quiet"],
    stdout: "null",
    stderr: "null",
  }).spawn();
  // Wait until some but not all points are on disk, then kill without warning.
  let rows = 0;
  for (let wait = 0; wait < 600 && rows < 15; wait++) {
    await new Promise((r) => setTimeout(r, 50));
    try {
      rows = Deno.readTextFileSync(`${killed}/points.csv`).split("\n").length - 2;
    } catch { /* not yet */ }
  }
  child.kill("SIGKILL");
  await child.status;
  const partial = Deno.readTextFileSync(`${killed}/points.csv`).split("\n").filter(Boolean).length - 1;
  assert(partial >= 15 && partial < 120, `killed mid-way (${partial} of 120 points on disk)`);
  // Without --resume the folder is refused; with it the sweep completes.
  assertEqual((await runOrdo(["sweep", file, "--out", killed, "--quiet"])).code, 2);
  const { code, stdout } = await runOrdo(["sweep", file, "--out", killed, "--resume", "--quiet"]);
  assertEqual(code, 0);
  assert(stdout.includes(`${partial} were already done`), stdout);
  assertEqual(
    Deno.readTextFileSync(`${killed}/points.csv`),
    Deno.readTextFileSync(`${reference}/points.csv`),
  );
});

Deno.test("resume refuses a folder whose case or grid changed", async () => {
  const dir = Deno.makeTempDirSync();
  assertEqual((await runOrdo(["sweep", tempCase(sweepCase(2, 2)), "--out", dir, "--quiet"])).code, 0);
  const { code, stderr } = await runOrdo([
    "sweep",
    tempCase(sweepCase(3, 2)),
    "--out",
    dir,
    "--resume",
    "--quiet",
  ]);
  assertEqual(code, 2);
  assert(stderr.includes("another case or grid"), stderr);
});

Deno.test("shards merged equal the unsharded sweep; a missing shard is named", async () => {
  const file = tempCase(sweepCase(4, 3));
  const whole = Deno.makeTempDirSync(), parts = Deno.makeTempDirSync();
  assertEqual((await runOrdo(["sweep", file, "--out", whole, "--quiet"])).code, 0);
  for (const k of [1, 2]) {
    assertEqual((await runOrdo(["sweep", file, "--out", parts, "--shard", `${k}/3`, "--quiet"])).code, 0);
  }
  const missing = await runOrdo(["sweep", "--merge", parts]);
  assertEqual(missing.code, 2);
  assert(missing.stderr.includes("4 of 12 points are missing (from shard 3/3)"), missing.stderr);
  assertEqual((await runOrdo(["sweep", file, "--out", parts, "--shard", "3/3", "--quiet"])).code, 0);
  const merged = await runOrdo(["sweep", "--merge", parts]);
  assertEqual(merged.code, 0, merged.stderr);
  assertEqual(Deno.readTextFileSync(`${parts}/points.csv`), Deno.readTextFileSync(`${whole}/points.csv`));
});

Deno.test("--emit-array writes a Slurm array script with a dependent merge job", async () => {
  const dir = Deno.makeTempDirSync();
  const script = `${dir}/submit.sh`;
  const { code } = await runOrdo([
    "sweep",
    tempCase(sweepCase()),
    "--out",
    `${dir}/sweep`,
    "--emit-array",
    script,
    "--shards",
    "8",
    "--vary",
    "g=0.01:0.1:4",
  ]);
  assertEqual(code, 0);
  const text = Deno.readTextFileSync(script);
  assert(
    text.includes("--array=1-8") && text.includes("--dependency=afterok") && text.includes("--merge"),
    text,
  );
  assert(
    text.includes('--shard "$SLURM_ARRAY_TASK_ID/8"') && text.includes("'--vary' 'g=0.01:0.1:4'"),
    text,
  );
  const syntax = await new Deno.Command("bash", { args: ["-n", script] }).output();
  assert(syntax.success, "the script is valid bash");
  // The jobs start in another folder: a relative --out is written as an absolute path.
  const relative = await runOrdo([
    "sweep",
    tempCase(sweepCase()),
    "--out",
    "rel/out",
    "--emit-array",
    script,
    "--shards",
    "2",
  ]);
  assertEqual(relative.code, 0, relative.stderr);
  assert(Deno.readTextFileSync(script).includes(`'${Deno.cwd()}/rel/out'`), "absolute folder in the script");
});

Deno.test("a λ-only sweep reuses the series and equals per-point runs", async () => {
  const file = tempCase(
    twoLevel(1, 0.1, 20, { coef: "gauss(t, 10, 3)", steps: 400, samples: 3, order: 5 }) + `
[sweep]
strength = { values = [0.25, 0.5, 1.0, 2.0] }
`,
  );
  const dir = Deno.makeTempDirSync();
  const { code, stdout } = await runOrdo(["sweep", file, "--out", dir, "--quiet"]);
  assertEqual(code, 0);
  assert(stdout.includes("series reused"), stdout);
  const lines = Deno.readTextFileSync(`${dir}/points.csv`).trim().split("\n");
  const header = lines[0]!.split(",");
  for (const line of lines.slice(1)) {
    const cells = line.split(",");
    // The same point as its own run: λ written into [series] strength.
    const text = Deno.readTextFileSync(file).replace("order = 5", `order = 5\nstrength = ${cells[0]}`)
      .replace(/\[sweep\][\s\S]*$/, "");
    const r = JSON.parse((await runOrdo(["run", tempCase(text), "--json", "--quiet"])).stdout);
    assertClose(
      Number(cells[header.indexOf("exact:e")]),
      r.final.exact.e,
      { abs: 1e-15 },
      `exact at λ=${cells[0]}`,
    );
    for (let n = 0; n <= 5; n++) {
      assertClose(
        Number(cells[header.indexOf(`order${n}:e`)]),
        r.final.series[n].e,
        { abs: 1e-15 },
        `order ${n} at λ=${cells[0]}`,
      );
    }
  }
});

// The sinc² first-order formula 4g²sin²(δt/2)/δ² (time-dependent perturbation theory for a constant
// coupling switched on at t = 0) holds where g ≪ δ and fails where g ~ δ.
function checkCase(gFrom: number, gTo: number): string {
  return twoLevel(1, 0.01, 30, { samples: 2, order: 4 }) + `
[sweep]
g = { from = ${gFrom}, to = ${gTo}, count = 4, scale = "log" }
delta = { from = 0.8, to = 1.6, count = 3 }

[[approx]]
name = "first-order sinc²"
target = "e"
formula = "4*g^2*sin(delta*t/2)^2/delta^2"
rel = 0.01
abs = 1e-7

[[approx]]
name = "Rabi formula"
target = "e"
formula = "4*g^2/(delta^2 + 4*g^2) * sin(sqrt(delta^2 + 4*g^2)*t/2)^2"
rel = 1e-8
`;
}

Deno.test("check passes the sinc² formula where g ≪ δ and the exact Rabi formula everywhere", async () => {
  const { code, stdout } = await runOrdo(["check", tempCase(checkCase(0.0005, 0.005)), "--quiet"]);
  assertEqual(code, 0, stdout);
  assertEqual(stdout.match(/^PASS/gm)?.length, 2, stdout);
  assert(stdout.includes("tracks Dyson order"), stdout);
});

Deno.test("check fails the sinc² formula where g ~ δ, with the worst point, and exits 1", async () => {
  const { code, stdout } = await runOrdo(["check", tempCase(checkCase(0.05, 0.8)), "--quiet"]);
  assertEqual(code, 1);
  assert(/^FAIL {2}first-order sinc²/m.test(stdout), stdout);
  assert(/^PASS {2}Rabi formula/m.test(stdout), stdout);
  // The worst point lies where the coupling is no longer small against the detuning.
  const worstG = Number(/FAIL {2}first-order sinc²[\s\S]*?worst point at g = ([\d.e-]+)/.exec(stdout)?.[1]);
  assert(worstG >= 0.1, `worst at g = ${worstG}: ${stdout}`);
});
