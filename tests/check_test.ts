// `ordo check` for CI: --json validated against a schema, region statements true for any shape (a diagonal
// region gets no interval), "tracks order n" only when that order is within the formula's tolerance, and --out.
import { z } from "zod";
import { XMLValidator } from "fast-xml-parser";
import { assert, assertEqual } from "./assert.ts";
import { runOrdo, tempCase } from "./helpers.ts";
import { twoLevel } from "./engine_helpers.ts";

// Rabi's closed form for H = δ|e⟩⟨e| + g(|e⟩⟨g| + h.c.) from |g⟩ (Rabi 1937; NUMERICS.md):
// P_e = 4g²/Ω² sin²(Ωt/2), Ω = √(δ² + 4g²).
const RABI = "4*g^2/(delta^2 + 4*g^2) * sin(sqrt(delta^2 + 4*g^2)*t/2)^2";

/** Two extra params a, b swept over 1, 2, 3 that H does not use; `formula` may use them to pick a region. */
function regionCase(formula: string): string {
  return twoLevel(1, 0.01, 30, { samples: 2, order: 3 }).replace("[levels]", "a = 1\nb = 1\n[levels]") + `
[sweep]
a = { values = [1, 2, 3] }
b = { values = [1, 2, 3] }

[[approx]]
name = "picked"
target = "e"
formula = "${formula}"
rel = 1e-8
`;
}

const pointSchema = z.object({
  values: z.array(z.number()),
  value: z.number(),
  exact: z.number(),
  error: z.number().nonnegative(),
  allowed: z.number().nonnegative(),
  pass: z.boolean(),
}).strict();
const checkSchema = z.object({
  ordo: z.string(),
  file: z.string(),
  axes: z.array(z.object({ name: z.string(), values: z.array(z.number()) }).strict()),
  pass: z.boolean(),
  approximations: z.array(
    z.object({
      name: z.string(),
      target: z.string(),
      formula: z.string(),
      tolerance: z.object({ abs: z.number().nullable(), rel: z.number().nullable() }).strict(),
      pass: z.boolean(),
      passed: z.number().int(),
      total: z.number().int(),
      worst: pointSchema,
      region: z.object({
        kind: z.enum(["everywhere", "nowhere", "box", "other"]),
        box: z.array(z.object({ axis: z.string(), from: z.number(), to: z.number() }).strict()).optional(),
      }).strict(),
      tracks_order: z.object({ order: z.number().int(), deviation: z.number() }).strict().nullable(),
      points: z.array(pointSchema),
    }).strict(),
  ),
}).strict();

Deno.test("check --json gives every approximation and every point, and matches its schema", async () => {
  const file = new URL("../cases/weak_drive_check.toml", import.meta.url).pathname;
  const { code, stdout } = await runOrdo(["check", file, "--json", "--quiet"]);
  assertEqual(code, 1, "the sinc² formula fails somewhere");
  const report = checkSchema.parse(JSON.parse(stdout));
  assertEqual(report.approximations.length, 2);
  for (const a of report.approximations) {
    assertEqual(a.points.length, 84);
    assertEqual(a.passed, a.points.filter((p) => p.pass).length);
    for (const p of a.points) assertEqual(p.pass, p.error <= p.allowed);
  }
});

Deno.test("a diagonal region is not described by intervals; a box is, exactly", async () => {
  const diagonal = await runOrdo(["check", tempCase(regionCase(`a == b ? ${RABI} : 5`)), "--quiet"]);
  assertEqual(diagonal.code, 1, diagonal.stdout);
  assert(
    diagonal.stdout.includes("holds at 3 of 9 points") && diagonal.stdout.includes("not a box"),
    diagonal.stdout,
  );
  assert(!diagonal.stdout.includes("∈") && !diagonal.stdout.includes("holds exactly on"), diagonal.stdout);
  const box = await runOrdo(["check", tempCase(regionCase(`a <= 2 and b >= 2 ? ${RABI} : 5`)), "--quiet"]);
  assert(
    box.stdout.includes("holds exactly on a ∈ [1, 2], b ∈ [2, 3] (and nowhere else on the grid)"),
    box.stdout,
  );
  const json = checkSchema.parse(
    JSON.parse(
      (await runOrdo(["check", tempCase(regionCase(`a == b ? ${RABI} : 5`)), "--json", "--quiet"])).stdout,
    ),
  );
  assertEqual(json.approximations[0]!.region.kind, "other");
});

Deno.test("tracks order n only when that order is within the formula's tolerance everywhere", async () => {
  // The exact Rabi formula follows no finite order within 1e-8 relative at g = 0.2 (the series is truncated at
  // order 3); the first-order sinc² formula is the first-order partial sum itself (to round-off).
  const text = twoLevel(1, 0.2, 30, { samples: 2, order: 3 }) + `
[[approx]]
name = "Rabi"
target = "e"
formula = "${RABI}"
rel = 1e-8

[[approx]]
name = "first order"
target = "e"
formula = "4*g^2*sin(delta*t/2)^2/delta^2"
rel = 1e-8
`;
  const { stdout } = await runOrdo(["check", tempCase(text), "--quiet"]);
  const [rabi, first] = stdout.split(/\n(?=PASS|FAIL)/).slice(1);
  assert(rabi!.includes("tracks no single Dyson order"), rabi);
  assert(first!.includes("tracks Dyson order 1 (within its tolerance"), first);
});

Deno.test("check --out writes a points CSV (header first) and a report with a pass/fail map", async () => {
  const out = Deno.makeTempDirSync();
  const file = new URL("../cases/weak_drive_check.toml", import.meta.url).pathname;
  const { stderr } = await runOrdo(["check", file, "--out", out, "--quiet"]);
  const csv = Deno.readTextFileSync(`${out}/points.csv`).trim().split("\n");
  assertEqual(csv[0], "approximation,g,delta,formula,exact,error,allowed,pass", stderr);
  assertEqual(csv.length, 1 + 2 * 84);
  const html = Deno.readTextFileSync(`${out}/report.html`);
  const svgs = html.match(/<svg[\s\S]*?<\/svg>/g) ?? [];
  assertEqual(svgs.length, 2, "one map per formula");
  for (const svg of svgs) assertEqual(XMLValidator.validate(svg), true);
});
