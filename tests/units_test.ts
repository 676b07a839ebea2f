// Unit conventions against the SI's exact defining constants (2019).
import { all, create } from "mathjs";
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

Deno.test("resolveUnits() sends eV, meV, cm⁻¹, GHz and K through the exact SI-2019 constants (to 1e-15)", () => {
  // Expected values: the SI's defining constants (e = 1.602176634e-19 C, h = 6.62607015e-34 J s,
  // k_B = 1.380649e-23 J/K, c = 299792458 m/s, all exact since 2019), combined in 64-digit arithmetic by
  // mathjs BigNumber, an independent general-purpose library.
  const B = create(all!, { number: "BigNumber", precision: 64 });
  const big = (x: string) => B.bignumber(x);
  const twoPi = B.multiply(2, B.pi) as unknown as ReturnType<typeof big>;
  const h = big("6.62607015e-34"), e = big("1.602176634e-19"), kB = big("1.380649e-23"), c = big("299792458");
  const omega = (joules: ReturnType<typeof big>, seconds: string) =>
    B.number(B.multiply(B.divide(B.multiply(twoPi, joules), h), big(seconds)) as never) as number;
  const cases: [{ time: string; energy: string }, number][] = [
    [{ time: "fs", energy: "eV" }, omega(e, "1e-15")],
    [{ time: "ps", energy: "meV" }, omega(B.multiply(e, big("1e-3")) as never, "1e-12")],
    [{ time: "ns", energy: "ueV" }, omega(B.multiply(e, big("1e-6")) as never, "1e-9")],
    [{ time: "ns", energy: "K" }, omega(kB, "1e-9")],
    [{ time: "us", energy: "mK" }, omega(B.multiply(kB, big("1e-3")) as never, "1e-6")],
    [{ time: "ns", energy: "GHz" }, B.number(B.multiply(twoPi, big("1")) as never) as number],
    [
      { time: "ps", energy: "cm^-1" },
      B.number(B.multiply(B.multiply(twoPi, B.multiply(c, big("100"))), big("1e-12")) as never) as number,
    ],
  ];
  for (const [units, expected] of cases) {
    assertClose(
      resolveUnits(units).energyFactor,
      expected,
      { rel: 1e-15 },
      `${units.energy} in rad/${units.time}`,
    );
  }
  // CODATA 2018 (exact since 2019), from memory: e/ħ = 1.519267447…e15 s⁻¹, so 1 eV/ħ ≈ 1.519267447 rad/fs.
  assertClose(resolveUnits({ time: "fs", energy: "eV" }).energyFactor, 1.519267447, { rel: 1e-9 });
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
