// Case parsing and validation: worked examples, round trips of random valid
// cases through TOML and JSON, and random corruptions that must end in a
// CaseError (exit code 2 in the CLI), never in any other exception.
import fc from "fast-check";
import { stringify } from "smol-toml";
import { assert, assertDeepEqual, assertEqual } from "./assert.ts";
import { assertClose } from "./helpers.ts";
import { parseCase, readCase } from "../cli/case/parse.ts";
import type { OperatorTerm } from "../engine/mod.ts";
import { buildCase } from "../cli/case/build.ts";
import { CaseError } from "../cli/case/errors.ts";

/** A finite double without −0 (JSON cannot carry −0). */
const real = (min: number, max: number) => fc.double({ min, max, noNaN: true }).map((x) => x + 0);

const caseArbitrary = fc.integer({ min: 2, max: 4 }).chain((d) =>
  fc.record({
    title: fc.string({ maxLength: 20 }),
    params: fc.dictionary(
      fc.constantFrom("alpha", "beta", "kappa", "mu"),
      real(-5, 5),
      {
        maxKeys: 3,
      },
    ),
    levels: fc.constant({
      names: Array.from({ length: d }, (_, k) => `L${k}`),
    }),
    unperturbed: fc.array(real(-10, 10), { minLength: d, maxLength: d })
      .map((diag) => ({
        matrix: diag.map((e, i) => diag.map((_, j) => (i === j ? e : 0))),
      })),
    perturbation: fc.array(fc.tuple(real(-1, 1), real(-1, 1)), {
      minLength: d * d,
      maxLength: d * d,
    }).map((entries) => ({
      terms: [{
        matrix: Array.from({ length: d }, (_, i) =>
          Array.from({ length: d }, (_, j) => {
            const [re, im] = entries[Math.min(i, j) * d + Math.max(i, j)]!;
            if (i === j) {
              return re;
            }
            return [re, i < j ? im : 0 - im];
          })),
        coef: "cos(t)",
      }],
    })),
    start: fc.integer({ min: 0, max: d - 1 }).map((k) => ({ state: `L${k}` })),
    grid: fc.record({
      t_start: real(-10, 10),
      t_end: real(10.5, 50),
      steps: fc.integer({ min: 1, max: 1000 }),
      samples: fc.integer({ min: 2, max: 200 }),
    }),
    series: fc.record({ order: fc.integer({ min: 0, max: 8 }) }),
  })
);

Deno.test("parseCase() reads every example in cases/", () => {
  for (const entry of Deno.readDirSync(new URL("../cases/", import.meta.url))) {
    const c = readCase(
      new URL(`../cases/${entry.name}`, import.meta.url).pathname,
    );
    const built = buildCase(c);
    assert(built.model.dim >= 2, entry.name);
  }
});

Deno.test("random valid cases round-trip through TOML and JSON to the same model", () => {
  fc.assert(
    fc.property(caseArbitrary, (spec) => {
      const toml = parseCase(stringify(spec), "random.toml");
      const json = parseCase(JSON.stringify(spec), "random.json");
      assertDeepEqual(toml.spec, json.spec);
      const plain = (x: unknown) => JSON.parse(JSON.stringify(x));
      assertDeepEqual(
        plain(toml.spec),
        plain(spec),
        "the parsed case equals the written one",
      );
      const a = buildCase(toml).model, b = buildCase(json).model;
      assertEqual(a.dim, spec.levels.names.length);
      assertDeepEqual(a.perturbation[0]!.matrix, b.perturbation[0]!.matrix);
      // The assembled V holds the written entries (re, im) at (i, j).
      const d = a.dim;
      spec.perturbation.terms[0]!.matrix.forEach((row, i) =>
        row.forEach((entry, j) => {
          const [re, im] = typeof entry === "number" ? [entry, 0] : entry as [number, number];
          assertClose(a.perturbation[0]!.matrix[2 * (i * d + j)]!, re, {
            abs: 0,
          });
          assertClose(a.perturbation[0]!.matrix[2 * (i * d + j) + 1]!, im, {
            abs: 0,
          });
        })
      );
    }),
    { numRuns: 150 },
  );
});

