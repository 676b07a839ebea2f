/**
 * Propagator mode: the gate on a subspace, the Magnus terms and the effective Hamiltonian, each against
 * something outside the code that computes it.
 */

import { all, type Complex as MathComplex, create, type Matrix } from "mathjs";
import { assert, assertEqual } from "./assert.ts";
import { assertClose, seeded, tempCase, testEngine } from "./helpers.ts";
import { parseCase, readCase } from "../cli/case/parse.ts";
import { buildCase } from "../cli/case/build.ts";
import { runCase } from "../cli/analysis/outcome.ts";
import { averageFidelity, expm, magnusTerms } from "../cli/analysis/gate.ts";
import { ComplexMatrix } from "../cli/case/complex_matrix.ts";

const math = create(all!);

/** A random m×m unitary: mathjs expm of i·(a random Hermitian matrix). */
function randomUnitary(m: number, random: () => number): ComplexMatrix {
  const h = math.zeros(m, m) as Matrix;
  for (let i = 0; i < m; i++) {
    for (let j = i; j < m; j++) {
      const re = random() - 0.5, im = i === j ? 0 : random() - 0.5;
      h.set([i, j], math.complex(re, im));
      h.set([j, i], math.complex(re, -im));
    }
  }
  const u = math.expm(math.multiply(math.complex(0, 1), h) as Matrix);
  const out = new ComplexMatrix(m, m);
  for (let i = 0; i < m; i++) {
    for (let j = 0; j < m; j++) {
      const z = math.complex(u.get([i, j]) as MathComplex);
      out.set(i, j, z.re, z.im);
    }
  }
  return out;
}

// Nielsen, Phys. Lett. A 303 (2002) 249: for unitaries U, V on m dimensions the average fidelity is
// F = (m + |Tr(U†V)|²)/(m(m+1)).
Deno.test("the average gate fidelity of two unitaries equals Nielsen's closed form", () => {
  const random = seeded(3);
  for (const m of [2, 3, 4]) {
    const u = randomUnitary(m, random), v = randomUnitary(m, random);
    let re = 0, im = 0;
    for (let i = 0; i < m; i++) {
      for (let k = 0; k < m; k++) {
        // (U†V)_ii = Σ_k conj(U_ki) V_ki
        const a = u.get(k, i), b = v.get(k, i);
        re += a.re * b.re + a.im * b.im;
        im += a.re * b.im - a.im * b.re;
      }
    }
    assertClose(averageFidelity(u, v), (m + re * re + im * im) / (m * (m + 1)), { abs: 1e-13 }, `m = ${m}`);
    assertClose(averageFidelity(u, u), 1, { abs: 1e-13 }, `F(U, U), m = ${m}`);
  }
  // a phase gate against the identity on a qubit: F = (2 + |1 + e^{iφ}|²)/6
  const phi = 0.7, id = ComplexMatrix.identity(2), phase = ComplexMatrix.identity(2);
  phase.set(1, 1, Math.cos(phi), Math.sin(phi));
  assertClose(averageFidelity(id, phase), (2 + (1 + Math.cos(phi)) ** 2 + Math.sin(phi) ** 2) / 6, {
    abs: 1e-15,
  });
});

