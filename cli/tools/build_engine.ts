/**
 * Compiles the AssemblyScript engine to `engine/ordo.wasm` and `engine/ordo_shared.wasm`, skipping the
 * compile when both are newer than every engine source.
 *
 * Run with `deno task build`; pass `--force` to rebuild regardless.
 *
 * @module
 */

const root = new URL("../../", import.meta.url);
const sourceDir = new URL("engine/assembly/", root);
const output = new URL("engine/ordo.wasm", root);
const sharedOutput = new URL("engine/ordo_shared.wasm", root);

function newestSource(): number {
  let newest = 0;
  for (const entry of Deno.readDirSync(sourceDir)) {
    if (!entry.isFile || !entry.name.endsWith(".ts")) continue;
    const mtime = Deno.statSync(new URL(entry.name, sourceDir)).mtime;
    newest = Math.max(newest, mtime?.getTime() ?? Infinity);
  }
  return newest;
}

/** The older of the two outputs' times (0 when one is missing). */
function outputTime(): number {
  try {
    return Math.min(
      Deno.statSync(output).mtime?.getTime() ?? 0,
      Deno.statSync(sharedOutput).mtime?.getTime() ?? 0,
    );
  } catch {
    return 0;
  }
}

/** The two builds: plain (its own memory; runs anywhere, browsers included), and on an imported shared memory
 * (for the helper thread; Deno). One source: atomics are compiled into both but run only when shared. */
const builds = [
  { output, memory: [] as string[] },
  {
    output: sharedOutput,
    memory: ["--importMemory", "--sharedMemory", "--maximumMemory", "65536"],
  },
];

if (Deno.args.includes("--force") || outputTime() <= newestSource()) {
  for (const build of builds) {
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
      ...build.memory,
      "--runtime",
      "stub",
      "--initialMemory",
      "2",
      "--exportStart",
      "_initialize",
      "--outFile",
      build.output.pathname,
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
    console.error(`ordo: built ${build.output.pathname}`);
  }
}
