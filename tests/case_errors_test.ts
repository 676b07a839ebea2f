// Every class of bad input gets exit code 2 and a message naming the file,
// the key and (where the key is written) the line, with a fix; never a stack trace.
import { assert, assertEqual } from "./assert.ts";
import { runOrdo, tempCase } from "./helpers.ts";

const BASE = `title = "base"
[params]
delta = 1.0
g = 0.05
[levels]
names = ["g", "e"]
[unperturbed]
matrix = [[0, 0], [0, "delta"]]
[perturbation]
[[perturbation.terms]]
matrix = [[0, "g"], ["g", 0]]
coef = "1"
[start]
state = "g"
[grid]
t_start = 0
t_end = 30
steps = 400
samples = 101
[series]
order = 6
`;

/** Runs inspect on BASE with one replacement and checks code 2 and message parts. */
async function expectError(
  replace: [string | RegExp, string][],
  parts: (string | RegExp)[],
  command = "inspect",
) {
  let text = BASE;
  for (const [from, to] of replace) {
    const next = text.replace(from, to);
    assert(next !== text, `test setup: ${from} not found`);
    text = next;
  }
  const file = tempCase(text);
  const { code, stderr, stdout } = await runOrdo([command, file]);
  assertEqual(code, 2, `exit code (stderr: ${stderr})`);
  assertEqual(stdout, "", "nothing on stdout");
  assert(stderr.includes(file), `names the file: ${stderr}`);
  assert(!/\n\s+at /.test(stderr), `no stack trace: ${stderr}`);
  for (const part of parts) {
    assert(
      typeof part === "string" ? stderr.includes(part) : part.test(stderr),
      `message contains ${part}: ${stderr}`,
    );
  }
}

Deno.test("the base case is valid", async () => {
  const { code, stderr } = await runOrdo(["inspect", tempCase(BASE)]);
  assertEqual(code, 0, stderr);
});

Deno.test("inspect rejects an unknown start label, listing the labels", async () => {
  await expectError([['state = "g"', 'state = "x"']], [
    "start.state",
    'unknown label "x"',
    "labels are: g, e",
    ":14:",
  ]);
});

Deno.test("inspect rejects an unknown target label", async () => {
  await expectError([["order = 6", 'order = 6\ntargets = ["e", "q"]']], [
    "series.targets[1]",
    'unknown target label "q"',
  ]);
});

Deno.test("inspect rejects a matrix with the wrong number of rows", async () => {
  await expectError([[
    'matrix = [[0, 0], [0, "delta"]]',
    "matrix = [[0, 0, 0], [0, 1, 0], [0, 0, 1]]",
  ]], [
    "unperturbed.matrix",
    "has 3 rows, but the space has dimension 2",
    ":8:",
  ]);
});

Deno.test("inspect rejects a non-square matrix", async () => {
  await expectError([[
    'matrix = [[0, "g"], ["g", 0]]',
    'matrix = [[0, "g", 0], ["g", 0]]',
  ]], [
    "perturbation.terms[0].matrix[0]",
    "must be square",
  ]);
});

Deno.test("inspect rejects mismatched dimensions between levels and matrices", async () => {
  await expectError([['names = ["g", "e"]', 'names = ["g", "e", "f"]']], [
    "has 2 rows, but the space has dimension 3",
  ]);
});

Deno.test("inspect rejects a non-Hermitian perturbation, naming the largest |A−A†| and where", async () => {
  await expectError([[
    'matrix = [[0, "g"], ["g", 0]]',
    'matrix = [[0, "g"], [0.3, 0]]',
  ]], [
    "not Hermitian",
    "largest |A−A†| is 0.250 at (g, e)",
    "hc = true",
  ]);
});

Deno.test("inspect rejects a complex coefficient without its conjugate partner, at a time", async () => {
  await expectError([['coef = "1"', 'coef = "exp(-i*t)"']], [
    "not Hermitian",
    "at t = ",
  ]);
});

Deno.test("inspect rejects a NaN parameter, naming it", async () => {
  await expectError([["g = 0.05", 'g = "sqrt(-1) * 0 + log(0)"']], [
    "params.g",
    "param g evaluates to NaN",
  ]);
});

Deno.test("inspect rejects a coefficient that is not finite at some t, naming the time", async () => {
  await expectError([['coef = "1"', 'coef = "1/(t - 15)"']], [
    "perturbation.terms[0].coef",
    "at t = 15",
  ]);
});

