/**
 * Compiles the AssemblyScript engine to `engine/ordo.wasm`, `engine/ordo_fma.wasm` and `engine/ordo_shared.wasm`,
 * skipping the compile when all are newer than every engine source.
 *
 * Run with `deno task build`; pass `--force` to rebuild regardless.
 *
 * @module
 */

const root = new URL("../../", import.meta.url);
const sourceDir = new URL("engine/assembly/", root);
const output = new URL("engine/ordo.wasm", root);
const fmaOutput = new URL("engine/ordo_fma.wasm", root);
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

/** The oldest of the outputs' times (0 when one is missing). */
function outputTime(): number {
  try {
    return Math.min(
      ...[output, fmaOutput, sharedOutput].map((file) => Deno.statSync(file).mtime?.getTime() ?? 0),
    );
  } catch {
    return 0;
  }
}

/**
 * The three builds, from one source: portable (plain SIMD, its own memory: runs wherever WebAssembly SIMD does,
 * Node 20 and browsers included); with relaxed SIMD (fused multiply-adds), its own memory; and with relaxed SIMD
 * on an imported shared memory (for the helper thread; Deno). Atomics are compiled into all but run only when
 * shared. `loadEngine` takes a relaxed build where the host compiles it, else the portable one.
 */
const builds = [
  { output, features: [] as string[], memory: [] as string[] },
  { output: fmaOutput, features: ["--enable", "relaxed-simd"], memory: [] as string[] },
  {
    output: sharedOutput,
    features: ["--enable", "relaxed-simd"],
    memory: ["--importMemory", "--sharedMemory", "--maximumMemory", "65536"],
  },
];

if (Deno.args.includes("--force") || outputTime() <= newestSource()) {
  // the three compiles at once (each its own process)
  const results = await Promise.all(builds.map(async (build) => {
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
      ...build.features,
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
    return { build, code };
  }));
  for (const { build, code } of results) {
    if (code !== 0) {
      console.error(
        "ordo: the engine did not compile (see the compiler output above)",
      );
      Deno.exit(3);
    }
    console.error(`ordo: built ${build.output.pathname}`);
  }
}
