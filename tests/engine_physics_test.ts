// The engine against published formulas. Each check names its source.
import { assert, assertEqual } from "./assert.ts";
import { assertClose, testEngine } from "./helpers.ts";
import { solve } from "../engine/mod.ts";
import {
  constantModel,
  drivenOscillator,
  glauberPopulations,
  maxDifference,
  partialSum,
  population,
  solveText,
  twoLevel,
} from "./engine_helpers.ts";

// --- constant coupling switched on at t = 0 ---------------------------------
// First-order transition probability P⁽¹⁾(t) = 4|V|² sin²(ωt/2)/ω² (the sinc²
// form of time-dependent perturbation theory, e.g. Sakurai, Modern Quantum
// Mechanics, §5.6).
const sinc2 = (g: number, w: number, t: number) => 4 * g * g * Math.sin(w * t / 2) ** 2 / (w * w);

Deno.test("first order of a constant coupling is the sinc² form to 1e-9 relative (time-independent scheme)", async () => {
  const g = 0.05;
  for (const delta of [0.1, 0.37, 1, 2.5, 7]) {
    const { result } = await solveText(
      twoLevel(delta, g, 30, { samples: 7, order: 2 }),
    );
    result.times.forEach((t, k) => {
      if (t === 0) return;
      assertClose(population(result.terms[1]!, 2, k, 1), sinc2(g, delta, t), {
        rel: 1e-9,
      }, `δ=${delta}, t=${t}`);
    });
  }
});

Deno.test("first order of a constant coupling is the sinc² form through the time-stepping schemes", async () => {
  // Written with a t-dependent coefficient (1 + 0·t) the same case goes through the interaction-picture
  // integrator, and with H0 carrying the coefficient through the Schrödinger-picture one. At δh ≤ 0.01
  // the 4th-order scheme's error is far below the 1e-9 asked.
  const g = 0.05;
  for (const delta of [0.37, 1, 2.5]) {
    const ip = await solveText(
      twoLevel(delta, g, 30, {
        coef: "1 + 0*t",
        steps: 3000,
        samples: 7,
        order: 2,
      }),
    );
    assert(ip.result.scheme === "interaction-picture");
    const td = await solveText(
      twoLevel(delta, g, 30, { steps: 3000, samples: 7, order: 2 }).replace(
        'op = "delta*|e><e|"',
        'op = "delta*|e><e|"\ncoef = "1 + 0*t"',
      ),
    );
    assert(td.result.scheme === "time-dependent-h0");
    for (const { result } of [ip, td]) {
      const k = result.times.length - 1;
      assertClose(population(result.terms[1]!, 2, k, 1), sinc2(g, delta, 30), {
        rel: 1e-9,
      }, `${result.scheme} δ=${delta}`);
    }
  }
});

Deno.test("the first-order peak grows as t² and narrows as 1/t, carrying weight 2π|V|²t (golden-rule limit)", async () => {
  const g = 0.01;
  const engine = await testEngine();
  // Straight through the library API: H0 = δ|e⟩⟨e|, V = g σx, from |g⟩, first order at time t.
  const p1 = (delta: number, t: number) => {
    const result = solve(
      engine,
      constantModel(
        new Float64Array([0, 0, 0, 0, 0, 0, delta, 0]),
        new Float64Array([0, 0, g, 0, g, 0, 0, 0]),
        new Float64Array([1, 0, 0, 0]),
        t,
        2,
        1,
      ),
    );
    return population(result.terms[1]!, 2, 1, 1);
  };
  for (const t of [50, 100, 200]) {
    // On resonance P⁽¹⁾ = |V|²t² (the δ → 0 limit of the sinc² form).
    assertClose(p1(1e-9, t), g * g * t * t, { rel: 1e-9 }, `peak at t=${t}`);
    // sin²(x)/x² falls to half at x = 1.39156 (its half-width), so the half maximum sits at δ = 2.78311/t.
    assertClose(
      p1(2.783115 / t, t) / (g * g * t * t),
      0.5,
      { abs: 1e-5 },
      `half width at t=${t}`,
    );
    // ∫P⁽¹⁾dδ → 2π|V|²t: trapezoid over δ ∈ [−4, 4] on engine values, 20 points per 2π/t;
    // the tails beyond ±4 hold about 4|V|²/4·2 ≈ 2|V|², under 1% of the weight here.
    const W = 4, n = Math.ceil(2 * W * t * 20 / (2 * Math.PI)) | 1;
    let integral = 0;
    for (let k = 0; k < n; k++) {
      const delta = -W + 2 * W * (k + 0.5) / n;
      integral += p1(delta, t) * (2 * W / n);
    }
    assertClose(
      integral,
      2 * Math.PI * g * g * t,
      { rel: 0.02 },
      `weight at t=${t}`,
    );
  }
});