Deno.test("inspect rejects t_end not after t_start", async () => {
  await expectError([["t_end = 30", "t_end = 0"]], [
    "grid.t_end",
    "t_end = 0 is not after t_start = 0",
    ":17:",
  ]);
});

Deno.test("inspect rejects steps below 1", async () => {
  await expectError([["steps = 400", "steps = 0"]], [
    "grid.steps",
    "at least 1 integrator step",
  ]);
});

Deno.test("inspect rejects a negative order", async () => {
  await expectError([["order = 6", "order = -1"]], [
    "series.order",
    "outside 0…40",
  ]);
});

Deno.test("inspect rejects an expression that does not parse", async () => {
  await expectError([['coef = "1"', 'coef = "2*(t"']], [
    "perturbation.terms[0].coef",
    "cannot parse the expression",
  ]);
});

Deno.test("inspect rejects an unknown name in an expression, listing the known names", async () => {
  await expectError([['coef = "1"', 'coef = "omega*t"']], [
    'unknown name "omega"',
    "use one of: delta, g, t, pi",
  ]);
});

Deno.test("inspect refuses a case whose memory estimate exceeds the limit, before allocating", async () => {
  await expectError([["samples = 101", "samples = 100000001"]], [
    "GiB",
    "recorded states",
    "record fewer samples",
  ]);
});

Deno.test("inspect rejects invalid TOML with its line", async () => {
  await expectError([["steps = 400", "steps = = 400"]], [
    "not valid TOML",
    ":18:",
  ]);
});

Deno.test("inspect rejects an unknown key, listing the known ones", async () => {
  await expectError([["t_end = 30", "t_end = 30\ntend = 5"]], [
    'unknown key "tend"',
    "known keys here: t_start, t_end, steps, accuracy, samples",
  ]);
});

Deno.test("inspect rejects a value of the wrong type", async () => {
  await expectError([["steps = 400", 'steps = "many"']], [
    "grid.steps",
    "expected number, got string",
  ]);
});

Deno.test("run reports a missing file with exit code 2", async () => {
  const { code, stderr } = await runOrdo(["run", "/nonexistent/case.toml"]);
  assertEqual(code, 2);
  assert(stderr.includes("no such file"), stderr);
});

Deno.test("unknown commands and flags exit with code 2", async () => {
  assertEqual((await runOrdo(["frobnicate"])).code, 2);
  assertEqual((await runOrdo(["run", "--bogus", "x.toml"])).code, 2);
  assertEqual(
    (await runOrdo(["run", tempCase(BASE), "--order", "two"])).code,
    2,
  );
});

Deno.test("ordo as a subprocess prints no stack trace for bad input", async () => {
  const file = tempCase(BASE.replace("steps = 400", "steps = 0"));
  const out = await new Deno.Command(Deno.execPath(), {
    args: [
      "run",
      "-A",
      new URL("../cli/main.ts", import.meta.url).pathname,
      "run",
      file,
    ],
    stdout: "piped",
    stderr: "piped",
  }).output();
  const stderr = new TextDecoder().decode(out.stderr);
  assertEqual(out.code, 2);
  assert(stderr.startsWith("ordo: "), stderr);
  assert(!stderr.includes("    at "), stderr);
});

Deno.test("inspect works on every example and reports the items a run depends on", async () => {
  for (const entry of Deno.readDirSync(new URL("../cases/", import.meta.url))) {
    const { code, stdout, stderr } = await runOrdo([
      "inspect",
      new URL(`../cases/${entry.name}`, import.meta.url).pathname,
    ]);
    assertEqual(code, 0, `${entry.name}: ${stderr}`);
    for (
      const item of [
        "dimension",
        "H0 spectrum",
        "Bohr frequencies coupled by V",
        "norm bound x = ∫‖λV(t)‖dt",
        "steps",
        "memory",
      ]
    ) {
      assert(stdout.includes(item), `${entry.name} reports ${item}:\n${stdout}`);
    }
    if (!stdout.includes("H is time-independent")) {
      // fixed steps get a suggestion; an accuracy-driven case shows the steps the controller takes
      assert(
        /suggested ≥ \d+ steps/.test(stdout) ||
          /chosen by the engine for accuracy [^:]+: \d+ steps/.test(stdout),
        `${entry.name}: step suggestion:\n${stdout}`,
      );
    }
    // Every drive (a time-dependent coefficient of V) is listed against the transitions, in the case's units.
    const text = Deno.readTextFileSync(new URL(`../cases/${entry.name}`, import.meta.url));
    const drive = /\[perturbation\][^[]*coef = "[^"]*\bt\b/.test(text);
    assertEqual(
      stdout.includes("drives     each coefficient's spectrum"),
      drive,
      `${entry.name}: drives listed`,
    );
    const unit = /^energy = "(\w+)"/m.exec(text)?.[1];
    if (drive && unit) assert(/↔ .* at [\d.e+-]+ GHz: /.test(stdout) || stdout.includes(` ${unit}:`), stdout);
  }
});

