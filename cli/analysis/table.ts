/**
 * The terminal form of a run: header, one order-by-order table per target,
 * and the verdict.
 *
 * @module
 */

import type { RunOutcome } from "./outcome.ts";
import { normIntegralAt } from "./norms.ts";
import { VERSION } from "../base/version.ts";
import { METHOD_NAMES, nonZerosOf } from "../../engine/mod.ts";

function sci(x: number, digits = 4): string {
  if (Number.isNaN(x)) return "—";
  if (x === 0) return "0";
  return x.toExponential(digits - 1);
}

/** A population with 8 significant digits, fixed or exponential by size. */
function pop(x: number): string {
  if (x === 0) return "0";
  return Math.abs(x) >= 1e-3 ? x.toPrecision(8) : x.toExponential(7);
}

/**
 * The terminal report: header, one table per target (with `show = "amplitude"` also the amplitude of each partial
 * sum as modulus and phase) and per observable, verdict.
 */
export function formatRun(outcome: RunOutcome, show: "population" | "amplitude" = "population"): string {
  const out = [
    ...header(outcome),
    ...targetTables(outcome),
    ...(show === "amplitude" ? amplitudeTables(outcome) : []),
    ...observableTables(outcome),
    ...gateTable(outcome),
  ];
  const { built, result, analysis } = outcome;
  out.push("");
  out.push(
    analysis.relative > 0
      ? `verdict (tolerance on populations: ${analysis.relative * 100}% of the exact value, or ${
        sci(analysis.tolerance, 2)
      } absolute, whichever is larger)`
      : `verdict (tolerance ${sci(analysis.tolerance, 2)} absolute on populations)`,
  );
  const refText = result.scheme === "time-independent"
    ? "exact by eigen-decomposition vs by Taylor series"
    : built.model.accuracy !== undefined
    ? `${
      result.method === "runge-kutta-8" ? "the Runge–Kutta pair's embedded estimate" : "step doubling"
    } on every step, carried to the reported time; judged with the accuracy ${built.model.accuracy} the steps were chosen for`
    : "step doubling, |P(h) − P(2h)|/15";
  const judged = analysis.untrusted.length === 0;
  out.push(
    `  reference error ≈ ${sci(analysis.referenceError, 2)} (${refText}): ` +
      (analysis.referenceOk
        ? "small enough to judge the orders"
        : judged
        ? "TOO LARGE to judge orders at this tolerance; raise [grid] steps or the tolerance"
        : "NOT TRUSTED, whatever its size: no order is judged"),
  );
  for (const reason of analysis.untrusted) out.push(`  NOT JUDGED: ${reason}`);
  for (const t of analysis.targets) {
    if (!judged) {
      out.push(`  ${t.label}: not judged (the exact reference cannot be trusted here)`);
      continue;
    }
    const need = t.minOrder === null
      ? `no order up to ${built.model.order} meets the tolerance`
      : `order ${t.minOrder} meets the tolerance`;
    let first = "";
    const pct = (x: number) => `${(x * 100).toPrecision(3)}%`;
    const judge = (x: number) =>
      x <= 0.01
        ? `within 1% (${pct(x)})`
        : x <= 0.1
        ? `within 10% but not 1% (${pct(x)})`
        : `OFF by ${pct(x)}`;
    if (!Number.isNaN(t.firstOrderRelative)) first = `; first order is ${judge(t.firstOrderRelative)}`;
    if (t.leadingOrder !== null && t.leadingOrder > 1 && !Number.isNaN(t.leadingRelative)) {
      first += ` (it is zero here: the leading order is ${t.leadingOrder}, ${judge(t.leadingRelative)})`;
    }
    out.push(`  ${t.label}: ${need}${first}`);
  }
  if (analysis.growing) {
    out.push(
      "  WARNING: the Dyson terms grow with order here: the series diverges or is at best asymptotic for these parameters",
    );
  }
  for (const w of built.warnings) out.push(`  warning: ${w}`);
  return out.join("\n");
}

/** The gate on the subspace, order by order (propagator mode). */
function gateTable({ built, gate }: RunOutcome): string[] {
  if (!gate) return [];
  const tu = built.units.time ? ` ${built.units.time}` : "";
  const rows = [[
    "order",
    "fidelity F",
    "1 − F",
    "‖(U − S_n)P‖",
    "leakage",
    ...(gate.magnus ? ["Magnus ‖(e^Ω − U_I)P‖"] : []),
  ]];
  rows.push(["exact", "1", "0", "0", sci(gate.leakage.exact, 3), ...(gate.magnus ? [""] : [])]);
  gate.fidelity.forEach((f, n) =>
    rows.push([
      String(n),
      f.toFixed(12),
      sci(1 - f, 3),
      sci(gate.normError[n]!, 3),
      sci(gate.leakage.series[n]!, 3),
      ...(gate.magnus ? [sci(gate.magnus.error[n]!, 3)] : []),
    ])
  );
  const widths = rows[0]!.map((_, c) => Math.max(...rows.map((r) => r[c]!.length)));
  const out = [
    "",
    `gate on the subspace {${gate.labels.join(", ")}} at t = ${Number(gate.time.toPrecision(6))}${tu} ` +
    "(partial sums S_n against the exact propagator U; fidelity and leakage averaged over the subspace's inputs, " +
    "fidelity per unit norm of S_n)",
    ...rows.map((r) => "  " + r.map((cell, c) => cell.padEnd(widths[c]!)).join("  ").trimEnd()),
  ];
  if (gate.magnus) {
    const m = gate.magnus.effective;
    const entry = (i: number, j: number) => {
      const z = m.get(i, j);
      return `${sci(z.re, 4)}${z.im < 0 ? " − " : " + "}${sci(Math.abs(z.im), 3)}i`;
    };
    out.push(
      `  effective Hamiltonian iΩ/(t − t0) to order ${gate.fidelity.length - 1} on {${
        gate.labels.join(", ")
      }} [${gate.magnus.unit}, interaction picture]:`,
    );
    gate.labels.forEach((label, i) =>
      out.push(`    ${label.padEnd(8)} ${gate.labels.map((_, j) => entry(i, j).padStart(24)).join(" ")}`)
    );
  } else if (gate.magnusSkipped) out.push(`  Magnus terms: not computed (${gate.magnusSkipped})`);
  return out;
}

