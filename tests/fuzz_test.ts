/**
 * Fuzzing the case language and the engine with mutated examples (fast-check, fixed seeds). In process, every
 * mutated case ends in a refusal the user can act on (a CaseError, or an EngineError the input caused) or in
 * a result whose exact populations lie in [0, 1] and sum to 1 within the method's accuracy (or that the
 * verdict flags as untrusted); none takes longer than a bound. Through the command line, a sample of them ends
 * in exit 0 or 2 with no stack trace.
 */

import fc from "fast-check";
import { assert } from "./assert.ts";
import { testEngine } from "./helpers.ts";
import { parseCase } from "../cli/case/parse.ts";
import { buildCase } from "../cli/case/build.ts";
import { CaseError } from "../cli/case/errors.ts";
import { runCase } from "../cli/analysis/outcome.ts";
import { MAX_NORM_DRIFT } from "../cli/analysis/verdict.ts";
import { EngineError, populationsAt } from "../engine/mod.ts";

const root = new URL("../", import.meta.url);

/** The examples and a few hostile fixtures that run, kept small so that thousands of mutants stay quick. */
const BASES = [
  "cases/two_level.toml",
  "cases/leaky_transmon.toml",
  "cases/ladder.toml",
  "cases/swept_crossing.toml",
  "cases/kicked_oscillator.toml",
  "cases/weak_drive_check.toml",
  "tests/fixtures/hostile/explicit_partner.toml",
  "tests/fixtures/hostile/huge_amplitudes.toml",
  "tests/fixtures/hostile/injection.toml",
].map((path) =>
  Deno.readTextFileSync(new URL(path, root))
    .replace(/^steps = \d+/m, "steps = 200")
    .replace(/^samples = \d+/m, "samples = 11")
);

/** Values a hostile user would try in place of a number. */
const NUMBERS = [
  "0",
  "-1",
  "-0.5",
  "2",
  "3.5",
  "1e-320",
  "1e-300",
  "1e300",
  "1e308",
  "1.7976931348623157e308",
  "1e12",
  "1e20",
  "-1e308",
  "nan",
  "inf",
];

/** Fragments a hostile user would try inside expressions and operators. */
const FRAGMENTS = [
  "constructor",
  "__proto__",
  "toString",
  "t",
  "i",
  "1/0",
  "log(0)",
  "sqrt(-1)",
  "exp(1000)",
  "1e308*",
  "|e><g|",
  "|g><g|",
  "+ h.c.",
  "†",
  "'",
  "$",
  "\\u001b[2J",
  "^1000000000",
  "((((",
  ")",
  "a_m",
  "σx_q",
  "I",
  '"',
  "\n",
  "[",
  "]]",
  "=",
  ",",
];

/** A mutant: a base with a number replaced, a fragment put in an expression or anywhere, or a span cut. */
const mutant = fc.record({
  base: fc.nat({ max: BASES.length - 1 }),
  kind: fc.constantFrom("number", "expression", "whole expression", "fragment", "cut"),
  at: fc.nat(),
  pick: fc.nat(),
  length: fc.nat({ max: 12 }),
}).map(({ base, kind, at, pick, length }) => {
  const text = BASES[base]!;
  if (kind === "number") {
    const numbers = [...text.matchAll(/(?<![\w.])-?\d+(\.\d+)?(e-?\d+)?(?![\w.])/g)];
    const m = numbers[at % numbers.length]!;
    return text.slice(0, m.index!) + NUMBERS[pick % NUMBERS.length] + text.slice(m.index! + m[0].length);
  }
  if (kind === "expression" || kind === "whole expression") {
    // Inside the quotes of an op, coef, formula or param: where a fragment reaches the expression compiler.
    const strings = [...text.matchAll(/^\s*\w+\s*=\s*"([^"\n]*)"/gm)];
    const m = strings[at % strings.length]!;
    const start = m.index! + m[0].length - 1 - m[1]!.length;
    const fragment = FRAGMENTS[pick % FRAGMENTS.length]!;
    if (kind === "whole expression") {
      const whole = [fragment, `${fragment} ? 1 : 0`, `(${fragment})*2`][length % 3]!;
      return text.slice(0, start) + whole + text.slice(start + m[1]!.length);
    }
    const inside = start + (length % (m[1]!.length + 1));
    return text.slice(0, inside) + fragment + text.slice(inside);
  }
  const where = at % text.length;
  if (kind === "fragment") {
    return text.slice(0, where) + FRAGMENTS[pick % FRAGMENTS.length] + text.slice(where);
  }
  return text.slice(0, where) + text.slice(where + length);
});

