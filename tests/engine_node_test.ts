// The engine as a library outside Deno: bundled to plain JavaScript and run by Node, it must reproduce the
// Rabi formula (Rabi, Phys. Rev. 51, 1937): P_e = (4g²/Ω²) sin²(Ωt/2), Ω = √(Δ² + 4g²).
import { assert, assertEqual } from "./assert.ts";
import { assertClose } from "./helpers.ts";

const node = new Deno.Command("node", { args: ["--version"], stdout: "null", stderr: "null" });
let hasNode = false;
try {
  hasNode = (await node.output()).success;
} catch { /* no node on this machine */ }

Deno.test({
  name: "the bundled engine runs under Node and reproduces the Rabi formula",
  ignore: !hasNode,
  async fn() {
    const dir = Deno.makeTempDirSync();
    const root = new URL("../", import.meta.url);
    const bundle = await new Deno.Command(Deno.execPath(), {
      args: ["bundle", new URL("engine/mod.ts", root).pathname, "-o", `${dir}/engine.mjs`],
      stdout: "null",
      stderr: "piped",
    }).output();
    assert(bundle.success, new TextDecoder().decode(bundle.stderr));
    // both builds beside the bundle: a Node without relaxed SIMD (Node 20) cannot compile ordo_fma.wasm and must
    // fall back to the portable ordo.wasm by itself
    Deno.copyFileSync(new URL("engine/ordo.wasm", root), `${dir}/ordo.wasm`);
    Deno.copyFileSync(new URL("engine/ordo_fma.wasm", root), `${dir}/ordo_fma.wasm`);
    Deno.writeTextFileSync(
      `${dir}/run.mjs`,
      `import { loadEngine, solve, populationsAt } from "./engine.mjs";
const one = { kind: "constant", re: 1, im: 0 };
const r = solve(await loadEngine(), { dim: 2,
  unperturbed: [{ matrix: new Float64Array([0, 0, 0, 0, 0, 0, 0.8, 0]), coefficient: one }],
  perturbation: [{ matrix: new Float64Array([0, 0, 0.3, 0, 0.3, 0, 0, 0]), coefficient: one }],
  strength: 1, initial: new Float64Array([1, 0, 0, 0]), tStart: 0, tEnd: 25, steps: 1, samples: 2, order: 2 });
console.log(JSON.stringify(populationsAt(r.exact, 2, 1)[1]));
`,
    );
    const run = await new Deno.Command("node", { args: [`${dir}/run.mjs`], stdout: "piped", stderr: "piped" })
      .output();
    assertEqual(run.code, 0, new TextDecoder().decode(run.stderr));
    const omega = Math.sqrt(0.8 ** 2 + 4 * 0.3 ** 2);
    const rabi = 4 * 0.09 / omega ** 2 * Math.sin(omega * 25 / 2) ** 2;
    assertClose(JSON.parse(new TextDecoder().decode(run.stdout)), rabi, { abs: 1e-12 });
  },
});
