/**
 * Sparse operators end to end, on chains of spins-1/2 with nearest-neighbour exchange (XX coupling)
 * H0 = J Σ_i (S+_i S-_{i+1} + h.c.) and a weak transverse drive V = ε Σ_i Sx_i cos(ωt):
 *
 * - L = 10 (d = 2^10, sparse by default): one excitation hops as a free particle on an open chain of L sites
 *   (the single-excitation sector of the XX chain; Lieb, Schultz & Mattis, Ann. Phys. 16 (1961) 407), with
 *   amplitude A_{b←a}(t) = Σ_k φ_k(b) φ_k(a) e^{−iε_k t}, φ_k(j) = √(2/(L+1)) sin(kπj/(L+1)),
 *   ε_k = 2J cos(kπ/(L+1)): the zeroth Dyson term (the free evolution under H0, propagated with sparse
 *   products only) must follow it;
 * - L = 8 (d = 2^8): the same physics with sparse and with dense operators gives the same exact and partial-sum
 *   populations (two different integrators, each to its accuracy).
 */

import { assert, assertEqual } from "./assert.ts";
import { assertClose, testEngine } from "./helpers.ts";
import { parseCase } from "../cli/case/parse.ts";
import { buildCase } from "../cli/case/build.ts";
import { runCase } from "../cli/analysis/outcome.ts";
import { populationsAt } from "../engine/mod.ts";
import { PointEvaluator } from "../cli/sweep/point.ts";

/** The chain's case text: L spins, the excitation on site `start` (1-based), the other spins down. */
function chain(length: number, start: number, options: { operators?: string; eps?: number; order?: number }) {
  const sites = Array.from({ length }, (_, k) => k + 1);
  const label = (up: number) => sites.map((j) => (j === up ? "+1/2" : "-1/2")).join(",");
  return `
title = "XX chain of ${length} spins (test)"
[params]
J = 1.0
eps = ${options.eps ?? 0.01}
[subsystems]
${sites.map((j) => `q${j} = { spin = 0.5 }`).join("\n")}
[unperturbed]
op = "J*(${sites.slice(0, -1).map((j) => `S+_q${j}*S-_q${j + 1}`).join(" + ")}) + h.c."
[perturbation]
op = "eps*(${sites.map((j) => `Sx_q${j}`).join(" + ")})"
coef = "cos(0.7*t)"
[start]
state = "${label(start)}"
[grid]
t_end = 4
samples = 2
accuracy = 1e-10
${options.operators ? `operators = "${options.operators}"` : ""}
[series]
order = ${options.order ?? 2}
targets = ["${label(start)}"]
`;
}

Deno.test("XX chain, d = 2^10, sparse: one excitation hops as a free particle (the open chain's closed form)", async () => {
  const engine = await testEngine();
  const length = 10, start = 3, t = 4, J = 1;
  const built = buildCase(parseCase(chain(length, start, {}), "chain.toml"));
  assertEqual(built.space.storage, "sparse");
  assertEqual(built.model.dim, 1024);
  const { result } = runCase(engine, built);
  assertEqual(result.scheme, "sparse-interaction");
  const last = result.times.length - 1;
  const zeroth = populationsAt(result.terms[0]!, 1024, last);
  const phi = (k: number, j: number) =>
    Math.sqrt(2 / (length + 1)) * Math.sin(k * Math.PI * j / (length + 1));
  let total = 0;
  const closed: number[] = [];
  for (let site = 1; site <= length; site++) {
    let re = 0, im = 0;
    for (let k = 1; k <= length; k++) {
      const energy = 2 * J * Math.cos(k * Math.PI / (length + 1));
      const w = phi(k, site) * phi(k, start);
      re += w * Math.cos(energy * t);
      im -= w * Math.sin(energy * t);
    }
    const label = Array.from({ length }, (_, k) => (k + 1 === site ? "+1/2" : "-1/2")).join(",");
    const p = zeroth[built.space.labels.indexOf(label)]!;
    closed[site] = re * re + im * im;
    assertClose(p, closed[site]!, { abs: 1e-9 }, `site ${site}`);
    total += p;
  }
  assertClose(total, 1, { abs: 1e-9 }, "the excitation stays in the single-excitation sector");
  // with the drive off, the exact state itself follows the same closed form
  const still = runCase(engine, buildCase(parseCase(chain(length, start, { eps: 0 }), "chain.toml")));
  const exact = populationsAt(still.result.exact, 1024, still.result.times.length - 1);
  for (let site = 1; site <= length; site++) {
    const label = Array.from({ length }, (_, k) => (k + 1 === site ? "+1/2" : "-1/2")).join(",");
    const at = built.space.labels.indexOf(label);
    assertClose(exact[at]!, closed[site]!, { abs: 1e-9 }, `exact with ε = 0, site ${site}`);
  }
});

