/**
 * Compiles the AssemblyScript engine to `engine/ordo.wasm`, skipping the
 * compile when the wasm is newer than every engine source.
 *
 * Run with `deno task build`; pass `--force` to rebuild regardless.
 *
 * @module
 */

const root = new URL("../../", import.meta.url);
const sourceDir = new URL("engine/assembly/", root);
const output = new URL("engine/ordo.wasm", root);

function newestSource(): number {
  let newest = 0;
  for (const entry of Deno.readDirSync(sourceDir)) {
    if (!entry.isFile || !entry.name.endsWith(".ts")) continue;
    const mtime = Deno.statSync(new URL(entry.name, sourceDir)).mtime;
    newest = Math.max(newest, mtime?.getTime() ?? Infinity);
  }
  return newest;
}

function outputTime(): number {
  try {
    return Deno.statSync(output).mtime?.getTime() ?? 0;
  } catch {
    return 0;
  }
}

if (Deno.args.includes("--force") || outputTime() <= newestSource()) {
  const args = [
    "run",
    "-A",
    "npm:assemblyscript@0.28.20/asc",
    new URL("index.ts", sourceDir).pathname,
    "-O3",
    "--enable",
    "simd",
    "--enable",
    "threads",
    "--importMemory",
    "--sharedMemory",
    "--maximumMemory",
    "65536",
    "--runtime",
    "stub",
    "--initialMemory",
    "2",
    "--exportStart",
    "_initialize",
    "--outFile",
    output.pathname,
  ];
  const { code } = await new Deno.Command(Deno.execPath(), {
    args,
    stdout: "inherit",
    stderr: "inherit",
  }).output();
  if (code !== 0) {
    console.error(
      "ordo: the engine did not compile (see the compiler output above)",
    );
    Deno.exit(3);
  }
  console.error(`ordo: built ${output.pathname}`);
}
