// Micro-benchmarks in the house style (`deno bench -A tests/`): the SIMD kernel against its scalar
// reference, per problem size. `ordo bench` is the full suite with in-run ratios and targets.
import { loadEngine } from "../engine/mod.ts";
import { seeded } from "../cli/base/seeded.ts";

const engine = await loadEngine();
const e = engine.exports;

for (const d of [16, 64, 128]) {
  const r = 7;
  e.arenaReset();
  const a = e.arenaAlloc(16 * d * d), x = e.arenaAlloc(16 * d * r), y = e.arenaAlloc(16 * d * r);
  const random = seeded(d);
  new Float64Array(e.memory.buffer, a, 2 * d * d).forEach((_, k, m) => (m[k] = random() - 0.5));
  new Float64Array(e.memory.buffer, x, 2 * d * r).forEach((_, k, m) => (m[k] = random() - 0.5));
  const group = `complex matrix × ${r} vectors, d = ${d}`;
  Deno.bench({ group, name: "reference kernel", baseline: true }, () => e.zgemvRef(a, d, x, y, r, 1e-3, 0));
  Deno.bench({ group, name: "SIMD kernel" }, () => e.zgemvSimd(a, d, x, y, r, 1e-3, 0));
}