let caseErrors = 0;
/** parse + build; any exception other than CaseError fails the property. */
function loadOrCaseError(text: string, file: string): void {
  try {
    buildCase(parseCase(text, file));
  } catch (e) {
    caseErrors++;
    if (!(e instanceof CaseError)) {
      throw new Error(
        `not a CaseError: ${(e as Error)?.stack ?? e}\n--- case ---\n${text}`,
      );
    }
    assert(
      e.message.length > 0 && e.report().startsWith(file),
      `message names the file: ${e.report()}`,
    );
  }
}

const junk = fc.oneof(
  fc.constant(null),
  fc.string({ maxLength: 8 }),
  fc.double(),
  fc.integer(),
  fc.boolean(),
  fc.array(fc.oneof(fc.integer(), fc.string({ maxLength: 3 })), {
    maxLength: 3,
  }),
  fc.constant({}),
  fc.constantFrom(
    "sqrt(-1)",
    "1/0",
    "t",
    "nan",
    "|g><e|",
    "log(0)",
    "g(",
    "[[1]]",
  ),
);

Deno.test("random corruptions of valid cases give a CaseError, never a crash", () => {
  caseErrors = 0;
  fc.assert(
    fc.property(
      caseArbitrary,
      fc.array(fc.nat()),
      junk,
      fc.boolean(),
      (spec, picks, value, remove) => {
        // Walk a random key path into the case and replace (or delete) what is there.
        // deno-lint-ignore no-explicit-any
        const copy: any = structuredClone(spec);
        // deno-lint-ignore no-explicit-any
        let node: any = copy;
        let i = 0;
        while (true) {
          const keys = Object.keys(node);
          if (keys.length === 0) break;
          const key = keys[(picks[i++ % Math.max(picks.length, 1)] ?? 0) % keys.length]!;
          const child = node[key];
          if (
            child === null || typeof child !== "object" || i > 4 ||
            (picks[i] ?? 0) % 3 === 0
          ) {
            if (remove) delete node[key];
            else node[key] = value;
            break;
          }
          node = child;
        }
        const text = JSON.stringify(copy);
        loadOrCaseError(text, "corrupt.json");
        let toml: string | undefined;
        try {
          toml = stringify(copy);
        } catch { /* not expressible in TOML (null): JSON covered it */ }
        if (toml !== undefined) loadOrCaseError(toml, "corrupt.toml");
      },
    ),
    { numRuns: 300 },
  );
  assert(
    caseErrors > 100,
    `the corruptions were mostly rejected (${caseErrors} case errors)`,
  );
});

Deno.test("random edits of case text give a CaseError, never a crash", () => {
  caseErrors = 0;
  const base = Deno.readTextFileSync(
    new URL("../cases/leaky_transmon.toml", import.meta.url),
  );
  fc.assert(
    fc.property(
      fc.nat({ max: base.length - 1 }),
      fc.nat({ max: 12 }),
      fc.string({ maxLength: 6 }),
      (at, cut, insert) => {
        loadOrCaseError(
          base.slice(0, at) + insert + base.slice(at + cut),
          "edited.toml",
        );
      },
    ),
    { numRuns: 300 },
  );
  assert(
    caseErrors > 30,
    `some edits were rejected (${caseErrors} case errors)`,
  );
});

