/**
 * `ordo init NAME`: write a starter case from one of the built-in examples.
 *
 * @module
 */

import { parse as parseToml } from "smol-toml";
import { UsageError } from "../case/errors.ts";
import { EXAMPLES } from "../base/examples.ts";
import { parseOrFail, usage } from "./_args.ts";
import { writeUserFile } from "../report/output_dir.ts";

export { EXAMPLES };

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
  const chosen = Object.hasOwn(EXAMPLES, example) ? EXAMPLES[example] : undefined;
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
  const text = Deno.readTextFileSync(new URL(`../../cases/${chosen.file}`, import.meta.url));
  const json = path.toLowerCase().endsWith(".json");
  writeUserFile(path, json ? JSON.stringify(parseToml(text), null, 2) + "\n" : text, "the case");
  return path;
}

/**
 * `ordo init NAME [--example NAME] [--force]`.
 *
 * @param args the arguments after `init`
 * @returns the exit code
 */
export function initCommand(args: string[]): Promise<number> {
  const { values, positionals } = parseOrFail(args, {
    example: { type: "string" },
    force: { type: "boolean" },
  });
  if (positionals.length !== 1) {
    usage("init takes the name of the file to write, e.g. `ordo init my_case`");
  }
  const path = initCase(positionals[0]!, values.example as string | undefined, Boolean(values.force));
  console.error(`ordo: wrote ${path}; try \`ordo inspect ${path}\` then \`ordo run ${path}\``);
  return Promise.resolve(0);
}
