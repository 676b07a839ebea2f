/**
 * Every example gives the numbers it gave before the operator notation was renamed: final populations of the
 * exact state and of every partial sum, against values recorded with the old notation
 * (tests/fixtures/examples_final_populations.json). This is a regression check of the rename only; the
 * physics of the examples is checked against published formulas in engine_physics_test.ts.
 */

import { assertDeepEqual } from "./assert.ts";
import { assertClose, testEngine } from "./helpers.ts";
import { readCase } from "../cli/case/parse.ts";
import { buildCase } from "../cli/case/build.ts";
import { runCase } from "../cli/analysis/outcome.ts";
import { runJson } from "../cli/analysis/result_json.ts";

const root = new URL("../", import.meta.url);
const recorded = JSON.parse(
  Deno.readTextFileSync(new URL("tests/fixtures/examples_final_populations.json", root)),
).examples as Record<string, { exact: Record<string, number>; series: Record<string, number>[] }>;

Deno.test("every example's final populations equal those recorded before the notation's rename, to 1e-12", async () => {
  // every example recorded then is still here (examples added since have no "before" to compare with)
  const present = new Set([...Deno.readDirSync(new URL("cases/", root))].map((e) => e.name));
  const files = Object.keys(recorded).sort();
  assertDeepEqual(files.filter((f) => present.has(f)), files);
  const engine = await testEngine();
  for (const file of files) {
    const built = buildCase(readCase(new URL(`cases/${file}`, root).pathname));
    const final = (runJson(runCase(engine, built)) as { final: typeof recorded[string] }).final;
    const before = recorded[file]!;
    for (const [label, p] of Object.entries(before.exact)) {
      assertClose(final.exact[label]!, p, { abs: 1e-12 }, `${file} exact ${label}`);
    }
    assertDeepEqual(final.series.length, before.series.length);
    before.series.forEach((order, n) => {
      for (const [label, p] of Object.entries(order)) {
        assertClose(final.series[n]![label]!, p, { abs: 1e-12 }, `${file} order ${n} ${label}`);
      }
    });
  }
});
