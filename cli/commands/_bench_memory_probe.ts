/**
 * Runs the benchmark's 10⁶-step memory probe in its own process and prints
 * its peak resident memory as JSON. Used by `ordo bench`.
 *
 * @module
 */
import { loadEngine } from "../../engine/mod.ts";
import { memoryProbe } from "./_bench_cases.ts";

memoryProbe(await loadEngine());