// log(exp(λA)) = λA: with U_n = Aⁿ/n! the Magnus terms are Ω1 = A and Ωn = 0 for n ≥ 2 (Blanes, Casas, Oteo &
// Ros, Phys. Rep. 470 (2009) 151, the Magnus–Dyson relation for a constant generator).
Deno.test("Magnus terms from the Dyson terms of exp(λA): Ω1 = A and the rest vanish", () => {
  const random = seeded(8);
  const d = 3;
  const a = new ComplexMatrix(d, d);
  for (let k = 0; k < a.data.length; k++) a.data[k] = random() - 0.5;
  const terms: ComplexMatrix[] = [];
  let power = ComplexMatrix.identity(d), factorial = 1;
  for (let n = 1; n <= 6; n++) {
    power = power.mul(a);
    factorial *= n;
    terms.push(power.scale({ re: 1 / factorial, im: 0 }));
  }
  const omega = magnusTerms(terms);
  omega[0]!.data.forEach((x, k) => assertClose(x, a.data[k]!, { abs: 1e-15 }, "Ω1"));
  omega.slice(1).forEach((o, n) => o.data.forEach((x) => assertClose(x, 0, { abs: 1e-14 }, `Ω${n + 2}`)));
  // and expm against mathjs
  const theirs = math.expm(
    math.matrix(Array.from({ length: d }, (_, i) =>
      Array.from({ length: d }, (_, j) => {
        const z = a.get(i, j);
        return math.complex(z.re, z.im);
      }))),
  );
  const mine = expm(a);
  for (let i = 0; i < d; i++) {
    for (let j = 0; j < d; j++) {
      const z = math.complex(theirs.get([i, j]) as MathComplex);
      assertClose(mine.get(i, j).re, z.re, { abs: 1e-14 }, `Re exp(A)[${i},${j}]`);
      assertClose(mine.get(i, j).im, z.im, { abs: 1e-14 }, `Im exp(A)[${i},${j}]`);
    }
  }
});

const twoLevelGate = (order: number, t: number, g = 0.12) => `
[levels]
names = ["g", "e"]
[params]
delta = 0.9
g = ${g}
[unperturbed]
op = "delta*|e><e|"
[perturbation]
op = "g*|e><g| + h.c."
[start]
subspace = ["g", "e"]
[grid]
t_end = ${t}
samples = 2
[series]
order = ${order}
`;

// H0 = δ|e⟩⟨e|, V = g(|e⟩⟨g| + h.c.) constant: V_I(t) = g(e^{iδt}|e⟩⟨g| + h.c.), and the commutator integrals
// give Ω1 = −i∫V_I = −i g (e^{iδT} − 1)/(iδ) |e⟩⟨g| + h.c. and Ω2 = −½∫∫[V_I(t1), V_I(t2)] =
// −i g² (T/δ − sin(δT)/δ²)(|e⟩⟨e| − |g⟩⟨g|), so iΩ1/T and i(Ω1 + Ω2)/T in closed form.
Deno.test("Magnus Ω1 and Ω2 of a constant coupling on two levels match the closed-form commutator integrals", async () => {
  const engine = await testEngine();
  const delta = 0.9, g = 0.12, t = 7.3;
  const first = runCase(engine, buildCase(parseCase(twoLevelGate(1, t), "gate.toml"))).gate!;
  const second = runCase(engine, buildCase(parseCase(twoLevelGate(2, t), "gate.toml"))).gate!;
  // [e][g] of iΩ1/T = g(e^{iδT} − 1)/(iδT)
  const c = Math.cos(delta * t) - 1, s = Math.sin(delta * t);
  const eg = { re: g * s / (delta * t), im: -g * c / (delta * t) };
  const h1 = first.magnus!.effective, h2 = second.magnus!.effective;
  assertClose(h1.get(1, 0).re, eg.re, { abs: 1e-12 }, "Re H1[e][g]");
  assertClose(h1.get(1, 0).im, eg.im, { abs: 1e-12 }, "Im H1[e][g]");
  assertClose(h1.get(0, 1).re, eg.re, { abs: 1e-12 }, "Re H1[g][e]");
  assertClose(h1.get(0, 1).im, -eg.im, { abs: 1e-12 }, "Im H1[g][e]");
  assertClose(h1.get(0, 0).re, 0, { abs: 1e-12 }, "H1[g][g]");
  const shift = g * g * (1 / delta - Math.sin(delta * t) / (delta * delta * t));
  assertClose(h2.get(1, 1).re, shift, { abs: 1e-12 }, "H2[e][e] = +g²(1/δ − sin δT/(δ²T))");
  assertClose(h2.get(0, 0).re, -shift, { abs: 1e-12 }, "H2[g][g]");
  assertClose(h2.get(1, 0).re, eg.re, { abs: 1e-12 }, "Ω2 adds nothing off the diagonal");
});