/** The longest one in-process mutant may take (the slowest base takes a few tens of milliseconds). */
const BOUND_MS = 10_000;

Deno.test("2000 mutated cases: a refusal or a trustworthy result, never a crash, each within a bound", async () => {
  const engine = await testEngine();
  const counts = { refused: 0, results: 0, flagged: 0 };
  let slowest = 0;
  fc.assert(
    fc.property(mutant, (text) => {
      const started = performance.now();
      try {
        const built = buildCase(parseCase(text, "mutant.toml"));
        const outcome = runCase(engine, built);
        const { result, analysis } = outcome;
        const d = built.model.dim, last = result.times.length - 1;
        const exact = populationsAt(result.exact, d, last);
        assert(exact.every((p) => p >= -1e-15 && p <= 1 + 1e-12), `exact populations in [0, 1]: ${exact}`);
        const total = exact.reduce((s, p) => s + p, 0);
        if (Math.abs(total - 1) > MAX_NORM_DRIFT) {
          assert(!analysis.referenceOk && analysis.untrusted.length > 0, `Σ P = ${total} must be flagged`);
          counts.flagged++;
        }
        counts.results++;
      } catch (e) {
        const refusal = e instanceof CaseError || (e instanceof EngineError && e.byInput);
        if (!refusal) throw new Error(`not a refusal: ${(e as Error)?.stack ?? e}\n--- case ---\n${text}`);
        counts.refused++;
      }
      slowest = Math.max(slowest, performance.now() - started);
      assert(
        performance.now() - started < BOUND_MS,
        `a mutant took ${performance.now() - started} ms:\n${text}`,
      );
    }),
    { numRuns: 2000, seed: 20261202 },
  );
  console.log(
    `fuzz: ${counts.results} results (${counts.flagged} flagged), ${counts.refused} refusals; ` +
      `slowest ${slowest.toFixed(0)} ms`,
  );
  assert(
    counts.results > 200 && counts.refused > 200,
    `both outcomes are exercised: ${JSON.stringify(counts)}`,
  );
});

Deno.test("50 mutated cases through the command line: exit 0 or 2, never a stack trace", async () => {
  const texts = fc.sample(mutant, { numRuns: 50, seed: 1202 });
  const main = new URL("cli/main.ts", root).pathname;
  const flags = (JSON.parse(Deno.readTextFileSync(new URL("deno.json", root))).tasks.ordo.command as string)
    .split(/\s+/).filter((w) => w.startsWith("--allow-"));
  const one = async (text: string) => {
    const file = Deno.makeTempFileSync({ suffix: ".toml" });
    Deno.writeTextFileSync(file, text);
    const r = await new Deno.Command(Deno.execPath(), {
      args: ["run", ...flags, main, "run", file, "--json"],
    })
      .output();
    const stderr = new TextDecoder().decode(r.stderr);
    assert(r.code === 0 || r.code === 2, `exit ${r.code}: ${stderr}\n--- case ---\n${text}`);
    assert(!/\n\s+at /.test(stderr), `no stack trace: ${stderr}`);
    if (r.code === 0) {
      const result = JSON.parse(new TextDecoder().decode(r.stdout));
      for (const p of Object.values(result.final.exact) as number[]) assert(p >= 0 && p <= 1 + 1e-12, `${p}`);
    }
  };
  for (let k = 0; k < texts.length; k += 2) await Promise.all(texts.slice(k, k + 2).map(one));
});
