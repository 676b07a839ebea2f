/**
 * `ordo init NAME`: write a starter case from one of the built-in examples.
 *
 * @module
 */

import { parse as parseToml } from "smol-toml";
import { UsageError } from "../case/errors.ts";

/** The built-in examples: name → file in cases/ and what it shows. */
export const EXAMPLES: Record<string, { file: string; about: string }> = {
  "two-level": {
    file: "two_level.toml",
    about: "detuned two-level system, constant coupling (smallest complete case)",
  },
  "leaky-transmon": {
    file: "leaky_transmon.toml",
    about: "driven four-level anharmonic mode, leakage under a Gaussian pulse (the demo)",
  },
  ladder: {
    file: "ladder.toml",
    about: "three-level ladder, two-photon transition through a detuned middle level",
  },
  band: {
    file: "band_decay.toml",
    about: "a level decaying into a band of states (golden rule)",
  },
  crossing: { file: "swept_crossing.toml", about: "swept avoided crossing" },
  oscillator: {
    file: "kicked_oscillator.toml",
    about: "driven truncated oscillator",
  },
  check: {
    file: "weak_drive_check.toml",
    about: "a sweep with [[approx]] formulas for `ordo check`",
  },
};

/**
 * Writes a starter case.
 *
 * @param name the file to write (".toml" is added when missing)
 * @param example which built-in example (default "two-level")
 * @param force overwrite an existing file
 * @returns the path written
 * @throws {UsageError} for an unknown example or an existing file
 */
export function initCase(
  name: string,
  example = "two-level",
  force = false,
): string {
  const chosen = EXAMPLES[example];
  if (!chosen) {
    throw new UsageError(
      `there is no example "${example}"; choose one of:\n` +
        Object.entries(EXAMPLES).map(([k, v]) => `  ${k.padEnd(15)} ${v.about}`)
          .join("\n"),
    );
  }
  const path = /\.(toml|json)$/i.test(name) ? name : `${name}.toml`;
  let exists = false;
  try {
    Deno.statSync(path);
    exists = true;
  } catch { /* not there: good */ }
  if (exists && !force) {
    throw new UsageError(
      `${path} exists already; pass --force to overwrite it`,
    );
  }
  const text = Deno.readTextFileSync(
    new URL(`../../cases/${chosen.file}`, import.meta.url),
  );
  Deno.writeTextFileSync(
    path,
    path.toLowerCase().endsWith(".json") ? JSON.stringify(parseToml(text), null, 2) + "\n" : text,
  );
  return path;
}