// Inside its radius of convergence the Magnus series converges geometrically (the Dyson series faster, as
// xⁿ/n!): with ∫‖V‖dt ≈ 0.37 the truncated exp(Ω1+…+Ωn) reaches the exact propagator to ~1e-12 by order 12.
Deno.test("exp of the whole Magnus sum is the exact propagator when the series converges; Dyson and gate numbers agree", async () => {
  const engine = await testEngine();
  const gate = runCase(engine, buildCase(parseCase(twoLevelGate(12, 7.3, 0.05), "gate.toml"))).gate!;
  const magnus = gate.magnus!.error;
  assert(magnus[12]! < 1e-11, `Magnus error at order 12: ${magnus[12]}`);
  for (let n = 3; n <= 12; n++) {
    assert(magnus[n]! < 0.5 * magnus[n - 1]!, `Magnus error shrinks at order ${n}`);
  }
  assert(gate.normError[12]! < 1e-13, `Dyson norm error at order 12: ${gate.normError[12]}`);
  assertClose(gate.fidelity[12]!, 1, { abs: 1e-13 });
  // the whole space is the subspace: nothing leaks
  assertClose(gate.leakage.exact, 0, { abs: 1e-15 });
  // order 0 is the free evolution: its error is ‖U_I − I‖ restricted to the subspace, the same in both
  assertClose(magnus[0]!, gate.normError[0]!, { abs: 1e-12 });
});

// A three-level ladder with a qubit subspace {g, e}: the exact leakage equals the population the start state
// |g⟩ and |e⟩ leave in f, averaged (the definition, from the run's own exact columns), and the partial sums'
// leakage tends to it order by order.
Deno.test("leakage out of a qubit subspace: the average of the exact populations outside it, approached by the series", async () => {
  const engine = await testEngine();
  const text = (start: string) => `
[levels]
names = ["g", "e", "f"]
[unperturbed]
op = "|e><e| + 1.9*|f><f|"
[perturbation]
op = "0.08*(|e><g| + 1.4*|f><e|) + h.c."
coef = "gauss(t, 8, 2.5)*cos(t)"
[start]
state = "${start}"
subspace = ["g", "e"]
[grid]
t_end = 16
samples = 2
[series]
order = 6
`;
  const fromG = runCase(engine, buildCase(parseCase(text("g"), "leak.toml")));
  const fromE = runCase(engine, buildCase(parseCase(text("e"), "leak.toml")));
  const pf = (o: typeof fromG) => {
    const d = 3, last = o.result.times.length - 1;
    return o.result.exact[2 * (d * last + 2)]! ** 2 + o.result.exact[2 * (d * last + 2) + 1]! ** 2;
  };
  const gate = fromG.gate!;
  assertClose(gate.leakage.exact, (pf(fromG) + pf(fromE)) / 2, { abs: 1e-12 }, "leakage = mean P(f)");
  assert(gate.leakage.exact > 1e-4, `a visible leakage: ${gate.leakage.exact}`);
  assertClose(gate.leakage.series[6]!, gate.leakage.exact, { abs: 1e-6 }, "order 6");
  assertEqual(gate.labels.join(","), "g,e");
});

Deno.test("ordo run --subspace: the gate in the table and in the JSON; an unknown label is exit 2", async () => {
  const file = tempCase(twoLevelGate(3, 5).replace('subspace = ["g", "e"]', 'state = "g"'));
  const run = (args: string[]) =>
    new Deno.Command(Deno.execPath(), {
      args: ["run", "-A", new URL("../cli/main.ts", import.meta.url).pathname, "run", file, ...args],
      stdout: "piped",
      stderr: "piped",
    }).output();
  const json = await run(["--subspace", "g,e", "--json"]);
  assertEqual(json.code, 0, new TextDecoder().decode(json.stderr));
  const result = JSON.parse(new TextDecoder().decode(json.stdout));
  assertEqual(result.gate.subspace.join(","), "g,e");
  assertEqual(result.gate.fidelity.length, 4);
  assertEqual(result.gate.magnus.error.length, 4);
  assertEqual(result.gate.magnus.effective_hamiltonian.matrix.length, 2);
  const table = await run(["--subspace", "g,e"]);
  assert(new TextDecoder().decode(table.stdout).includes("gate on the subspace {g, e}"));
  const bad = await run(["--subspace", "g,x"]);
  assertEqual(bad.code, 2);
  assert(new TextDecoder().decode(bad.stderr).includes('unknown label "x" in the subspace'));
});

