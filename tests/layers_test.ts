/**
 * The layering of cli/ stays true: a folder is a layer, and imports only point down.
 *
 * From the bottom: engine/ (the library), cli/base, cli/case (the case language), cli/analysis, cli/sweep,
 * cli/report, cli/commands, cli/main.ts. A file may import its own layer or a lower one; a command never
 * imports another command (files starting with `_` are private helpers of their folder and may be imported
 * only from inside it); engine/ imports nothing of cli/; cli/tools/ (build scripts) imports nothing of cli/.
 */

import { dirname, relative, resolve } from "node:path";
import { assert, assertDeepEqual } from "./assert.ts";

const ROOT = resolve(dirname(new URL(import.meta.url).pathname), "..");

/** Layer rank of a repository path, or undefined for files outside the layering (tests, assembly). */
const LAYERS: [prefix: string, rank: number][] = [
  ["engine/", 0],
  ["cli/base/", 1],
  ["cli/case/", 2],
  ["cli/analysis/", 3],
  ["cli/sweep/", 4],
  ["cli/report/", 5],
  ["cli/commands/", 6],
  ["cli/main.ts", 7],
];

function rankOf(path: string): number | undefined {
  return LAYERS.find(([prefix]) => path === prefix || path.startsWith(prefix))?.[1];
}

/** Every relative module a source text imports: static, dynamic, re-exports and worker URLs. */
export function importsOf(text: string): string[] {
  const found: string[] = [];
  const patterns = [
    /\bfrom\s+"(\.{1,2}\/[^"]+)"/g,
    /\bimport\s*\(\s*"(\.{1,2}\/[^"]+)"\s*\)/g,
    /\bimport\s+"(\.{1,2}\/[^"]+)"/g,
    /new\s+URL\(\s*"(\.{1,2}\/[^"]+\.ts)"\s*,\s*import\.meta\.url/g,
  ];
  for (const p of patterns) for (const m of text.matchAll(p)) found.push(m[1]!);
  return found;
}

/** The rule broken by an import from `from` to `to` (repository paths), or undefined when it is fine. */
export function violation(from: string, to: string): string | undefined {
  if (from.startsWith("cli/tools/") && to.startsWith("cli/")) return "build tools import nothing of cli/";
  const a = rankOf(from), b = rankOf(to);
  if (a === undefined || b === undefined) return undefined;
  if (b > a) return `a lower layer imports a higher one (${LAYERS[a]![0]} → ${LAYERS[b]![0]})`;
  const base = to.slice(to.lastIndexOf("/") + 1);
  if (base.startsWith("_") && dirname(from) !== dirname(to)) {
    return "a private file is imported from another folder";
  }
  if (from.startsWith("cli/commands/") && to.startsWith("cli/commands/") && !base.startsWith("_")) {
    return "a command imports another command";
  }
  return undefined;
}

function sources(dir: string): string[] {
  const out: string[] = [];
  for (const entry of Deno.readDirSync(resolve(ROOT, dir))) {
    const path = `${dir}/${entry.name}`;
    if (entry.isDirectory && entry.name !== "assembly") out.push(...sources(path));
    else if (entry.isFile && path.endsWith(".ts")) out.push(path);
  }
  return out;
}

Deno.test("violation() catches each kind of broken layering (so the test below can fail)", () => {
  assert(violation("cli/case/build.ts", "cli/sweep/grid.ts") !== undefined, "case → sweep is upward");
  assert(violation("cli/report/run_report.ts", "cli/commands/run.ts") !== undefined, "report → command");
  assert(violation("cli/commands/check.ts", "cli/commands/sweep.ts") !== undefined, "command → command");
  assert(
    violation("cli/sweep/pool.ts", "cli/commands/_args.ts") !== undefined,
    "private file from elsewhere",
  );
  assert(violation("engine/mod.ts", "cli/case/errors.ts") !== undefined, "engine → cli");
  assert(violation("cli/tools/build_engine.ts", "cli/base/version.ts") !== undefined, "tool → cli");
  assertDeepEqual(
    [
      violation("cli/commands/run.ts", "cli/analysis/outcome.ts"),
      violation("cli/commands/bench.ts", "cli/commands/_mathjs_scheme.ts"),
      violation("cli/main.ts", "cli/commands/run.ts"),
      violation("cli/case/build.ts", "cli/case/space.ts"),
      violation("cli/sweep/point.ts", "engine/mod.ts"),
    ],
    [undefined, undefined, undefined, undefined, undefined],
  );
  assertDeepEqual(
    importsOf(
      `import { a } from "./a.ts";\nexport * from "../b.ts";\nconst c = await import("./c.ts");\n` +
        `new Worker(new URL("./d.ts", import.meta.url).href); import "./e.ts";`,
    ).sort(),
    ["../b.ts", "./a.ts", "./c.ts", "./d.ts", "./e.ts"],
  );
});

Deno.test("no file in cli/ or engine/ imports a higher layer, another command, or another folder's private file", () => {
  const broken: string[] = [];
  let checked = 0;
  for (const file of [...sources("cli"), ...sources("engine")]) {
    const text = Deno.readTextFileSync(resolve(ROOT, file));
    for (const spec of importsOf(text)) {
      const target = relative(ROOT, resolve(ROOT, dirname(file), spec));
      checked++;
      const why = violation(file, target);
      if (why) broken.push(`${file} imports ${target}: ${why}`);
    }
  }
  assert(checked > 50, `only ${checked} imports found: the scan is not reading the sources`);
  assertDeepEqual(broken, []);
});