// --- a level decaying into a band ---------------------------------------------
// Fermi's golden rule Γ = 2π|V|²ρ; Σ_f|c_f⁽¹⁾|² ≈ Γt and exact survival ≈ e^{−Γt}
// for 1/W ≪ t ≪ 2πρ (Weisskopf & Wigner, Z. Phys. 63, 1930).
Deno.test("a level coupled to a band of 300 levels decays at the golden-rule rate", async () => {
  const n = 300, eps = 0.02, v = 0.004; // W = 6, ρ = 50, Γ ≈ 5.03e-3, 2πρ ≈ 314
  const gamma = 2 * Math.PI * v * v / eps;
  const text = `
[params]
n = ${n}
eps = ${eps}
v = ${v}
[levels]
count = ${n + 1}
[unperturbed]
matrix = { entry = "row == col and row > 0 ? (row - (n + 1)/2) * eps : 0" }
[perturbation]
matrix = { entry = "(row == 0) != (col == 0) ? v : 0" }
[start]
state = "0"
[grid]
t_end = 120
steps = 1
samples = 7
[series]
order = 1
`;
  const { result } = await solveText(text);
  const d = n + 1;
  for (let k = 1; k < result.times.length; k++) {
    const t = result.times[k]!;
    let leaked = 0;
    for (let f = 1; f < d; f++) leaked += population(result.terms[1]!, d, k, f);
    assertClose(leaked, gamma * t, { rel: 0.02 }, `Σ|c_f⁽¹⁾|² at t=${t}`);
    assertClose(population(result.exact, d, k, 0), Math.exp(-gamma * t), {
      rel: 0.02,
    }, `survival at t=${t}`);
  }
});

// --- Rabi -------------------------------------------------------------------------
// H = Δ|e⟩⟨e| + g σx: P_e = (4g²/Ω²) sin²(Ωt/2), Ω = √(Δ² + 4g²) (Rabi, Phys. Rev. 51, 1937).
Deno.test("exact populations follow the Rabi formula to 1e-10 in all three schemes", async () => {
  const delta = 0.8, g = 0.3;
  const omega = Math.sqrt(delta * delta + 4 * g * g);
  const rabi = (t: number) => 4 * g * g / (omega * omega) * Math.sin(omega * t / 2) ** 2;
  const base = twoLevel(delta, g, 25, { samples: 11, order: 2, steps: 4000 });
  const cases = [
    base,
    base.replace(
      'op = "g*|e><g| + h.c."',
      'op = "g*|e><g| + h.c."\ncoef = "1 + 0*t"',
    ),
    base.replace(
      'op = "delta*|e><e|"',
      'op = "delta*|e><e|"\ncoef = "1 + 0*t"',
    ),
  ];
  for (const text of cases) {
    const { result } = await solveText(text);
    result.times.forEach((t, k) =>
      assertClose(
        population(result.exact, 2, k, 1),
        rabi(t),
        { abs: 1e-10 },
        `${result.scheme} t=${t}`,
      )
    );
  }
});