Deno.test("XX chain, d = 2^8: sparse and dense operators give the same exact and partial-sum populations", async () => {
  const engine = await testEngine();
  const run = (operators: string) =>
    runCase(engine, buildCase(parseCase(chain(8, 2, { operators, eps: 0.05, order: 3 }), "chain.toml")));
  const sparse = run("sparse"), dense = run("dense");
  assertEqual(sparse.result.scheme, "sparse-interaction");
  assertEqual(dense.result.scheme, "interaction-picture");
  const d = 256, last = sparse.result.times.length - 1;
  const a = populationsAt(sparse.result.exact, d, last), b = populationsAt(dense.result.exact, d, last);
  let moved = 0;
  a.forEach((p, k) => {
    assertClose(p, b[k]!, { abs: 1e-8 }, `exact, level ${k}`);
    moved = Math.max(moved, p);
  });
  assert(moved < 0.99, "the excitation moved");
  for (let n = 0; n < sparse.result.terms.length; n++) {
    const s = sparse.analysis.targets[0]!.rows[n]!.population,
      t = dense.analysis.targets[0]!.rows[n]!.population;
    assertClose(s, t, { abs: 1e-8 }, `partial sum to order ${n}`);
  }
});

Deno.test("a sweep point of a sparse case equals the run of the same case (sweeps work unchanged on sparse cases)", async () => {
  const engine = await testEngine();
  const text = chain(9, 1, { eps: 0.02 });
  const evaluator = new PointEvaluator(engine, { text, file: "chain.toml", options: {}, axes: ["eps"] });
  assertEqual(evaluator.base.space.storage, "sparse");
  const point = evaluator.evaluate(0, [0.04]);
  const single = runCase(engine, buildCase(parseCase(text, "chain.toml"), { set: { eps: "0.04" } }));
  assertClose(point.exact[0]!, single.analysis.targets[0]!.exact, { abs: 1e-14 }, "exact");
  point.orders[0]!.forEach((p, n) =>
    assertClose(p, single.analysis.targets[0]!.rows[n]!.population, { abs: 1e-14 }, `order ${n}`)
  );
  assert(point.minOrder[0] !== undefined, "judged");
});

Deno.test("a sparse case whose H is not Hermitian is refused, naming where (as for dense operators)", () => {
  const text = chain(9, 1, {}).replace(
    'coef = "cos(0.7*t)"',
    'coef = "cos(0.7*t)"\n[[perturbation.terms]]\nop = "0.01*S+_q3"',
  )
    .replace('[perturbation]\nop = "eps', '[[perturbation.terms]]\nop = "eps')
    .replace('coef = "cos(0.7*t)"\n[[perturbation.terms]]', 'coef = "cos(0.7*t)"\n[[perturbation.terms]]');
  let message = "";
  try {
    buildCase(parseCase(text, "chain.toml"));
  } catch (e) {
    message = (e as Error).message;
  }
  assert(message.includes("not Hermitian"), `refused: ${message}`);
});
