/**
 * Unit conventions. By default a case is dimensionless with ħ = 1 and its
 * energies are angular frequencies. A `[units]` table names a time unit and
 * an energy or frequency unit; the Hamiltonian's matrices are then scaled to
 * angular frequency in radians per time unit (cyclic frequencies get their
 * 2π, energies go through ħ, wavenumbers through 2πc). Conversions use
 * mathjs's units and its physical constants.
 *
 * @module
 */

import { all, create, type Unit } from "mathjs";
import { CaseError } from "./errors.ts";

const math = create(all!);
/** Physical constants as mathjs carries them (CODATA values, with units). */
const constants = math as unknown as Record<
  "reducedPlanckConstant" | "planckConstant" | "speedOfLight",
  Unit
>;

/** Time units accepted in `[units] time`. */
export const TIME_UNITS = ["s", "ms", "us", "ns", "ps", "fs", "as"] as const;
const CYCLIC = ["Hz", "kHz", "MHz", "GHz", "THz"];
const ENERGY = ["eV", "meV", "ueV", "J"];
const WAVENUMBER = ["cm^-1"];
const ANGULAR = TIME_UNITS.map((u) => `rad/${u}`);
/** Energy or frequency units accepted in `[units] energy`. */
export const ENERGY_UNITS: readonly string[] = [
  ...CYCLIC,
  ...ANGULAR,
  ...ENERGY,
  ...WAVENUMBER,
];

/** The convention a case uses, and the factor that puts its Hamiltonian in rad per time unit. */
export interface UnitConvention {
  /** The time unit, or undefined when dimensionless. */
  time: string | undefined;
  /** The energy or frequency unit, or undefined when angular in the time unit. */
  energy: string | undefined;
  /** Matrix entries × this = angular frequency in rad per time unit. */
  energyFactor: number;
  /** One sentence for the user. */
  description: string;
}

/** Seconds in one of the time units. */
export function secondsPer(unit: string): number {
  return math.unit(1, unit).toNumber("s");
}

/** Angular frequency in rad/s of one of the energy or frequency units. */
export function angularPerSecond(unit: string): number {
  if (CYCLIC.includes(unit)) {
    return 2 * Math.PI * math.unit(1, unit).toNumber("Hz");
  }
  if (ANGULAR.includes(unit)) return 1 / secondsPer(unit.slice(4));
  const hbar = constants.reducedPlanckConstant.toNumber("J s");
  if (ENERGY.includes(unit)) return math.unit(1, unit).toNumber("J") / hbar;
  if (WAVENUMBER.includes(unit)) {
    const c = constants.speedOfLight.toNumber("m/s");
    return 2 * Math.PI * c * math.unit("1 cm^-1").toNumber("m^-1");
  }
  throw new RangeError(`Cannot convert the unit "${unit}"`);
}

/**
 * Resolves a case's `[units]` table.
 *
 * @param spec the table as written (may be undefined)
 * @returns the convention and its scale factor
 * @example
 * ```ts
 * import { ok as assert } from "node:assert/strict";
 * import { resolveUnits } from "./units.ts";
 * const u = resolveUnits({ time: "ns", energy: "GHz" });
 * assert(Math.abs(u.energyFactor - 2 * Math.PI) < 1e-12);
 * ```
 */
export function resolveUnits(
  spec: { time?: string; energy?: string } | undefined,
): UnitConvention {
  const time = spec?.time, energy = spec?.energy;
  if (time !== undefined && !(TIME_UNITS as readonly string[]).includes(time)) {
    throw new CaseError(
      `unknown time unit "${time}"`,
      ["units", "time"],
      `use one of: ${TIME_UNITS.join(", ")}`,
    );
  }
  if (energy !== undefined && !ENERGY_UNITS.includes(energy)) {
    throw new CaseError(
      `unknown energy unit "${energy}"`,
      ["units", "energy"],
      `use one of: ${ENERGY_UNITS.join(", ")}`,
    );
  }
  if (time === undefined && energy === undefined) {
    return {
      time,
      energy,
      energyFactor: 1,
      description: "dimensionless units, ħ = 1; energies are angular frequencies (rad per unit time)",
    };
  }
  if (time === undefined) {
    throw new CaseError(
      `the energy unit "${energy}" needs a time unit beside it`,
      ["units"],
      'add time = "ns" (or another time unit) to [units]',
    );
  }
  if (energy === undefined || energy === `rad/${time}`) {
    return {
      time,
      energy: `rad/${time}`,
      energyFactor: 1,
      description: `times in ${time}; energies are angular frequencies in rad/${time}; ħ = 1`,
    };
  }
  const factor = angularPerSecond(energy) * secondsPer(time);
  const how = CYCLIC.includes(energy)
    ? "cyclic frequencies, ω = 2π·f"
    : ENERGY.includes(energy)
    ? "energies, ω = E/ħ"
    : WAVENUMBER.includes(energy)
    ? "wavenumbers, ω = 2πc·ν̃"
    : "angular frequencies";
  return {
    time,
    energy,
    energyFactor: factor,
    description: `times in ${time}; Hamiltonian entries in ${energy} (${how}), ` +
      `multiplied by ${factor.toPrecision(10)} to give rad/${time}; t in expressions is in ${time}`,
  };
}