// The same two-level system with accuracy-driven steps (the embedded Runge–Kutta pair in the interaction
// picture), at the lowest orders, where the stacked state is shortest: the exact state on Rabi's formula, and
// the first-order partial sum on the sinc² form above (its |e⟩ amplitude is the first-order one alone).
Deno.test("accuracy-driven runs of orders 0, 1 and 2 keep Rabi's formula and the first-order sin² form", async () => {
  const delta = 0.8, g = 0.3, accuracy = 1e-9;
  const omega = Math.sqrt(delta * delta + 4 * g * g);
  const rabi = (t: number) => 4 * g * g / (omega * omega) * Math.sin(omega * t / 2) ** 2;
  for (const order of [0, 1, 2]) {
    const text = twoLevel(delta, g, 25, { samples: 11, order, coef: "1 + 0*t" });
    const { result } = await solveText(text, { accuracy });
    assertEqual(result.method, "runge-kutta-8", `order ${order}: the accuracy-driven pair`);
    result.times.forEach((t, k) => {
      assertClose(
        population(result.exact, 2, k, 1),
        rabi(t),
        { abs: 10 * accuracy },
        `order ${order} t=${t}`,
      );
      if (order >= 1) {
        assertClose(
          population(partialSum(result, 1), 2, k, 1),
          sinc2(g, delta, t),
          { abs: 10 * accuracy },
          `P1 t=${t}`,
        );
      }
    });
  }
});

// --- swept avoided crossing -------------------------------------------------------
// H = (vt/2)σz + gσx (Landau, Phys. Z. Sowjetunion 2, 1932; Zener, Proc. R. Soc. A 137, 1932):
// P = 1 − e^{−2πg²/v} for an infinite sweep. First order over [−T, T]:
// P⁽¹⁾ = g²|∫e^{ivt²/2}dt|² = g²(4π/v)(C(U)² + S(U)²), U = T√(v/π), with the Fresnel
// integrals C, S from their asymptotic expansions (Abramowitz & Stegun 7.3.9, 7.3.10, 7.3.27, 7.3.28).
function fresnel(z: number): { c: number; s: number } {
  const x = Math.PI * z * z;
  const f = (1 - 3 / x ** 2 + 105 / x ** 4 - 10395 / x ** 6) / (Math.PI * z);
  const g = (1 / x - 15 / x ** 3 + 945 / x ** 5) / (Math.PI * z);
  const phase = x / 2;
  return {
    c: 0.5 + f * Math.sin(phase) - g * Math.cos(phase),
    s: 0.5 - f * Math.cos(phase) - g * Math.sin(phase),
  };
}

Deno.test("swept avoided crossing: first order is the finite-window Fresnel value, exact is Landau–Zener", async () => {
  const v = 1, g = 0.1, T = 60;
  const text = Deno.readTextFileSync(
    new URL("../cases/swept_crossing.toml", import.meta.url),
  );
  const { result, built } = await solveText(text);
  assert(result.scheme === "time-dependent-h0");
  assert(
    built.model.tStart === -T && built.model.tEnd === T,
    "the example's window is [−60, 60]",
  );
  const k = result.times.length - 1;
  const U = T * Math.sqrt(v / Math.PI);
  const { c, s } = fresnel(U);
  const firstOrder = g * g * (4 * Math.PI / v) * (c * c + s * s);
  const p1 = population(result.terms[1]!, 2, k, 1);
  assertClose(
    p1,
    firstOrder,
    { rel: 1e-6 },
    "P⁽¹⁾ against the Fresnel integrals",
  );
  // The window's ends each add an amplitude of at most g/(vT) (integration by parts of the tail),
  // so a finite window differs from the infinite sweep by at most 2√P·δ + δ², δ = 2g/(vT).
  const lz1 = 2 * Math.PI * g * g / v, lz = 1 - Math.exp(-lz1);
  const delta = 2 * g / (v * T);
  assertClose(
    p1,
    lz1,
    { abs: 2 * Math.sqrt(lz1) * delta + delta * delta },
    "P⁽¹⁾ → 2πg²/v",
  );
  assertClose(population(result.exact, 2, k, 1), lz, {
    abs: 2 * Math.sqrt(lz) * delta + delta * delta,
  }, "exact → Landau–Zener");
});

