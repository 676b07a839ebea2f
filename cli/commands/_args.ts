/**
 * Flag parsing shared by the commands (private to this folder): node:util's
 * parseArgs with our messages, whole-number flags, and the overrides that
 * `--set`, `--order`, `--steps` and `--targets` make to a case.
 *
 * @module
 */

import { parseArgs, type ParseArgsConfig } from "node:util";
import { UsageError } from "../case/errors.ts";
import type { BuildOptions } from "../case/build.ts";

/** The flag table of a command. */
export type Flags = NonNullable<ParseArgsConfig["options"]>;

/** The flags every command that builds a case takes. */
export const CASE_FLAGS: Flags = {
  order: { type: "string" },
  steps: { type: "string" },
  accuracy: { type: "string" },
  set: { type: "string", multiple: true },
  targets: { type: "string" },
  basis: { type: "string" },
  picture: { type: "string" },
  subspace: { type: "string" },
  operators: { type: "string" },
  quiet: { type: "boolean" },
};

/** Stops with a usage error (exit 2). */
export function usage(message: string): never {
  throw new UsageError(message);
}

/** Parses a command's arguments strictly, turning parseArgs' errors into usage errors. */
export function parseOrFail(args: string[], options: Flags) {
  try {
    return parseArgs({ args, options, allowPositionals: true, strict: true });
  } catch (e) {
    return usage(
      `${(e as Error).message.replace(/\. To specify.*$/s, "")}; see \`ordo --help\``,
    );
  }
}

/** A whole-number flag, or undefined when absent. */
export function integerFlag(value: unknown, flag: string): number | undefined {
  if (value === undefined) return undefined;
  const n = Number(value);
  if (!Number.isInteger(n)) {
    usage(`${flag} takes a whole number, got "${value}"`);
  }
  return n;
}

/** The case overrides given by `--set`, `--order`, `--steps`, `--accuracy` and `--targets`. */
export function buildOptions(values: Record<string, unknown>): BuildOptions {
  const set: Record<string, string> = {};
  for (const item of (values.set as string[] | undefined) ?? []) {
    const eq = item.indexOf("=");
    if (eq <= 0) usage(`--set takes name=value, got "${item}"`);
    set[item.slice(0, eq).trim()] = item.slice(eq + 1).trim();
  }
  const targets = values.targets === undefined
    ? undefined
    : String(values.targets).split(",").map((s) => s.trim()).filter(Boolean);
  if (values.steps !== undefined && values.accuracy !== undefined) {
    usage("give --steps (fixed steps) or --accuracy (steps chosen by the engine), not both");
  }
  const accuracy = values.accuracy === undefined ? undefined : Number(values.accuracy);
  if (accuracy !== undefined && !(accuracy > 0 && accuracy < 1)) {
    usage(`--accuracy takes a number between 0 and 1, e.g. 1e-8; got "${values.accuracy}"`);
  }
  const basis = values.basis as string | undefined;
  if (basis !== undefined && basis !== "bare" && basis !== "eigen") {
    usage(`--basis takes bare (the case's labels) or eigen (H0's eigenstates), got "${basis}"`);
  }
  const picture = values.picture as string | undefined;
  if (picture !== undefined && picture !== "schrodinger" && picture !== "interaction") {
    usage(`--picture takes schrodinger or interaction, got "${picture}"`);
  }
  const subspace = values.subspace === undefined
    ? undefined
    : String(values.subspace).split(",").map((s) => s.trim()).filter(Boolean);
  if (subspace !== undefined && subspace.length === 0) {
    usage('--subspace takes labels, e.g. --subspace "0,1"');
  }
  const operators = values.operators as string | undefined;
  if (operators !== undefined && !["auto", "dense", "sparse"].includes(operators)) {
    usage(`--operators takes auto, dense or sparse, got "${operators}"`);
  }
  return {
    set,
    ...(subspace !== undefined ? { subspace } : {}),
    ...(operators !== undefined ? { operators: operators as "auto" | "dense" | "sparse" } : {}),
    ...(basis !== undefined ? { basis: basis as "bare" | "eigen" } : {}),
    ...(picture !== undefined ? { picture: picture as "schrodinger" | "interaction" } : {}),
    order: integerFlag(values.order, "--order"),
    steps: integerFlag(values.steps, "--steps"),
    ...(accuracy !== undefined ? { accuracy } : {}),
    targets,
  };
}

/** The one case file a command takes. */
export function oneCase(positionals: string[], command: string): string {
  if (positionals.length !== 1) {
    usage(
      `${command} takes one case file, e.g. \`ordo ${command} cases/two_level.toml\``,
    );
  }
  return positionals[0]!;
}
