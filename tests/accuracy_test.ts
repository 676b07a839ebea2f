/**
 * Accuracy on request: with `accuracy` set the engine chooses its steps, and (1) the final populations of the
 * exact state and of every partial sum are within the accuracy of a reference at very small fixed steps (whose
 * own step-doubling estimate is far below the accuracy; the fixed-step scheme is checked against closed forms
 * in engine_physics_test.ts), (2) the verdict's reference error is an honest estimate of the true error, within
 * a factor 10 either way, and (3) on the driven oscillator the exact populations match Glauber's Poisson law.
 */

import { assert } from "./assert.ts";
import { assertClose, testEngine } from "./helpers.ts";
import { drivenOscillator, glauberPopulations, solveText, twoLevel } from "./engine_helpers.ts";
import { readCase } from "../cli/case/parse.ts";
import { buildCase, type BuiltCase } from "../cli/case/build.ts";
import { parseCase } from "../cli/case/parse.ts";
import { runCase } from "../cli/analysis/outcome.ts";
import { populationsAt, type Result, solve } from "../engine/mod.ts";

const root = new URL("../", import.meta.url);
const ACCURACY = 1e-8;

// A Gaussian-driven two-level system (δ = 0.8, g = 0.2, pulse at t = 10 of width 2.5), steps from the accuracy.
const gaussianTwoLevel = twoLevel(0.8, 0.2, 20, { coef: "gauss(t, 10, 2.5)", samples: 11, order: 8 });

/** The stepped examples and two more stepped cases (a Gaussian-driven two-level system, a complex drive). */
function cases(): BuiltCase[] {
  const files = ["cases/leaky_transmon.toml", "cases/kicked_oscillator.toml", "cases/swept_crossing.toml"];
  return [
    ...files.map((f) => buildCase(readCase(new URL(f, root).pathname), { accuracy: ACCURACY })),
    buildCase(readCase(new URL("tests/fixtures/hostile/explicit_partner.toml", root).pathname), {
      accuracy: ACCURACY,
    }),
    buildCase(parseCase(gaussianTwoLevel, "gaussian.toml"), { accuracy: ACCURACY }),
  ];
}

/** Final populations of the exact state and of every partial sum. */
function finalPopulations(result: Result, d: number): number[][] {
  const last = result.times.length - 1;
  const sums: number[][] = [Array.from(populationsAt(result.exact, d, last))];
  const partial = new Float64Array(2 * d);
  for (const term of result.terms) {
    for (let k = 0; k < 2 * d; k++) partial[k]! += term[last * 2 * d + k]!;
    sums.push(Array.from(populationsAt(partial, d, 0)));
  }
  return sums;
}

Deno.test("with an accuracy, exact and partial-sum populations are within it and the reference error is honest", async () => {
  const engine = await testEngine();
  for (const built of cases()) {
    assert(built.model.accuracy === ACCURACY, `${built.title}: ${built.model.accuracy}`);
    const outcome = runCase(engine, built);
    const d = built.model.dim;
    // The reference: the fixed-step exponential integrator (a different method from the accuracy-driven
    // Runge–Kutta pair of interaction-picture runs), its steps doubled until its own estimate is far below.
    let reference: Result, refOwn = Infinity;
    let steps = Math.max(16 * outcome.result.steps, 1000);
    do {
      reference = solve(engine, { ...built.model, accuracy: undefined, steps });
      const end = reference.times.length - 1;
      refOwn = Math.max(
        ...Array.from(
          populationsAt(reference.exact, d, end),
          (p, a) => Math.abs(p - populationsAt(reference.check, d, end)[a]!) / 15,
        ),
      );
      steps *= 2;
    } while (refOwn >= ACCURACY / 1000 && steps < 4e6);
    const last = reference.times.length - 1;
    assert(refOwn < ACCURACY / 1000, `${built.title}: the reference's own estimate ${refOwn}`);
    const mine = finalPopulations(outcome.result, d), ref = finalPopulations(reference, d);
    let exactError = 0;
    mine.forEach((row, n) =>
      row.forEach((p, a) => {
        const what = n === 0 ? "exact" : `partial sum to order ${n - 1}`;
        assertClose(p, ref[n]![a]!, { abs: ACCURACY }, `${built.title}: ${what}, level ${a}`);
        if (n === 0) exactError = Math.max(exactError, Math.abs(p - ref[0]![a]!));
      })
    );
    const estimate = Math.max(
      ...Array.from(
        populationsAt(outcome.result.exact, d, last),
        (p, a) => Math.abs(p - populationsAt(outcome.result.check, d, last)[a]!),
      ),
    );
    // The estimate is judged where the true error stands clear of the reference's own error and round-off.
    if (exactError > Math.max(1e-12, 10 * refOwn)) {
      assert(
        estimate > exactError / 10 && estimate < exactError * 10,
        `${built.title}: estimate ${estimate} against true error ${exactError}`,
      );
    } else {
      assert(estimate < 1e-9, `${built.title}: both small (estimate ${estimate}, true ${exactError})`);
    }
    assert(outcome.analysis.referenceOk, `${built.title}: judged`);
    console.log(
      `${built.title}: ${outcome.result.steps} steps (fixed case: ${
        built.source.spec.grid.steps ?? "none"
      }); ` +
        `true ${exactError.toExponential(1)}, estimated ${estimate.toExponential(1)} (reference ${
          refOwn.toExponential(1)
        })`,
    );
  }
});

