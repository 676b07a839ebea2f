/**
 * Hostile inputs (tests/fixtures/hostile/): each file with what it must produce, in expect.json. Every one
 * ends in its stated exit code with no stack trace; exit-0 runs must give exact populations in [0, 1] that sum
 * to 1 over all labels.
 */

import { assert, assertDeepEqual, assertEqual } from "./assert.ts";
import { runOrdo } from "./helpers.ts";

const dir = new URL("fixtures/hostile/", import.meta.url);
const expectations = JSON.parse(Deno.readTextFileSync(new URL("expect.json", dir))).cases as Record<
  string,
  {
    item: number;
    args: string[];
    exit: number;
    stderr?: string[];
    json?: Record<string, unknown>;
    json_includes?: Record<string, string>;
  }
>;

/** The value at a dotted path ("analysis.targets.0.min_order"). */
function at(value: unknown, path: string): unknown {
  return path.split(".").reduce<unknown>((v, key) => (v as Record<string, unknown> | undefined)?.[key], value);
}

for (const [file, expected] of Object.entries(expectations)) {
  Deno.test(`hostile input ${file} (item ${expected.item}) ends in exit ${expected.exit} as stated`, async () => {
    const path = new URL(file, dir).pathname;
    const [command, ...flags] = expected.args;
    const { code, stdout, stderr } = await runOrdo([command!, path, ...flags, "--quiet"]);
    assertEqual(code, expected.exit, `exit code; stderr: ${stderr}`);
    assert(!/\n\s+at /.test(stderr), `no stack trace: ${stderr}`);
    for (const part of expected.stderr ?? []) assert(stderr.includes(part), `stderr has "${part}": ${stderr}`);
    if (!expected.json && !expected.json_includes) return;
    const result = JSON.parse(stdout);
    for (const [key, value] of Object.entries(expected.json ?? {})) assertDeepEqual(at(result, key), value, key);
    for (const [key, part] of Object.entries(expected.json_includes ?? {})) {
      assert(String(at(result, key)).includes(part), `${key} has "${part}": ${at(result, key)}`);
    }
    // Exact populations lie in [0, 1]; a truncated Dyson sum is not normalised, so its populations need only be
    // finite and non-negative.
    for (const p of Object.values(result.exact as Record<string, number[]>).flat()) {
      assert(p >= 0 && p <= 1 + 1e-12, `exact population ${p}`);
    }
    for (const populations of result.series as Record<string, number[]>[]) {
      for (const p of Object.values(populations).flat()) assert(Number.isFinite(p) && p >= 0, `partial sum ${p}`);
    }
    if (result.labels.length === result.basis.length) {
      const last = result.times.length - 1;
      const total = result.labels.reduce((s: number, l: string) => s + result.exact[l][last], 0);
      assert(Math.abs(total - 1) < 1e-8, `exact populations sum to ${total}`);
    }
  });
}
