// Unit conventions against published constants as mathjs carries them.
// Reference values: the SI defines c = 299 792 458 m/s and h exactly; CODATA
// 2018 gives e/ħ = 1.519 267 447… × 10¹⁵ s⁻¹. mathjs's "eV" unit carries the
// CODATA 2010 value 1.602 176 565 × 10⁻¹⁹ J, 4.3e-8 relative below the exact
// SI value, so eV checks allow 1e-7 relative.
import { assertThrows } from "./assert.ts";
import { assertClose } from "./helpers.ts";
import { resolveUnits } from "../cli/case/units.ts";
import { CaseError } from "../cli/case/errors.ts";

Deno.test("resolveUnits() converts cyclic frequencies with their 2π", () => {
  assertClose(
    resolveUnits({ time: "ns", energy: "GHz" }).energyFactor,
    2 * Math.PI,
    { rel: 1e-15 },
  );
  assertClose(
    resolveUnits({ time: "us", energy: "MHz" }).energyFactor,
    2 * Math.PI,
    { rel: 1e-15 },
  );
  assertClose(
    resolveUnits({ time: "ns", energy: "MHz" }).energyFactor,
    2 * Math.PI * 1e-3,
    { rel: 1e-15 },
  );
});

Deno.test("resolveUnits() sends energies through ħ (CODATA 2018 e/ħ, within mathjs's eV)", () => {
  // 1 eV/ħ = 1.519267447e15 rad/s → 1.519267447 rad/fs
  assertClose(
    resolveUnits({ time: "fs", energy: "eV" }).energyFactor,
    1.519267447,
    { rel: 1e-7 },
  );
  assertClose(
    resolveUnits({ time: "ps", energy: "meV" }).energyFactor,
    1.519267447,
    { rel: 1e-7 },
  );
});

Deno.test("resolveUnits() sends wavenumbers through 2πc (c exact by SI definition)", () => {
  // 1 cm⁻¹ → ω = 2π·c·100 m⁻¹ = 2π·2.99792458e10 s⁻¹; in rad/ps: 2π·0.0299792458
  assertClose(
    resolveUnits({ time: "ps", energy: "cm^-1" }).energyFactor,
    2 * Math.PI * 0.0299792458,
    { rel: 1e-14 },
  );
});

Deno.test("resolveUnits() keeps angular units and the dimensionless default as they are", () => {
  assertClose(resolveUnits({ time: "ns", energy: "rad/ns" }).energyFactor, 1, {
    abs: 0,
  });
  assertClose(
    resolveUnits({ time: "ns", energy: "rad/us" }).energyFactor,
    1e-3,
    { rel: 1e-15 },
  );
  assertClose(resolveUnits(undefined).energyFactor, 1, { abs: 0 });
  assertClose(resolveUnits({ time: "ns" }).energyFactor, 1, { abs: 0 });
});

Deno.test("resolveUnits() rejects unknown units and an energy unit without a time unit", () => {
  assertThrows(
    () => resolveUnits({ time: "fortnight" }),
    CaseError,
    "unknown time unit",
  );
  assertThrows(
    () => resolveUnits({ time: "ns", energy: "furlong" }),
    CaseError,
    "unknown energy unit",
  );
  assertThrows(
    () => resolveUnits({ energy: "GHz" }),
    CaseError,
    "needs a time unit",
  );
});