Deno.test("every example assembles to a Hermitian H0 and V at every sampled time (with hc partners)", () => {
  for (const entry of Deno.readDirSync(new URL("../cases/", import.meta.url))) {
    const built = buildCase(readCase(new URL(`../cases/${entry.name}`, import.meta.url).pathname));
    const { model } = built;
    const d = model.dim;
    const times = Float64Array.from(
      { length: 7 },
      (_, k) => model.tStart + (model.tEnd - model.tStart) * k / 6,
    );
    // every stored entry of a term, dense or sparse (the engine's own CSR arrays)
    const entries = (term: OperatorTerm, visit: (i: number, j: number, re: number, im: number) => void) => {
      const csr = term.sparse;
      if (csr) {
        for (let i = 0; i < d; i++) {
          for (let k = csr.rowStart[i]!; k < csr.rowStart[i + 1]!; k++) {
            visit(i, csr.column[k]!, csr.values[2 * k]!, csr.values[2 * k + 1]!);
          }
        }
        return;
      }
      for (let e = 0; e < d * d; e++) {
        visit(Math.floor(e / d), e % d, term.matrix[2 * e]!, term.matrix[2 * e + 1]!);
      }
    };
    for (const part of [model.unperturbed, model.perturbation]) {
      const sums = Array.from(times, () => new Map<number, [number, number]>());
      for (const term of part) {
        const c = new Float64Array(2 * times.length);
        if (term.coefficient.kind === "constant") {
          for (let k = 0; k < times.length; k++) {
            [c[2 * k], c[2 * k + 1]] = [term.coefficient.re, term.coefficient.im];
          }
        } else term.coefficient.sample(times, c);
        entries(term, (i, j, mr, mi) => {
          sums.forEach((sum, k) => {
            const z = sum.get(i * d + j) ?? [0, 0];
            z[0] += c[2 * k]! * mr - c[2 * k + 1]! * mi;
            z[1] += c[2 * k]! * mi + c[2 * k + 1]! * mr;
            sum.set(i * d + j, z);
          });
        });
      }
      for (const sum of sums) {
        for (const [key, [re, im]] of sum) {
          const i = Math.floor(key / d), j = key % d;
          const [tr, ti] = sum.get(j * d + i) ?? [0, 0];
          assertClose(re, tr, { abs: 1e-12 }, `${entry.name} re (${i},${j})`);
          assertClose(im, -ti, { abs: 1e-12 }, `${entry.name} im (${i},${j})`);
        }
      }
    }
  }
});

Deno.test("a wrong matrix entry is reported at its row and column, with the forms an entry may take", () => {
  const text = (entry: string) =>
    `title = "invented"\n[levels]\nnames = ["g", "e"]\n[unperturbed]\nmatrix = [[0, 0], [0, 1]]\n` +
    `[perturbation]\n[[perturbation.terms]]\nmatrix = [[0, ${entry}], [0.1, 0]]\ncoef = "1"\n` +
    `[start]\nstate = "g"\n[grid]\nt_end = 10\nsteps = 100\n[series]\norder = 2\n`;
  for (const entry of ["true", "[1, 2, 3]", "nan", "[1, true]", "{ re = 1 }"]) {
    try {
      parseCase(text(entry));
      assert(false, `${entry} was taken`);
    } catch (e) {
      assert(e instanceof CaseError, `${entry}: ${e}`);
      assertEqual(e.path.join("."), "perturbation.terms.0.matrix.0.1", `${entry}: path`);
      assert(e.message.includes("wrong form"), `${entry}: ${e.message}`);
      assert((e.fix ?? "").includes("[re, im]"), `${entry}: ${e.fix}`);
    }
  }
  // the written forms are taken: a number, an expression, [re, im] of either
  for (const entry of ["0.1", '"0.1"', "[0.1, 0]", '["0.1", "0"]']) parseCase(text(entry));
  // a row that is not an array of entries: reported at the row
  let refused = false;
  try {
    parseCase(text("0").replace("[[0, 0], [0.1, 0]]", "[[0, 0], 5]"));
  } catch (e) {
    refused = e instanceof CaseError && e.path.join(".") === "perturbation.terms.0.matrix.1";
  }
  assert(refused, "a row that is a number was taken, or reported elsewhere");
});
