// `ordo run`: the JSON contract on every example, the CSV and the report's
// SVGs, and the verdict logic on constructed cases.
import { XMLParser, XMLValidator } from "fast-xml-parser";
import { all, type Complex, create, type Matrix } from "mathjs";
import { assert, assertDeepEqual, assertEqual } from "./assert.ts";
import { assertClose, runOrdo, tempCase, testEngine } from "./helpers.ts";
import { twoLevel } from "./engine_helpers.ts";
import { parseCase } from "../cli/case/parse.ts";
import { buildCase } from "../cli/case/build.ts";
import { inspectCase } from "../cli/analysis/inspection.ts";
import { palette } from "../cli/report/plots.ts";

const math = create(all!);

const CASES = [...Deno.readDirSync(new URL("../cases/", import.meta.url))].map((e) =>
  new URL(`../cases/${e.name}`, import.meta.url).pathname
).sort();

// deno-lint-ignore no-explicit-any
async function runJson(args: string[]): Promise<any> {
  const { code, stdout, stderr } = await runOrdo(["run", ...args, "--json", "--quiet"]);
  assertEqual(code, 0, stderr);
  return JSON.parse(stdout); // stdout holds the JSON and nothing else
}

Deno.test("run --json satisfies the result contract for every example", async () => {
  assert(CASES.length >= 5, "at least five examples");
  for (const file of CASES) {
    const r = await runJson([file]);
    assertEqual(r.ordo, "0.1.0");
    assert(typeof r.case.title === "string" && /^[0-9a-f]{64}$/.test(r.case.sha256), file);
    assert(typeof r.case.params === "object");
    assert(
      typeof r.method.scheme === "string" && Number.isInteger(r.method.steps) &&
        Number.isInteger(r.method.order),
    );
    assert(typeof r.method.reference_error === "number");
    const samples = r.times.length;
    assert(samples >= 2 && r.times[0] < r.times[samples - 1], "times ascend");
    assertEqual(r.series.length, r.method.order + 1, "one series entry per order");
    for (const label of r.labels) {
      assertEqual(r.exact[label].length, samples, `${file}: exact[${label}]`);
      assertEqual(r.final.exact[label], r.exact[label][samples - 1], "final.exact is the last sample");
      r.series.forEach((s: Record<string, number[]>, n: number) => {
        assertEqual(s[label]!.length, samples);
        assertEqual(r.final.series[n][label], s[label]![samples - 1], "final.series is the last sample");
      });
      for (const p of r.exact[label]) assert(p >= 0 && p <= 1 + 1e-12, "populations are probabilities");
    }
  }
});

