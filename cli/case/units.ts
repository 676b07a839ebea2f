/**
 * Unit conventions. By default a case is dimensionless with ħ = 1 and its
 * energies are angular frequencies. A `[units]` table names a time unit and
 * an energy or frequency unit; the Hamiltonian's matrices are then scaled to
 * angular frequency in radians per time unit (cyclic frequencies get their
 * 2π, energies go through ħ, temperatures through k_B/ħ, wavenumbers through
 * 2πc). Conversions use the exact defining constants of the SI (2019).
 *
 * @module
 */

import { CaseError } from "./errors.ts";

/** The SI's defining constants (exact by definition since 2019). */
export const SI = {
  /** Planck constant h, J s. */
  planck: 6.62607015e-34,
  /** Elementary charge e, C. */
  charge: 1.602176634e-19,
  /** Boltzmann constant k_B, J/K. */
  boltzmann: 1.380649e-23,
  /** Speed of light c, m/s. */
  light: 299792458,
} as const;

const TIME: Record<string, number> = { s: 1, ms: 1e-3, us: 1e-6, ns: 1e-9, ps: 1e-12, fs: 1e-15, as: 1e-18 };
/** Time units accepted in `[units] time`. */
export const TIME_UNITS: readonly string[] = Object.keys(TIME);
const CYCLIC: Record<string, number> = { Hz: 1, kHz: 1e3, MHz: 1e6, GHz: 1e9, THz: 1e12 };
/** Energies in J. */
const ENERGY: Record<string, number> = {
  eV: SI.charge,
  meV: 1e-3 * SI.charge,
  ueV: 1e-6 * SI.charge,
  J: 1,
};
/** Temperatures as energies k_B·T, in K. */
const TEMPERATURE: Record<string, number> = { K: 1, mK: 1e-3, uK: 1e-6 };
const WAVENUMBER = ["cm^-1"];
const ANGULAR = TIME_UNITS.map((u) => `rad/${u}`);
/** Energy or frequency units accepted in `[units] energy`. */
export const ENERGY_UNITS: readonly string[] = [
  ...Object.keys(CYCLIC),
  ...ANGULAR,
  ...Object.keys(ENERGY),
  ...Object.keys(TEMPERATURE),
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
  if (!Object.hasOwn(TIME, unit)) throw new RangeError(`Cannot convert the time unit "${unit}"`);
  return TIME[unit]!;
}

/** Angular frequency in rad/s of one of the energy or frequency units. */
export function angularPerSecond(unit: string): number {
  if (Object.hasOwn(CYCLIC, unit)) return 2 * Math.PI * CYCLIC[unit]!;
  if (ANGULAR.includes(unit)) return 1 / secondsPer(unit.slice(4));
  // ω = E/ħ = 2π·E/h
  if (Object.hasOwn(ENERGY, unit)) return 2 * Math.PI * ENERGY[unit]! / SI.planck;
  if (Object.hasOwn(TEMPERATURE, unit)) return 2 * Math.PI * SI.boltzmann * TEMPERATURE[unit]! / SI.planck;
  // ω = 2πc·ν̃, ν̃ = 100 m⁻¹ per cm⁻¹
  if (WAVENUMBER.includes(unit)) return 2 * Math.PI * SI.light * 100;
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
  if (time !== undefined && !TIME_UNITS.includes(time)) {
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
  const how = Object.hasOwn(CYCLIC, energy)
    ? "cyclic frequencies, ω = 2π·f"
    : Object.hasOwn(ENERGY, energy)
    ? "energies, ω = E/ħ"
    : Object.hasOwn(TEMPERATURE, energy)
    ? "temperatures as energies, ω = k_B·T/ħ"
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