// H = ωa†a + f(t)(a + a†) from |0⟩ gives a coherent state (Glauber, Phys. Rev. 131, 1963): Poisson
// populations with mean |α|², α = −i∫f(s)e^{iωs}ds = F·w·√(2π)·e^{iωc}·e^{−ω²w²/2} for a Gaussian f.
Deno.test("accuracy 1e-9 on the driven oscillator reproduces Glauber's Poisson populations to 1e-9", async () => {
  const omega = 1, F = 0.3, w = 2;
  const { result } = await solveText(drivenOscillator(omega, F, w, "accuracy = 1e-9"));
  glauberPopulations(omega, F, w, 8).forEach((poisson, n) =>
    assertClose(populationsAt(result.exact, 16, 2)[n]!, poisson, { abs: 1e-9 }, `P(${n})`)
  );
});

Deno.test("with an accuracy, the steps do not depend on how many times are recorded, and inner records are accurate", async () => {
  const engine = await testEngine();
  const file = new URL("cases/leaky_transmon.toml", root).pathname;
  const few = buildCase(readCase(file), { accuracy: ACCURACY });
  const many = { ...few, model: { ...few.model, samples: 401 } };
  const a = runCase(engine, { ...few, model: { ...few.model, samples: 2 } }), b = runCase(engine, many);
  assert(
    a.result.steps === b.result.steps,
    `${a.result.steps} steps with 2 records, ${b.result.steps} with 401`,
  );
  // An inner recorded time (t = 10 ns, record 200 of 401) against a fixed-step reference recorded there.
  const reference = solve(engine, { ...many.model, accuracy: undefined, steps: 400 * 64 });
  const d = many.model.dim;
  const mine = populationsAt(b.result.exact, d, 200), ref = populationsAt(reference.exact, d, 200);
  mine.forEach((p, k) => assertClose(p, ref[k]!, { abs: ACCURACY }, `level ${k} at t = 10 ns`));
});

Deno.test("the verdict judges with the larger of the estimate and the accuracy asked for", async () => {
  const engine = await testEngine();
  const file = new URL("cases/leaky_transmon.toml", root).pathname; // tolerance 1e-6
  const loose = runCase(engine, buildCase(readCase(file), { accuracy: 5e-7 }));
  assert(loose.analysis.referenceError < 5e-8, `the estimate is small: ${loose.analysis.referenceError}`);
  assert(!loose.analysis.referenceOk, "an accuracy of 5e-7 cannot judge orders at a tolerance of 1e-6");
  const tight = runCase(engine, buildCase(readCase(file), { accuracy: 1e-8 }));
  assert(tight.analysis.referenceOk, "an accuracy of 1e-8 can");
});