// --- driven truncated oscillator ------------------------------------------------------
// H = ωa†a + f(t)(a + a†) from |0⟩ gives a coherent state (Glauber, Phys. Rev. 131, 1963): Poisson
// populations with mean |α|², α = −i∫f(s)e^{iωs}ds. For f = F·exp(−(s−c)²/(2w²)) the integral over
// the line is F·w·√(2π)·e^{iωc}·e^{−ω²w²/2}; the window [0, 30] with c = 15, w = 2 cuts e^{−28} of it.
Deno.test("a driven truncated oscillator ends in a coherent state: Poisson populations to 1e-8", async () => {
  const omega = 1, F = 0.3, w = 2;
  const { result } = await solveText(drivenOscillator(omega, F, w, "steps = 3000"));
  glauberPopulations(omega, F, w, 8).forEach((poisson, n) =>
    assertClose(population(result.exact, 16, 2, n), poisson, { abs: 1e-8 }, `P(${n})`)
  );
});

// --- convergence of the scheme and of the series -------------------------------------
/**
 * Empirical convergence orders under step halving (common practice): the exact state at the end of the
 * window for 50, 100, 200, 400 steps against 12800 steps; each halving must gain at least 2^3.8.
 */
async function assertFourthOrder(text: (steps: number) => string, scheme: string): Promise<void> {
  const final = async (steps: number) => {
    const { result } = await solveText(text(steps));
    assert(result.scheme === scheme, result.scheme);
    return result.exact.slice(4, 8);
  };
  const reference = await final(12800);
  const errors: number[] = [];
  for (const steps of [50, 100, 200, 400]) errors.push(maxDifference(await final(steps), reference));
  for (let j = 1; j < errors.length; j++) {
    const order = Math.log2(errors[j - 1]! / errors[j]!);
    assert(order >= 3.8, `${scheme}: order ${order.toFixed(2)} from ${errors[j - 1]} → ${errors[j]}`);
  }
}

Deno.test("the integrator's empirical order is at least 3.8 under step halving (common practice)", async () => {
  await assertFourthOrder(
    (steps) => twoLevel(1, 0.3, 10, { coef: "gauss(t, 5, 1.5)*cos(1.3*t)", steps, samples: 2, order: 3 }),
    "interaction-picture",
  );
});

Deno.test("the Schrödinger-picture scheme for H0(t) is 4th order too (common practice: step halving)", async () => {
  // A short swept crossing: H0(t) = δ(t − 3)|e⟩⟨e| carries the time dependence.
  await assertFourthOrder(
    (steps) =>
      twoLevel(1, 0.2, 6, { steps, samples: 2, order: 3 }).replace(
        'op = "delta*|e><e|"',
        'op = "delta*|e><e|"\ncoef = "t - 3"',
      ),
    "time-dependent-h0",
  );
});

Deno.test("partial sums to high order agree with the exact state of the same grid to 1e-12, in every scheme", async () => {
  const driven = twoLevel(1, 0.3, 10, {
    coef: "gauss(t, 5, 1.5)*cos(1.3*t)",
    steps: 200,
    samples: 5,
    order: 24,
  });
  const cases = [
    driven, // interaction picture
    driven.replace('op = "delta*|e><e|"', 'op = "delta*|e><e|"\ncoef = "1 + 0.1*t"'), // H0(t)
    twoLevel(1, 0.3, 10, { samples: 5, order: 24 }), // time-independent
  ];
  for (const text of cases) {
    const { result } = await solveText(text);
    const difference = maxDifference(partialSum(result, 24), result.exact);
    assert(difference < 1e-12, `${result.scheme}: difference ${difference}`);
    // and the low orders do not (the check can fail)
    assert(maxDifference(partialSum(result, 2), result.exact) > 1e-4, result.scheme);
  }
});
