/**
 * Bundles cli/case/mathjs_parse.ts (mathjs's parser and what it depends on, nothing else of mathjs) into
 * cli/case/mathjs_parse.bundle.js with `deno bundle`, skipping the work when the bundle is newer than that file,
 * deno.json and deno.lock (which pin the mathjs version).
 *
 * Run by `deno task build`; pass `--force` to bundle regardless.
 *
 * @module
 */

const root = new URL("../../", import.meta.url);
const entry = new URL("cli/case/mathjs_parse.ts", root);
const output = new URL("cli/case/mathjs_parse.bundle.js", root);
const inputs = [entry, new URL("deno.json", root), new URL("deno.lock", root)];

const mtime = (file: URL): number => {
  try {
    return Deno.statSync(file).mtime?.getTime() ?? 0;
  } catch {
    return 0;
  }
};

if (Deno.args.includes("--force") || mtime(output) <= Math.max(...inputs.map(mtime))) {
  const { code, stderr } = await new Deno.Command(Deno.execPath(), {
    args: [
      "bundle",
      "--quiet",
      "--minify",
      "--platform",
      "deno",
      "--output",
      output.pathname,
      entry.pathname,
    ],
    cwd: root.pathname,
    stdout: "inherit",
    stderr: "piped",
  }).output();
  if (code !== 0) {
    console.error(new TextDecoder().decode(stderr));
    console.error("ordo: the expression parser did not bundle (see the output above)");
    Deno.exit(3);
  }
  console.error(`ordo: built ${output.pathname}`);
}