Deno.test("run --out writes result.json, a tidy populations.csv that round-trips, and a report whose SVGs parse", async () => {
  const dir = Deno.makeTempDirSync();
  const file = new URL("../cases/two_level.toml", import.meta.url).pathname;
  const { code, stderr } = await runOrdo(["run", file, "--out", dir, "--quiet"]);
  assertEqual(code, 0, stderr);
  const result = JSON.parse(Deno.readTextFileSync(`${dir}/result.json`));
  assert(result.provenance.includes(result.case.sha256), "provenance in result.json");
  // CSV: the header first (plain readers take the first line as the header; provenance is in result.json),
  // then one row per (time, label, source).
  const lines = Deno.readTextFileSync(`${dir}/populations.csv`).trim().split("\n");
  assertEqual(lines[0], "time,label,source,population");
  const rows = lines.slice(1).map((l) => l.split(","));
  assertEqual(rows.length, result.times.length * result.labels.length * (result.series.length + 1));
  for (const [time, label, source, population] of rows) {
    const k = result.times.indexOf(Number(time));
    assert(k >= 0, `time ${time} is a recorded time`);
    const expected = source === "exact"
      ? result.exact[label!][k]
      : result.series[Number(source!.slice(5))][label!][k];
    assertEqual(Number(population), expected, `${time},${label},${source}`);
  }
  // The report: self-contained, SVGs that parse, one line path per plotted series.
  const html = Deno.readTextFileSync(`${dir}/report.html`);
  assert(!/<script[^>]*src=|<link[^>]*href="http/.test(html), "no network resources");
  assert(html.includes(result.case.sha256), "provenance in the report");
  const svgs = html.match(/<svg[\s\S]*?<\/svg>/g) ?? [];
  assertEqual(svgs.length, 3 * result.labels.length, "three plots per target");
  const expectedSeries = [result.series.length + 1, 2, result.series.length];
  svgs.forEach((svg, k) => {
    assertEqual(XMLValidator.validate(svg), true, `SVG ${k} is well-formed XML`);
    const tree = new XMLParser({ ignoreAttributes: false, attributeNamePrefix: "" }).parse(svg);
    let linePaths = 0;
    // deno-lint-ignore no-explicit-any
    const walk = (node: any, inLine: boolean) => {
      if (Array.isArray(node)) return node.forEach((n) => walk(n, inLine));
      if (node === null || typeof node !== "object") return;
      const here = inLine || (typeof node.class === "string" && node.class.includes("mark-line"));
      for (const [key, value] of Object.entries(node)) {
        if (key === "path" && here) linePaths += Array.isArray(value) ? value.length : 1;
        else walk(value, here);
      }
    };
    walk(tree, false);
    assertEqual(linePaths, expectedSeries[k % 3], `SVG ${k}: one path per series`);
  });
});

Deno.test("the verdict finds the order needed and says first order is off by more than 10%", async () => {
  // Expected values from outside the engine, for cases/two_level.toml (δ = 1, g = 0.05, t = 30, from g):
  // exact P_e by the Rabi formula (4g²/Ω²) sin²(Ωt/2), first order by the sinc² form 4g² sin²(δt/2)/δ²,
  // and the partial sums from the Van Loan block exponential computed with mathjs expm.
  const [delta, g, t, tol] = [1, 0.05, 30, 1e-6];
  const omega = Math.sqrt(delta * delta + 4 * g * g);
  const exact = 4 * g * g / (omega * omega) * Math.sin(omega * t / 2) ** 2;
  const firstOrder = 4 * g * g * Math.sin(delta * t / 2) ** 2 / (delta * delta);
  const N = 6, D = 2 * (N + 1);
  const A = math.zeros(D, D) as Matrix;
  for (let b = 0; b <= N; b++) {
    A.set([2 * b + 1, 2 * b + 1], delta);
    if (b > 0) [A.set([2 * b, 2 * (b - 1) + 1], g), A.set([2 * b + 1, 2 * (b - 1)], g)];
  }
  const block = math.expm(math.multiply(math.complex(0, -t), A) as Matrix);
  let re = 0, im = 0, expectedOrder: number | null = null;
  for (let n = 0; n <= N; n++) {
    const z = math.complex(block.get([2 * n + 1, 0]) as Complex);
    [re, im] = [re + z.re, im + z.im];
    if (expectedOrder === null && Math.abs(re * re + im * im - exact) <= tol) expectedOrder = n;
  }

  const r = await runJson([new URL("../cases/two_level.toml", import.meta.url).pathname]);
  const e = r.analysis.targets[0];
  assertEqual(e.label, "e");
  assertClose(e.exact, exact, { abs: 1e-12 }, "exact against the Rabi formula");
  assertClose(
    e.first_order_relative_error,
    Math.abs(firstOrder - exact) / exact,
    { rel: 1e-8 },
    "first-order error",
  );
  assert(e.first_order_relative_error > 0.1);
  assertEqual(e.min_order, expectedOrder, "smallest order within 1e-6, from the mathjs partial sums");
  const { stdout } = await runOrdo([
    "run",
    new URL("../cases/two_level.toml", import.meta.url).pathname,
    "--quiet",
  ]);
  const pct = (100 * Math.abs(firstOrder - exact) / exact).toPrecision(3);
  assert(
    stdout.includes(`first order is OFF by ${pct}%`) &&
      stdout.includes(`order ${expectedOrder} meets the tolerance`),
    stdout,
  );
});

Deno.test("the verdict calls a weak coupling converged at low order with first order within 1%", async () => {
  const r = await runJson([tempCase(twoLevel(1, 0.002, 30, { order: 4 }))]);
  const e = r.analysis.targets.find((t: { label: string }) => t.label === "e");
  assert(e.first_order_relative_error < 0.01, String(e.first_order_relative_error));
  assert(e.min_order !== null && e.min_order <= 2, String(e.min_order));
  assertEqual(r.analysis.growing_terms, false);
});

Deno.test("the verdict warns when the Dyson terms grow with order", async () => {
  // x = ∫‖V‖dt = 2·10 = 20: term norms grow like 20ⁿ/n! up to n ≈ 20.
  const text = tempCase(twoLevel(1, 2, 10, { order: 6 }));
  const r = await runJson([text]);
  assertEqual(r.analysis.growing_terms, true);
  const { stdout } = await runOrdo(["run", text, "--quiet"]);
  assert(stdout.includes("WARNING: the Dyson terms grow with order"), stdout);
});

Deno.test("the verdict refuses to call an order converged when the reference is too coarse", async () => {
  // A fast drive with too few steps (0.9 rad per step: resolved, but coarse): the step-doubling estimate is large.
  const text = tempCase(twoLevel(5, 0.3, 20, { coef: "cos(5*t)", steps: 120, samples: 3, order: 8 }));
  const r = await runJson([text]);
  assertEqual(r.analysis.reference_ok, false);
  for (const t of r.analysis.targets) assertEqual(t.min_order, null);
  const { stdout } = await runOrdo(["run", text, "--quiet"]);
  assert(stdout.includes("TOO LARGE to judge orders"), stdout);
  // Far too few (5 rad per step): the phase is not resolved, and nothing is judged whatever the estimate says.
  const aliased = tempCase(twoLevel(5, 0.3, 20, { coef: "cos(5*t)", steps: 20, samples: 3, order: 8 }));
  const a = await runJson([aliased]);
  assertEqual(a.analysis.reference_ok, false);
  assert(a.analysis.untrusted[0].includes("cannot resolve the fastest phase"), a.analysis.untrusted[0]);
  for (const t of a.analysis.targets) assertEqual(t.min_order, null);
});

Deno.test("run flags override the case: --order, --steps, --set, --targets, --at", async () => {
  const file = new URL("../cases/two_level.toml", import.meta.url).pathname;
  const r = await runJson([file, "--order", "3", "--set", "g=0.01", "--targets", "g,e", "--at", "15"]);
  assertEqual(r.method.order, 3);
  assertEqual(r.case.params.g, 0.01);
  assertDeepEqual(r.labels, ["g", "e"]);
  assertClose(r.analysis.time, 15, { abs: 0.16 }, "reported at the recorded time nearest to 15");
  const steps = await runJson([
    new URL("../cases/kicked_oscillator.toml", import.meta.url).pathname,
    "--steps",
    "400",
  ]);
  assertEqual(steps.method.steps, 400);
});

// The tail of the Dyson series obeys ‖Σ_{m>n} ψm‖ ≤ e^x − Σ_{m≤n} xᵐ/m!, x = ∫‖λV‖dt (each term is bounded by
// xⁿ/n!, a standard estimate of the time-ordered exponential), so a population error never exceeds ε(2+ε).
Deno.test("every example's population errors stay under the a-priori bound at every order", async () => {
  for (const file of CASES) {
    const whole = await runJson([file]);
    const middle = (whole.times[0] + whole.times[whole.times.length - 1]) / 2;
    // at the end of the window, and half-way (where x = ∫‖λV‖dt up to that time is used)
    for (const r of [whole, await runJson([file, "--at", String(middle)])]) {
      for (const t of r.analysis.targets) {
        for (const o of t.orders) {
          // allowance: the discretisation error of the shared grid, far below every bound here
          assert(
            o.error <= o.bound + 1e-9,
            `${file} t=${r.analysis.time} ${t.label} order ${o.order}: ${o.error} > ${o.bound}`,
          );
        }
      }
    }
  }
});

Deno.test("run --out prints no notes of the plotting library (vega-lite) on the terminal", async () => {
  const out = Deno.makeTempDirSync();
  const main = new URL("../cli/main.ts", import.meta.url).pathname;
  const file = new URL("../cases/leaky_transmon.toml", import.meta.url).pathname;
  const r = await new Deno.Command(Deno.execPath(), {
    args: ["run", "-A", main, "run", file, "--out", out, "--quiet"],
  })
    .output();
  const stderr = new TextDecoder().decode(r.stderr);
  assert(r.success, stderr);
  assert(!/WARN/.test(stderr), stderr);
});

Deno.test("every CSV ordo writes starts with its header row, so that plain CSV readers take it as is", async () => {
  const dir = Deno.makeTempDirSync();
  const cases = new URL("../cases/", import.meta.url).pathname;
  assertEqual((await runOrdo(["run", `${cases}two_level.toml`, "--out", `${dir}/run`, "--quiet"])).code, 0);
  assertEqual(
    (await runOrdo(["sweep", `${cases}weak_drive_check.toml`, "--out", `${dir}/sweep`, "--quiet"])).code,
    0,
  );
  for (const csv of [`${dir}/run/populations.csv`, `${dir}/run/amplitudes.csv`, `${dir}/sweep/points.csv`]) {
    const [header, first] = Deno.readTextFileSync(csv).split("\n");
    assert(/^[A-Za-z_][\w:,]*$/.test(header!), `${csv}: a header of names, got ${header}`);
    assertEqual(header!.split(",").length, first!.split(",").length, `${csv}: as many names as cells`);
  }
});

// x = ∫‖λV(t)‖₂dt. For V = g(|e⟩⟨g| + |g⟩⟨e|) the norm is g (eigenvalues ±g, common practice): a term and its
// + h.c. partner must be counted once, not twice by the triangle inequality.
Deno.test("the norm bound x equals the exact ∫‖V‖dt for a two-level coupling with + h.c.", async () => {
  const engine = await testEngine();
  const g = 0.05;
  const constant = buildCase(parseCase(twoLevel(1, g, 30), "x.toml"));
  assertClose(inspectCase(engine, constant).normIntegral, g * 30, { rel: 1e-12 }, "constant coupling: g·T");
  // g·cos(t) over [0, 4π]: ∫|cos t|dt = 8, so x = 8g (the trapezoid rule on 4001+ points, to 1e-5)
  const driven = buildCase(parseCase(twoLevel(1, g, 4 * Math.PI, { coef: "cos(t)", steps: 2000 }), "y.toml"));
  assertClose(inspectCase(engine, driven).normIntegral, 8 * g, { rel: 1e-5 }, "cos drive: 8g");
});

Deno.test("run --out writes every plot as a standalone SVG and PNG, with a caption line in the case's units", async () => {
  const dir = Deno.makeTempDirSync();
  const file = new URL("../cases/leaky_transmon.toml", import.meta.url).pathname;
  assertEqual((await runOrdo(["run", file, "--out", dir, "--quiet"])).code, 0);
  const captions = Deno.readTextFileSync(`${dir}/figures.md`).split("\n").filter((l) => l.startsWith("- "));
  assertEqual(captions.length, 6, "three figures per target, two targets");
  for (const target of ["1", "2"]) {
    for (const name of ["populations", "error-by-order", "error-by-time"]) {
      assertEqual(XMLValidator.validate(Deno.readTextFileSync(`${dir}/${target}-${name}.svg`)), true);
      const png = Deno.readFileSync(`${dir}/${target}-${name}.png`);
      // the PNG signature, then an IHDR chunk whose width and height are not zero (PNG specification)
      assertDeepEqual([...png.slice(0, 8)], [137, 80, 78, 71, 13, 10, 26, 10]);
      const view = new DataView(png.buffer, png.byteOffset);
      assert(view.getUint32(16) > 400 && view.getUint32(20) > 200, `${target}-${name}.png has a size`);
    }
  }
  assert(captions.some((c) => c.includes("t in ns")), "captions give the time unit");
});

Deno.test("orders are coloured along a sequential scale: each next order is lighter (relative luminance, sRGB)", () => {
  const colours = palette(11);
  assertEqual(new Set(colours).size, 11);
  const luminance = (hex: string) => {
    const [r, g, b] = [1, 3, 5].map((p) => parseInt(hex.slice(p, p + 2), 16) / 255)
      .map((c) => (c <= 0.04045 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4));
    return 0.2126 * r! + 0.7152 * g! + 0.0722 * b!;
  };
  for (let k = 1; k < colours.length; k++) {
    assert(luminance(colours[k]!) > luminance(colours[k - 1]!), colours.join());
  }
});

// Rabi's problem H = δ|e⟩⟨e| + g(|e⟩⟨g| + |g⟩⟨e|) from |g⟩ (Rabi 1937; Sakurai, Modern Quantum Mechanics §5.5, from
// memory), in the Schrödinger picture: with Ω = √(δ² + 4g²),
// c_g(t) = e^{−iδt/2}[cos(Ωt/2) + i(δ/Ω) sin(Ωt/2)],  c_e(t) = −i e^{−iδt/2}(2g/Ω) sin(Ωt/2).
Deno.test("amplitudes: the exact ones follow Rabi's closed form with its phase (Schrödinger picture), to 1e-10", async () => {
  const delta = 0.7, g = 0.2;
  const r = await runJson([tempCase(twoLevel(delta, g, 30, { samples: 31, order: 4 }))]);
  assertEqual(r.amplitudes.picture, "schrodinger");
  assertEqual(r.basis, "bare");
  const omega = Math.sqrt(delta ** 2 + 4 * g ** 2);
  r.times.forEach((t: number, k: number) => {
    const [pr, pi] = [Math.cos(-delta * t / 2), Math.sin(-delta * t / 2)];
    const [gr, gi] = [Math.cos(omega * t / 2), (delta / omega) * Math.sin(omega * t / 2)];
    const eIm = -(2 * g / omega) * Math.sin(omega * t / 2);
    const expected: Record<string, [number, number]> = {
      g: [pr * gr - pi * gi, pr * gi + pi * gr],
      e: [-pi * eIm, pr * eIm], // e^{iφ}·(i·eIm)
    };
    for (const label of ["g", "e"]) {
      const [re, im] = r.amplitudes.exact[label][k];
      assertClose(re, expected[label]![0], { abs: 1e-10 }, `Re c_${label}(${t})`);
      assertClose(im, expected[label]![1], { abs: 1e-10 }, `Im c_${label}(${t})`);
    }
  });
});

// First order for a Gaussian pulse f(t) = exp(−(t−c)²/(2w²)) on V = g(|e⟩⟨g| + h.c.), H0 = δ|e⟩⟨e|:
// ψ_e⁽¹⁾(T) = −i g e^{−iδT} ∫₀ᵀ f(s) e^{iδs} ds, and ∫ over the line is w√(2π)·e^{iδc}·e^{−δ²w²/2} (the Fourier
// transform of a Gaussian); the window [0, 40] with c = 20, w = 2.5 cuts e^{−32} of it.
Deno.test("amplitudes: the first-order term of a Gaussian pulse is the Gaussian's Fourier transform, to 1e-9", async () => {
  const delta = 0.9, g = 0.01, c = 20, w = 2.5, T = 40;
  const text = twoLevel(delta, g, T, { coef: `gauss(t, ${c}, ${w})`, steps: 4000, samples: 3, order: 2 });
  const r = await runJson([tempCase(text)]);
  const last = r.times.length - 1;
  const [s1r, s1i] = r.amplitudes.series[1].e[last], [s0r, s0i] = r.amplitudes.series[0].e[last];
  const mag = g * w * Math.sqrt(2 * Math.PI) * Math.exp(-((delta * w) ** 2) / 2);
  const phase = delta * c - delta * T - Math.PI / 2; // −i·e^{−iδT}·e^{iδc}
  assertClose(s1r - s0r, mag * Math.cos(phase), { abs: 1e-9 }, "Re ψ_e⁽¹⁾(T)");
  assertClose(s1i - s0i, mag * Math.sin(phase), { abs: 1e-9 }, "Im ψ_e⁽¹⁾(T)");
});

// ⟨σz⟩ with σz = |e⟩⟨e| − |g⟩⟨g| is the population difference P_e − P_g (common practice): for the exact state, for
// every partial sum, and order by order in λ for the consistent expansion.
Deno.test("an observable σz equals the population difference, exactly and order by order", async () => {
  const text = twoLevel(1, 0.3, 20, { coef: "gauss(t, 10, 3)", steps: 800, samples: 11, order: 5 }) + `
[[observable]]
name = "sigma_z"
op = "|e><e| - |g><g|"
`;
  const r = await runJson([tempCase(text), "--targets", "g,e"]);
  const o = r.observables.sigma_z;
  r.times.forEach((_: number, k: number) => {
    assertClose(o.exact[k], r.exact.e[k] - r.exact.g[k], { abs: 1e-14 }, `exact at ${k}`);
    r.series.forEach((s: Record<string, number[]>, n: number) => {
      assertClose(o.series[n][k], s.e![k]! - s.g![k]!, { abs: 1e-14 }, `order ${n} at ${k}`);
    });
  });
  const last = r.times.length - 1;
  const [g, e] = ["g", "e"].map((l) => r.analysis.targets.find((t: { label: string }) => t.label === l));
  for (let n = 0; n <= 5; n++) {
    assertClose(
      o.consistent[n][last],
      e.orders[n].consistent - g.orders[n].consistent,
      { abs: 1e-14 },
      `λ^${n}`,
    );
  }
  const { stdout } = await runOrdo(["run", tempCase(text), "--quiet"]);
  assert(stdout.includes("observable sigma_z: exact"), stdout);
});

Deno.test("an observable that is not Hermitian is refused with where", async () => {
  const text = twoLevel(1, 0.3, 20) + `
[[observable]]
name = "bad"
op = "|e><g|"
`;
  const { code, stderr } = await runOrdo(["run", tempCase(text), "--quiet"]);
  assertEqual(code, 2);
  assert(stderr.includes('observable "bad" is not Hermitian') && stderr.includes("observable[0].op"), stderr);
});

// A weak off-resonant coupling leaves a population of order (2g/δ)²·sin² ≈ 4e-7 in e (the sinc² form, NUMERICS.md).
// Judged absolutely at 1e-6 order 0 (nothing in e) "meets the tolerance"; judged relatively it does not.
Deno.test("a relative tolerance judges a small population by its size; the verdict says which tolerance applied", async () => {
  const base = twoLevel(1, 0.0003, 30, { samples: 2, order: 4 });
  const absolute = await runJson([tempCase(base)]);
  const e = (r: { analysis: { targets: { label: string; min_order: number | null }[] } }) =>
    r.analysis.targets.find((t) => t.label === "e")!;
  assertEqual(e(absolute).min_order, 0, "absolutely, order 0 is within 1e-6 of a tiny population");
  const relative = tempCase(base.replace("order = 4", "order = 4\ntolerance = { rel = 0.01, abs = 1e-12 }"));
  const r = await runJson([relative]);
  assertEqual(r.analysis.relative_tolerance, 0.01);
  assert(
    e(r).min_order !== null && e(r).min_order! >= 1,
    `relatively, first order is needed: ${e(r).min_order}`,
  );
  const { stdout } = await runOrdo(["run", relative, "--quiet"]);
  assert(stdout.includes("1% of the exact value, or 1.0e-12 absolute"), stdout);
});

// Dressed states: with a non-diagonal H0 the eigenbasis populations differ from the bare ones. The independent
// computation uses mathjs only: eigs of the real symmetric H0 (its eigenvectors φ_k) and expm(−iHt)ψ0, then
// |⟨φ_k|ψ(t)⟩|².
Deno.test("basis = eigen reports populations in H0's eigenstates, as mathjs eigs and expm give them", async () => {
  const h0 = [[0, 0.3, 0], [0.3, 1, 0.2], [0, 0.2, 2.1]], v = [[0, 0, 0.05], [0, 0, 0], [0.05, 0, 0]];
  const text = `
[levels]
names = ["a", "b", "c"]
[unperturbed]
matrix = ${JSON.stringify(h0)}
[perturbation]
matrix = ${JSON.stringify(v)}
[start]
state = "a"
[grid]
t_end = 7
samples = 2
[series]
order = 6
basis = "eigen"
`;
  const r = await runJson([tempCase(text)]);
  assertEqual(r.basis, "eigen");
  const eig = math.eigs(h0) as unknown as { eigenvectors: { value: number; vector: number[] }[] };
  const vectors = eig.eigenvectors.sort((x, y) => x.value - y.value).map((e) => e.vector);
  const h = math.add(math.matrix(h0), math.matrix(v));
  const u = math.expm(math.multiply(math.complex(0, -7), h) as Matrix) as Matrix;
  const psi = [0, 1, 2].map((i) => math.complex(u.get([i, 0]) as Complex));
  const labels: string[] = r.levels;
  vectors.forEach((phi, k) => {
    const overlap = phi.reduce(
      (s: Complex, x, i) => math.add(s, math.multiply(x, psi[i]!)) as Complex,
      math.complex(0, 0),
    );
    const expected = Number(math.abs(overlap)) ** 2;
    assertClose(r.final.exact[labels[k]!], expected, { abs: 1e-10 }, `eigenstate ${k} (${labels[k]})`);
  });
  // and they are not the bare populations
  const bare = await runJson([tempCase(text.replace('basis = "eigen"', ""))]);
  assert(Math.abs(bare.final.exact.a - r.final.exact[labels[0]!]) > 1e-3, "dressed and bare differ here");
});

Deno.test("run --show amplitude prints each partial sum's modulus and phase; the exact phase is Rabi's", async () => {
  // Rabi (see above): c_e(T) = −i e^{−iδT/2}(2g/Ω) sin(ΩT/2); δ = 1, g = 0.05, T = 30.
  const delta = 1, g = 0.05, T = 30, omega = Math.sqrt(delta ** 2 + 4 * g ** 2);
  const { stdout } = await runOrdo([
    "run",
    new URL("../cases/two_level.toml", import.meta.url).pathname,
    "--show",
    "amplitude",
    "--quiet",
  ]);
  const m = /amplitude of e \(Schrödinger picture\): exact \|c\| = ([\d.e-]+)\s+(-?[\d.]+) rad/.exec(stdout);
  assert(m, stdout);
  const s = Math.sin(omega * T / 2), modulus = (2 * g / omega) * Math.abs(s);
  let phase = -Math.PI / 2 - delta * T / 2 + (s < 0 ? Math.PI : 0);
  phase = Math.atan2(Math.sin(phase), Math.cos(phase));
  assertClose(Number(m[1]), modulus, { rel: 1e-7 }, "|c_e|");
  assertClose(Number(m[2]), phase, { abs: 1e-6 }, "arg c_e");
});

// First order in the interaction picture for a constant coupling switched on at t = 0 (the textbook recursion,
// NUMERICS.md): c_e⁽¹⁾(t) = −i g ∫₀ᵗ e^{iδs} ds = −(g/δ)(e^{iδt} − 1).
Deno.test("--picture interaction reports e^{iH0t}ψ: the first-order amplitude is −(g/δ)(e^{iδt} − 1), to 1e-12", async () => {
  const delta = 1.3, g = 0.02;
  const r = await runJson([
    tempCase(twoLevel(delta, g, 17, { samples: 9, order: 2 })),
    "--picture",
    "interaction",
  ]);
  assertEqual(r.amplitudes.picture, "interaction");
  r.times.forEach((t: number, k: number) => {
    const [s1r, s1i] = r.amplitudes.series[1].e[k], [s0r, s0i] = r.amplitudes.series[0].e[k];
    assertClose(s1r - s0r, -(g / delta) * (Math.cos(delta * t) - 1), { abs: 1e-12 }, `Re c⁽¹⁾(${t})`);
    assertClose(s1i - s0i, -(g / delta) * Math.sin(delta * t), { abs: 1e-12 }, `Im c⁽¹⁾(${t})`);
  });
});

Deno.test("run --out plots each observable (SVG, PNG, report) and writes observables.csv", async () => {
  const out = Deno.makeTempDirSync();
  const text = twoLevel(1, 0.3, 20, { coef: "gauss(t, 10, 3)", steps: 400, samples: 21, order: 3 }) + `
[[observable]]
name = "sigma_z"
op = "|e><e| - |g><g|"
`;
  assertEqual((await runOrdo(["run", tempCase(text), "--out", out, "--quiet"])).code, 0);
  assertEqual(XMLValidator.validate(Deno.readTextFileSync(`${out}/observable-sigma_z.svg`)), true);
  assert(Deno.statSync(`${out}/observable-sigma_z.png`).size > 1000, "a PNG");
  assert(Deno.readTextFileSync(`${out}/report.html`).includes("observable sigma_z"), "in the report");
  const csv = Deno.readTextFileSync(`${out}/observables.csv`).trim().split("\n");
  assertEqual(csv[0], "time,observable,source,value");
  assertEqual(csv.length, 1 + 21 * (1 + 4 + 4), "exact, 4 partial sums and 4 consistent orders per time");
});