Deno.test("a sweep with a subspace writes fidelity per order and the leakage per point, and resumes over them", async () => {
  const dir = Deno.makeTempDirSync();
  const file = tempCase(twoLevelGate(2, 5));
  const sweep = (extra: string[]) =>
    new Deno.Command(Deno.execPath(), {
      args: [
        "run",
        "-A",
        new URL("../cli/main.ts", import.meta.url).pathname,
        "sweep",
        file,
        "--vary",
        "g=0.05:0.2:4",
        "--out",
        dir,
        "--quiet",
        ...extra,
      ],
      stdout: "piped",
      stderr: "piped",
    }).output();
  const first = await sweep([]);
  assertEqual(first.code, 0, new TextDecoder().decode(first.stderr));
  const lines = Deno.readTextFileSync(`${dir}/points.csv`).trim().split("\n");
  const header = lines[0]!.split(",");
  assertEqual(header.slice(-4).join(","), "fidelity:order0,fidelity:order1,fidelity:order2,leakage:exact");
  assertEqual(lines.length, 5);
  // per row: fidelities in [0, 1], rising to 1 at weak coupling; nothing leaks from the whole space
  for (const row of lines.slice(1)) {
    const cells = row.split(",").map(Number);
    const [f0, f1, f2, leak] = cells.slice(-4);
    for (const f of [f0!, f1!, f2!]) assert(f >= 0 && f <= 1 + 1e-12, `fidelity ${f} in [0, 1]`);
    assert(f2! >= f0!, `order 2 (${f2}) at least as good as order 0 (${f0})`);
    assertClose(leak!, 0, { abs: 1e-14 });
  }
  // drop the last row (as if cut): resume recomputes it and keeps the others
  Deno.writeTextFileSync(`${dir}/points.csv`, lines.slice(0, 4).join("\n") + "\n");
  const resumed = await sweep(["--resume"]);
  assertEqual(resumed.code, 0, new TextDecoder().decode(resumed.stderr));
  assertEqual(Deno.readTextFileSync(`${dir}/points.csv`).trim().split("\n").length, 5);
});

// The Magnus series converges for ∫‖V_I‖dt < π (Blanes, Casas, Oteo & Ros, Phys. Rep. 470 (2009) 151); here the
// integral is 100. The run must not fail or print an overflowed number: the Magnus comparison is left out, saying
// why, and the Dyson numbers stay finite.
Deno.test("a divergent Magnus series is left out, saying so, and the gate's Dyson numbers stay finite", async () => {
  const engine = await testEngine();
  const text = twoLevelGate(40, 20, 5);
  const gate = runCase(engine, buildCase(parseCase(text, "gate.toml"))).gate!;
  assertEqual(gate.magnus, undefined);
  assert(gate.magnusSkipped?.includes("diverges") === true, `${gate.magnusSkipped}`);
  for (const x of [...gate.fidelity, ...gate.normError, ...gate.leakage.series]) {
    assert(Number.isFinite(x), `${x}`);
  }
});

Deno.test("a gate with sparse operators: the same fidelities as with dense ones, and the Magnus terms left out, saying why", async () => {
  const engine = await testEngine();
  const file = new URL("../cases/gate_on_mode.toml", import.meta.url).pathname;
  const dense = runCase(engine, buildCase(readCase(file))).gate!;
  const sparse = runCase(engine, buildCase(readCase(file), { operators: "sparse" })).gate!;
  assert(sparse.magnusSkipped?.includes("sparse") === true, `${sparse.magnusSkipped}`);
  sparse.fidelity.forEach((f, n) =>
    assertClose(f, dense.fidelity[n]!, { abs: 1e-8 }, `fidelity, order ${n}`)
  );
  assertClose(sparse.leakage.exact, dense.leakage.exact, { abs: 1e-10 }, "leakage");
});