Deno.test("inspect refuses a space too large for the engine's memory, before building any matrix", async () => {
  const text = BASE.replace('names = ["g", "e"]', "count = 6000")
    .replace('matrix = [[0, 0], [0, "delta"]]', 'matrix = { entry = "row == col ? row : 0" }')
    .replace('matrix = [[0, "g"], ["g", 0]]', 'matrix = { entry = "g" }');
  // Assembling would evaluate 6000² entries into several 576 MB matrices; the refusal comes first.
  const { code, stderr } = await runOrdo(["inspect", tempCase(text)]);
  assertEqual(code, 2, stderr);
  assert(stderr.includes("32-bit WebAssembly memory") && stderr.includes("shrink the space"), stderr);
});

Deno.test("inspect refuses a time-independent case whose exact propagation would run for hours", async () => {
  await expectError([["t_end = 30", "t_end = 1e9"]], [
    "grid.t_end",
    "exact Taylor sub-steps",
    "shorten the window",
  ]);
});

Deno.test("init writes every built-in example, and each one inspects cleanly", async () => {
  const dir = Deno.makeTempDirSync();
  const names = Object.keys((await import("../cli/commands/init.ts")).EXAMPLES);
  assertEqual(
    names.length,
    [...Deno.readDirSync(new URL("../cases/", import.meta.url))].length,
    "one example per case file",
  );
  for (const name of names) {
    const written = await runOrdo(["init", `${dir}/${name}`, "--example", name]);
    assertEqual(written.code, 0, written.stderr);
    assertEqual((await runOrdo(["inspect", `${dir}/${name}.toml`])).code, 0, name);
  }
  assertEqual(
    (await runOrdo(["init", `${dir}/two-level`, "--example", "two-level"])).code,
    2,
    "no overwrite without --force",
  );
  assertEqual((await runOrdo(["init", `${dir}/x`, "--example", "nonesuch"])).code, 2);
});

Deno.test("inspect rejects a param named like a built-in (t, strength, a function)", async () => {
  for (const name of ["t", "strength", "cos", "I"]) {
    await expectError([["g = 0.05", `g = 0.05\n${name} = 1`]], [
      `params.${name}`,
      `"${name}" is a built-in name`,
    ]);
  }
});

Deno.test("a misspelt operator name in a case is exit 2 with the file, the line, the key and the notation's names", async () => {
  const composite = (op: string) =>
    BASE.replace('[levels]\nnames = ["g", "e"]', "[subsystems]\nq = { spin = 0.5 }\nm = { oscillator = 3 }")
      .replace('matrix = [[0, 0], [0, "delta"]]', 'op = "delta*Sz_q + n_m"')
      .replace('matrix = [[0, "g"], ["g", 0]]', `op = "${op}"`)
      .replace('state = "g"', 'state = "+1/2,0"');
  for (const op of ["g*sigmax(q)", "g*(a(m) + adag(m))", "g*num(m)", "g*dag(a_m)", "g*Sp_q"]) {
    const file = tempCase(composite(op));
    const { code, stderr } = await runOrdo(["inspect", file]);
    assertEqual(code, 2, `${op}: exit code (stderr: ${stderr})`);
    assert(stderr.includes(`${file}:12: perturbation.terms[0].op`), `${op}: file, line and key: ${stderr}`);
    assert(stderr.includes(`"${op}"`), `${op}: quotes what was written: ${stderr}`);
    assert(
      stderr.includes("Sx_q Sy_q Sz_q S+_q S-_q σx_q σy_q σz_q σ+_q σ-_q"),
      `${op}: lists names: ${stderr}`,
    );
  }
  const good = await runOrdo(["inspect", tempCase(composite("g*(σ+_q*a_m + σ-_q*a_m†)"))]);
  assertEqual(good.code, 0, good.stderr);
});