function header({ built, info, result, analysis }: RunOutcome): string[] {
  const tu = built.units.time ? ` ${built.units.time}` : "";
  const h = Number(result.stepSize.toPrecision(4));
  const stepText = result.scheme === "time-independent"
    ? `no time steps (time-independent H: exact exponentials between ${result.times.length} samples)`
    : built.model.accuracy !== undefined
    ? `${result.steps} steps chosen for accuracy ${built.model.accuracy} (mean h = ${h}${tu}), ${
      METHOD_NAMES[result.method!]
    }`
    : `${result.steps} steps of h = ${h}${tu}, ${METHOD_NAMES[result.method!]}`;
  return [
    `ordo ${VERSION} · ${built.title}`,
    `units   ${built.units.description}`,
    built.basis === "eigen"
      ? "basis   eigen: populations and amplitudes in H0's eigenstates, each named by its largest bare component"
      : "basis   bare: populations and amplitudes in the case's own labels",
    `scheme  ${result.scheme}; ${stepText}; Dyson order ≤ ${built.model.order}; λ = ${built.model.strength}`,
    ...(built.space.storage === "sparse"
      ? [
        `operators sparse: ${
          nonZerosOf(built.model)
        } non-zeros (no ${built.model.dim}×${built.model.dim} matrix is formed)`,
      ]
      : []),
    `window  t = ${built.model.tStart} … ${built.model.tEnd}${tu}; reporting t = ${
      Number(analysis.time.toPrecision(6))
    }${tu}; x = ∫‖λV‖dt ≤ ${sci(normIntegralAt(info, analysis.time), 3)}`,
  ];
}

function targetTables({ analysis }: RunOutcome): string[] {
  const out: string[] = [];
  for (const target of analysis.targets) {
    out.push("", `population of ${target.label}: exact ${pop(target.exact)}`);
    out.push("  order  partial sum      error      bound      consistent     ‖ψn‖/‖ψn−1‖");
    for (const row of target.rows) {
      out.push(
        `  ${String(row.order).padStart(5)}  ${pop(row.population).padEnd(15)}  ${
          sci(row.error).padStart(9)
        }  ${sci(row.bound).padStart(9)}  ${pop(row.consistent).padStart(14)}  ${
          sci(row.ratio, 3).padStart(9)
        }`,
      );
    }
  }
  return out;
}

function observableTables({ analysis, observed }: RunOutcome): string[] {
  const out: string[] = [];
  for (const o of observed) {
    const k = analysis.sample, exact = o.exact[k]!;
    out.push(
      "",
      `observable ${o.name}: exact ${pop(exact)}`,
      "  order  partial sum      error      consistent",
    );
    o.series.forEach((values, n) => {
      out.push(
        `  ${String(n).padStart(5)}  ${pop(values[k]!).padEnd(15)}  ${
          sci(Math.abs(values[k]! - exact)).padStart(9)
        }  ${pop(o.consistent[n]![k]!).padStart(14)}`,
      );
    });
  }
  return out;
}

/** Modulus and phase (rad, in (−π, π]) of each target's amplitude, exact and per partial sum, at the reported time. */
function amplitudeTables({ built, analysis, amplitudes }: RunOutcome): string[] {
  const out: string[] = [];
  const d = built.model.dim, k = analysis.sample;
  const polar = (states: Float64Array, a: number) => {
    const re = states[2 * (k * d + a)]!, im = states[2 * (k * d + a) + 1]!;
    return `${pop(Math.hypot(re, im)).padEnd(15)}  ${Math.atan2(im, re).toFixed(6).padStart(10)}`;
  };
  for (const label of built.targets) {
    const a = built.space.labels.indexOf(label);
    const picture = built.picture === "interaction" ? "interaction" : "Schrödinger";
    out.push("", `amplitude of ${label} (${picture} picture): exact |c| = ${polar(amplitudes.exact, a)} rad`);
    out.push("  order  |partial sum|         phase");
    const partial = new Float64Array(amplitudes.exact.length);
    amplitudes.terms.forEach((term, n) => {
      for (let q = 2 * k * d; q < 2 * (k + 1) * d; q++) partial[q]! += term[q]!;
      out.push(`  ${String(n).padStart(5)}  ${polar(partial, a)}`);
    });
  }
  return out;
}
