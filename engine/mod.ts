/**
 * The ordo engine as a library: Dyson terms order by order and the exactly
 * propagated state for a finite Hamiltonian H(t) = H0(t) + λ·V(t).
 *
 * The numerical core is WebAssembly (compiled from `engine/assembly/` by
 * `deno task build`); this module feeds it operator and coefficient data in
 * chunks and reads the recorded states. It runs in Deno, Node and browsers:
 * pass the wasm bytes to {@link loadEngine} where there is no file system.
 *
 * @example
 * ```ts
 * import { ok as assert } from "node:assert/strict";
 * import { loadEngine, solve } from "./mod.ts";
 * const engine = await loadEngine();
 * // Two levels split by 1, coupled by 0.05, from the lower one (ħ = 1).
 * const result = solve(engine, {
 *   dim: 2,
 *   unperturbed: [{ matrix: new Float64Array([0, 0, 0, 0, 0, 0, 1, 0]), coefficient: { kind: "constant", re: 1, im: 0 } }],
 *   perturbation: [{ matrix: new Float64Array([0, 0, 0.05, 0, 0.05, 0, 0, 0]), coefficient: { kind: "constant", re: 1, im: 0 } }],
 *   strength: 1,
 *   initial: new Float64Array([1, 0, 0, 0]),
 *   tStart: 0, tEnd: 10, steps: 100, samples: 11, order: 4,
 * });
 * assert(result.exact.length === 11 * 4);
 * ```
 *
 * @module
 */

import {
  CHUNK_STEPS,
  GAUSS_NODES,
  type Method,
  methodFor,
  type Model,
  type OperatorTerm,
  type Scheme,
  schemeFor,
  stepsPerSample,
} from "./model.ts";

export * from "./model.ts";

/** A sparse micro-kernel: Y[v] += α·A·X[v] for r vectors, A in compressed rows (addresses in wasm memory). */
type SparseKernel = (
  rowStart: number,
  column: number,
  values: number,
  d: number,
  x: number,
  y: number,
  r: number,
  ar: number,
  ai: number,
) => void;

/** A micro-kernel: Y[v] += α·A·X[v] for r vectors (addresses in wasm memory). */
export type Kernel = (a: number, d: number, x: number, y: number, r: number, ar: number, ai: number) => void;

interface Exports {
  memory: WebAssembly.Memory;
  arenaReset(): void;
  arenaAlloc(bytes: number): number;
  useSimd(on: number): void;
  zgemvRef: Kernel;
  zgemvSimd: Kernel;
  zgemvPacked(
    a: number,
    d: number,
    x: number,
    y: number,
    r: number,
    ar: number,
    ai: number,
    scratch: number,
  ): void;
  packedScratchBytes(d: number, r: number): number;
  useHelper(on: number): void;
  helperFailed(): void;
  helperBlocks(): number;
  stopHelper(): void;
  peakLoop(iterations: number, x0: number, dy: number): number;
  /** (cos θ, sin θ) of n arguments at x (f64) into out (n complex), as the engine makes its phases (for tests). */
  phasesOf(out: number, x: number, n: number): void;
  /** Flops {@link peakLoop} counts per iteration. */
  PEAK_FLOPS_PER_ITERATION: WebAssembly.Global;
  /** 1 in the relaxed-SIMD builds (fused multiply-adds), 0 in the portable one. */
  fusedMultiplyAdd(): number;
  eigh(a: number, n: number, w: number, z: number, work: number): number;
  /** Bytes of work space eigh and eigenvaluesOnly need per level. */
  EIGH_WORK_BYTES_PER_LEVEL: WebAssembly.Global;
  eigenvaluesOnly(a: number, n: number, w: number, work: number): number;
  /** 1 when the last eigh took the tridiagonal's eigenvectors from inverse iteration, 0 from the QL rotations. */
  lastEighByInverseIteration(): number;
  /** Steps inverse iteration takes after its growth test passes (default 1; 0 makes the checks reject, for tests). */
  setInverseIterationExtraSteps(k: number): void;
  init(
    dim: number,
    order: number,
    nH0: number,
    nV: number,
    chunk: number,
    columns: number,
    sparse: number,
  ): number;
  allocSparseTerm(k: number, nnz: number): number;
  sparseRowStart(k: number): number;
  sparseColumn(k: number): number;
  sparseValues(k: number): number;
  zcsrmvRef: SparseKernel;
  zcsrmvSimd: SparseKernel;
  prepare(scheme: number, strength: number, haveEigen: number): number;
  bufEnergies(): number;
  bufBasis(): number;
  advance(nsteps: number, tau0: number, h: number): number;
  advanceExact(h: number): number;
  macroStep(tau: number, h: number): number;
  stepError(): number;
  rejectStep(): void;
  sampleWithin(tau: number, h: number): number;
  rkStep(tau: number, h: number): number;
  rkSample(tau: number, h: number): number;
  setTaylorTolerance(tolerance: number): void;
  takeKernelFlops(): number;
  recordSample(tau: number): void;
  record(tau: number): void;
  bufH0Terms(): number;
  bufVTerms(): number;
  bufInitial(): number;
  bufCoefFine(): number;
  bufCoefCoarse(): number;
  bufRecord(): number;
}

/** A loaded engine instance (one per worker; not shareable between threads). */
export interface Engine {
  /** The raw WebAssembly exports, for benchmarks and tests of the kernels. */
  readonly exports: Exports;
  /** Stops the helper thread, if any (the engine still works, alone). */
  close(): void;
}

/** The engine failed: out of memory, no convergence, a result that is not finite. */
export class EngineError extends Error {
  /**
   * True when the input itself is the cause (a pathological matrix, an absurd ‖H‖·h): the user can fix it.
   */
  readonly byInput: boolean;

  /**
   * @param message what failed
   * @param byInput whether the input is the cause (see {@link EngineError.byInput})
   */
  constructor(message: string, byInput = false) {
    super(message);
    this.name = "EngineError";
    this.byInput = byInput;
  }
}

const MESSAGES: Record<number, [string, boolean]> = {
  1: ["the engine could not allocate its memory (WebAssembly memory is limited to 4 GiB)", false],
  2: [
    "the Hermitian eigensolver did not converge: the matrix's entries overflow or span too many orders of " +
    "magnitude; rescale the energies (or choose [units] that keep them within about 1e-150 … 1e150)",
    true,
  ],
  3: [
    "the Taylor series of a step exponential did not converge (a step is far too large for the operator norm); " +
    "take more steps, or check the size of the energies and coefficients",
    true,
  ],
  4: [
    "a step exponential would need more than 10⁶ sub-steps: ‖H‖·h is far too large (or not finite) for this " +
    "step; take more steps, or check the size of the energies, coefficients and λ",
    true,
  ],
};

function check(code: number): void {
  if (code !== 0) {
    const [message, byInput] = MESSAGES[code] ?? [`engine error ${code}`, false];
    throw new EngineError(message, byInput);
  }
}

/** Options of {@link loadEngine}. */
export interface EngineOptions {
  /**
   * Start a helper thread (a worker with a second instance of the shared build on the same memory) that takes
   * half of each large matrix product. Deno only (elsewhere the plain build runs alone); call
   * {@link Engine.close} when done. Default: no helper.
   */
  helper?: boolean;
  /**
   * With a helper: whether {@link loadEngine} waits until it has joined (default true). Without waiting, the
   * engine works alone until the helper's worker has started (tens of milliseconds), then shares with it: a
   * short run never waits for a thread it would not use, and a long one gains from it after its first moments.
   */
  waitForHelper?: boolean;
}

/** WebAssembly pages (64 KiB) the engine's memory may grow to: all of wasm32's 4 GiB. */
const MAX_PAGES = 65536;

/**
 * Instantiates the engine.
 *
 * @param wasm the module bytes; default: `ordo_fma.wasm` beside this file (`ordo_shared.wasm` with a helper), or
 *   `ordo.wasm` where the host has no relaxed SIMD
 * @param options see {@link EngineOptions}
 * @returns an engine ready for {@link solve}
 */
export async function loadEngine(wasm?: BufferSource, options: EngineOptions = {}): Promise<Engine> {
  // deno-lint-ignore no-explicit-any
  const deno = (globalThis as any).Deno !== undefined;
  const module = wasm ? await WebAssembly.compile(wasm) : await compileBuild(options.helper === true && deno);
  // The shared build imports its memory (shared, so that a helper thread can work on the same arrays).
  const shared = WebAssembly.Module.imports(module).some((i) => i.kind === "memory");
  const memory = shared
    ? new WebAssembly.Memory({ initial: 2, maximum: MAX_PAGES, shared: true })
    : undefined;
  // where abort messages are read: the imported memory, or the plain build's own once it is instantiated
  const messages: { memory?: WebAssembly.Memory } = { memory };
  const instance = await WebAssembly.instantiate(module, {
    env: {
      ...(memory ? { memory } : {}),
      abort(message: number, _file: number, line: number, column: number) {
        const text = message && messages.memory ? readString(messages.memory, message) : "";
        throw new EngineError(`engine aborted at ${line}:${column}${text ? `: ${text}` : ""}`);
      },
    },
  });
  const exports = instance.exports as unknown as Exports;
  messages.memory = exports.memory;
  // The helper joins through the shared memory once its loop runs (engine `join`): the caller shares from then on.
  let helper: Worker | undefined;
  if (options.helper && deno && memory) {
    exports.useHelper(1);
    const started = startHelper(module, memory);
    helper = started.worker;
    // a worker that could not start never joins: the engine works alone
    const settled = started.ready.then((ok) => ok || helper?.terminate());
    if (options.waitForHelper ?? true) await settled;
  }
  return {
    exports,
    close() {
      if (!helper) return;
      exports.useHelper(0);
      exports.stopHelper();
      helper.terminate();
      helper = undefined;
    },
  };
}

/** An AssemblyScript string (UTF-16, its byte length in the 4 bytes before it) out of the engine's memory. */
function readString(memory: WebAssembly.Memory, pointer: number): string {
  const bytes = new Uint32Array(memory.buffer, pointer - 4, 1)[0]!;
  return String.fromCharCode(...new Uint16Array(memory.buffer.slice(pointer, pointer + bytes)));
}

/** The helper thread: a worker running the module's job loop on the shared memory. */
function startHelper(
  module: WebAssembly.Module,
  memory: WebAssembly.Memory,
): { worker: Worker; ready: Promise<boolean> } {
  const worker = new Worker(new URL("./helper_worker.ts", import.meta.url), { type: "module" });
  const ready = new Promise<boolean>((resolve) => {
    worker.onmessage = () => resolve(true);
    worker.onerror = (event) => {
      event.preventDefault();
      resolve(false);
    };
  });
  worker.postMessage({ module, memory });
  return { worker, ready };
}

/**
 * The engine's module: a relaxed-SIMD build (fused multiply-adds; on shared memory when a helper is wanted) where
 * the host compiles one, else the portable build (plain SIMD, its own memory: Node 20 and older browsers take
 * this one, and then no helper).
 */
async function compileBuild(helper: boolean): Promise<WebAssembly.Module> {
  try {
    return await WebAssembly.compile(await readWasm(helper ? "ordo_shared.wasm" : "ordo_fma.wasm"));
  } catch {
    return await WebAssembly.compile(await readWasm("ordo.wasm"));
  }
}

async function readWasm(name: string): Promise<Uint8Array<ArrayBuffer>> {
  const url = new URL(`./${name}`, import.meta.url);
  try {
    // deno-lint-ignore no-explicit-any
    const deno = (globalThis as any).Deno;
    if (deno) return await deno.readFile(url);
    if (url.protocol === "file:") {
      // Node: read from disk (its fetch does not take file: URLs).
      const { readFile } = await import("node:fs/promises");
      return new Uint8Array(await readFile(url));
    }
    const response = await fetch(url); // browsers
    if (!response.ok) throw new Error(`${response.status}`);
    return new Uint8Array(await response.arrayBuffer());
  } catch {
    throw new EngineError(`the engine is not built (${url.href} cannot be read): run \`deno task build\``);
  }
}

/** What {@link solve} returns. States are interleaved (re, im), sample-major: sample k at offset 2·d·k. */
export interface Result {
  scheme: Scheme;
  /** Initial states propagated together (1 unless the model asked for columns); states hold d·columns entries per sample. */
  columns: number;
  /** How the steps were taken (undefined for the time-independent scheme). */
  method?: Method;
  /** Integrator steps actually taken (0 for the time-independent scheme). */
  steps: number;
  /** Integrator step size (the sample interval for the time-independent scheme). */
  stepSize: number;
  /** Recorded times. */
  times: Float64Array;
  /** terms[n]: λⁿ·ψₙ at every recorded time, n = 0…N. */
  terms: Float64Array[];
  /** The exactly propagated state at every recorded time. */
  exact: Float64Array;
  /**
   * An independent estimate of the exact state: the step-doubled run (2h)
   * for time-dependent schemes, or for time-independent ones the exact state
   * propagated by a Taylor series instead of the eigen-decomposition.
   */
  check: Float64Array;
  /** Divide |exact − check| by this to estimate the exact state's own error (15 for step doubling, 1 otherwise). */
  checkDivisor: number;
  /** Wall time in milliseconds. */
  elapsedMs: number;
}

/**
 * Computes the Dyson terms and the exact state of a model.
 *
 * @param engine a loaded engine
 * @param model the Hamiltonian, start state and grid
 * @param onProgress called with the fraction done after each chunk
 * @returns the recorded states
 * @throws {EngineError} if the engine runs out of memory or a factorisation fails
 */
export function solve(
  engine: Engine,
  model: Model,
  onProgress?: (fraction: number) => void,
): Result {
  const started = performance.now();
  const e = engine.exports;
  const scheme = schemeFor(model);
  const d = model.dim, r = model.order + 1, samples = model.samples;
  // m columns: m initial states propagated together (propagator columns); states are d·m entries per sample
  const m = model.columns ?? 1, dm = d * m;
  const sparse = scheme === "sparse-schrodinger" || scheme === "sparse-interaction";
  const sumConstant = scheme !== "time-dependent-h0" && !sparse;
  const h0 = sumConstant ? [sumTerms(model.unperturbed, d)] : model.unperturbed;
  const v = scheme === "time-independent" ? [sumTerms(model.perturbation, d)] : model.perturbation;
  check(e.init(d, model.order, h0.length, v.length, CHUNK_STEPS, m, sparse ? 1 : 0));
  const mem = () => e.memory.buffer;
  const writeTerms = (ptr: number, terms: OperatorTerm[]) => {
    terms.forEach((t, k) => new Float64Array(mem(), ptr + k * 16 * d * d, 2 * d * d).set(t.matrix));
  };
  if (sparse) {
    writeSparse(e, d, [...h0, ...v]);
    if (scheme === "sparse-interaction") {
      new Float64Array(mem(), e.bufEnergies(), d).set(diagonalEnergies(h0, d));
    }
  } else {
    writeTerms(e.bufH0Terms(), h0);
    writeTerms(e.bufVTerms(), v);
  }
  new Float64Array(mem(), e.bufInitial(), 2 * dm).set(model.initial);
  const schemeCode = {
    "time-independent": 0,
    "interaction-picture": 1,
    "time-dependent-h0": 2,
    "sparse-schrodinger": 3,
    "sparse-interaction": 4,
  }[scheme];
  const eigen = scheme === "time-dependent-h0" || sparse ? undefined : model.unperturbedEigen;
  if (eigen) {
    new Float64Array(mem(), e.bufEnergies(), d).set(eigen.values);
    new Float64Array(mem(), e.bufBasis(), 2 * d * d).set(eigen.vectors);
  }
  check(e.prepare(schemeCode, model.strength, eigen ? 1 : 0));

  const times = new Float64Array(samples);
  const interval = (model.tEnd - model.tStart) / (samples - 1);
  for (let k = 0; k < samples; k++) {
    times[k] = k === samples - 1 ? model.tEnd : model.tStart + k * interval;
  }
  const terms = Array.from(
    { length: r },
    () => new Float64Array(samples * 2 * dm),
  );
  const exact = new Float64Array(samples * 2 * dm);
  const checkStates = new Float64Array(samples * 2 * dm);
  const rec = new Float64Array(mem(), e.bufRecord(), (r + 2) * 2 * dm);
  const powers = Array.from({ length: r }, (_, n) => model.strength ** n);
  const store = (k: number, tau: number, inside = false) => {
    if (inside) e.recordSample(tau);
    else e.record(tau);
    for (let n = 0; n < r; n++) {
      const src = rec.subarray(n * 2 * dm, (n + 1) * 2 * dm);
      const dst = terms[n]!.subarray(k * 2 * dm, (k + 1) * 2 * dm);
      for (let a = 0; a < 2 * dm; a++) dst[a] = powers[n]! * src[a]!;
    }
    exact.set(rec.subarray(r * 2 * dm, (r + 1) * 2 * dm), k * 2 * dm);
    checkStates.set(rec.subarray((r + 1) * 2 * dm, (r + 2) * 2 * dm), k * 2 * dm);
  };
  store(0, 0);
  const finish = (steps: number, stepSize: number, checkDivisor: number): Result =>
    finite({
      scheme,
      columns: m,
      method: methodFor(model),
      steps,
      stepSize,
      times,
      terms,
      exact,
      check: checkStates,
      checkDivisor,
      elapsedMs: performance.now() - started,
    });

  if (scheme === "time-independent") {
    for (let k = 1; k < samples; k++) {
      check(e.advanceExact(interval));
      store(k, k * interval);
      onProgress?.(k / (samples - 1));
    }
    return finish(0, interval, 1);
  }

  const all = [...h0, ...v];
  const kt = all.length;
  const fine = new Float64Array(
    mem(),
    e.bufCoefFine(),
    CHUNK_STEPS * 2 * kt * 2,
  );
  const coarse = new Float64Array(
    mem(),
    e.bufCoefCoarse(),
    CHUNK_STEPS * kt * 2,
  );
  const c1 = 0.5 - Math.sqrt(3) / 6, c2 = 0.5 + Math.sqrt(3) / 6;
  const fineTimes = new Float64Array(2 * CHUNK_STEPS),
    coarseTimes = new Float64Array(CHUNK_STEPS);
  const values = new Float64Array(4 * CHUNK_STEPS);
  const fill = (
    buffer: Float64Array,
    nodeTimes: Float64Array,
    count: number,
  ) => {
    all.forEach((term, k) => {
      const c = term.coefficient;
      if (c.kind === "constant") {
        for (let q = 0; q < count; q++) {
          buffer[2 * (q * kt + k)] = c.re;
          buffer[2 * (q * kt + k) + 1] = c.im;
        }
        return;
      }
      c.sample(nodeTimes.subarray(0, count), values);
      for (let q = 0; q < count; q++) {
        buffer[2 * (q * kt + k)] = values[2 * q]!;
        buffer[2 * (q * kt + k) + 1] = values[2 * q + 1]!;
      }
    });
  };
  if (model.accuracy !== undefined) {
    const steps = adaptive(e, model, { fill, fine, coarse, store, onProgress });
    return finish(steps, (model.tEnd - model.tStart) / Math.max(steps, 1), 1);
  }
  const per = stepsPerSample(model);
  const h = interval / per;
  const total = per * (samples - 1);
  for (let j = 0; j < samples - 1; j++) {
    for (let done = 0; done < per;) {
      const n = Math.min(CHUNK_STEPS, per - done);
      const first = j * per + done;
      for (let s = 0; s < n; s++) {
        const t = model.tStart + (first + s) * h;
        fineTimes[2 * s] = t + c1 * h;
        fineTimes[2 * s + 1] = t + c2 * h;
      }
      for (let p = 0; p < n / 2; p++) {
        const t = model.tStart + (first + 2 * p) * h;
        coarseTimes[2 * p] = t + c1 * 2 * h;
        coarseTimes[2 * p + 1] = t + c2 * 2 * h;
      }
      fill(fine, fineTimes, 2 * n);
      fill(coarse, coarseTimes, n);
      check(e.advance(n, first * h, h));
      done += n;
      onProgress?.((first + n) / total);
    }
    store(j + 1, (j + 1) * per * h);
  }
  return finish(total, h, 15);
}

/** H0's diagonal when it is a constant sparse sum: E_a = Σ_k c_k·(H0_k)_aa (its interaction picture's energies). */
function diagonalEnergies(terms: OperatorTerm[], d: number): Float64Array {
  const out = new Float64Array(d);
  for (const t of terms) {
    const c = t.coefficient;
    if (c.kind !== "constant") throw new EngineError("a time-dependent H0 has no fixed energies");
    const csr = t.sparse!;
    for (let i = 0; i < d; i++) {
      for (let k = csr.rowStart[i]!; k < csr.rowStart[i + 1]!; k++) {
        if (csr.column[k] === i) out[i]! += c.re * csr.values[2 * k]! - c.im * csr.values[2 * k + 1]!;
      }
    }
  }
  return out;
}

/** Writes every term's CSR arrays into the engine (which allocates them). */
function writeSparse(e: Exports, d: number, terms: OperatorTerm[]): void {
  terms.forEach((t, k) => {
    const csr = t.sparse;
    if (!csr) throw new EngineError("a model's terms must be all dense or all sparse");
    const nnz = csr.column.length;
    if (csr.rowStart.length !== d + 1 || csr.values.length !== 2 * nnz || csr.rowStart[d] !== nnz) {
      throw new EngineError(
        `sparse term ${k} is malformed (rowStart of d+1 offsets ending at nnz, 2·nnz values)`,
      );
    }
    check(e.allocSparseTerm(k, nnz));
    new Int32Array(e.memory.buffer, e.sparseRowStart(k), d + 1).set(csr.rowStart);
    new Int32Array(e.memory.buffer, e.sparseColumn(k), nnz).set(csr.column);
    new Float64Array(e.memory.buffer, e.sparseValues(k), 2 * nnz).set(csr.values);
  });
}

/**
 * One column of a run with several: a result of one initial state, as a run from it alone would give.
 *
 * @param result a run with `columns` initial states
 * @param d the dimension
 * @param j which column
 * @returns the states of column j (copied)
 */
export function columnOf(result: Result, d: number, j: number): Result {
  const m = result.columns;
  if (m === 1) return result;
  const pick = (states: Float64Array) => {
    const out = new Float64Array(result.times.length * 2 * d);
    for (let k = 0; k < result.times.length; k++) {
      out.set(states.subarray(2 * d * (k * m + j), 2 * d * (k * m + j + 1)), 2 * d * k);
    }
    return out;
  };
  return {
    ...result,
    columns: 1,
    terms: result.terms.map(pick),
    exact: pick(result.exact),
    check: pick(result.check),
  };
}

/**
 * Returns the result when every recorded number is finite; a NaN or an infinity (an overflow somewhere in the
 * propagation) is never handed on as a result.
 */
function finite(result: Result): Result {
  for (const [what, states] of [["exact state", result.exact], ["check state", result.check]] as const) {
    if (!states.every(Number.isFinite)) throw new EngineError(nonFiniteMessage(what));
  }
  result.terms.forEach((term, n) => {
    if (!term.every(Number.isFinite)) throw new EngineError(nonFiniteMessage(`Dyson term ${n}`));
  });
  return result;
}

function nonFiniteMessage(what: string): string {
  return `the ${what} holds NaN or infinite values: the propagation overflowed double precision ` +
    "(are the energies, coefficients or λ so large that H·t exceeds about 1e300?)";
}

/** Σ coef·matrix over constant terms (the schemes that diagonalize take one summed H0 or V). */
function sumTerms(terms: OperatorTerm[], d: number): OperatorTerm {
  const m = new Float64Array(2 * d * d);
  for (const t of terms) {
    if (t.coefficient.kind !== "constant") {
      throw new EngineError("cannot sum a time-dependent term");
    }
    const { re, im } = t.coefficient;
    for (let k = 0; k < m.length; k += 2) {
      m[k]! += re * t.matrix[k]! - im * t.matrix[k + 1]!;
      m[k + 1]! += re * t.matrix[k + 1]! + im * t.matrix[k]!;
    }
  }
  return { matrix: m, coefficient: { kind: "constant", re: 1, im: 0 } };
}

/**
 * Eigenvalues of a Hermitian matrix with the engine's solver (no eigenvectors: a fraction of {@link eigh}'s work).
 *
 * @param engine a loaded engine
 * @param matrix d×d, row-major, interleaved (re, im)
 * @param d the dimension
 * @returns the eigenvalues, ascending
 */
export function eigenvalues(engine: Engine, matrix: Float64Array, d: number): Float64Array {
  const e = engine.exports;
  e.arenaReset();
  const a = e.arenaAlloc(16 * d * d),
    w = e.arenaAlloc(8 * d),
    work = e.arenaAlloc(e.EIGH_WORK_BYTES_PER_LEVEL.value * d);
  if (!a || !w || !work) check(1);
  new Float64Array(e.memory.buffer, a, 2 * d * d).set(matrix);
  check(e.eigenvaluesOnly(a, d, w, work) === 0 ? 0 : 2);
  return new Float64Array(e.memory.buffer, w, d).slice();
}

/**
 * Eigen-decomposition of a Hermitian matrix with the engine's solver.
 *
 * @param engine a loaded engine
 * @param matrix d×d, row-major, interleaved (re, im)
 * @param d the dimension
 * @returns ascending eigenvalues and the eigenvectors as columns (row-major, interleaved)
 */
export function eigh(
  engine: Engine,
  matrix: Float64Array,
  d: number,
): { values: Float64Array; vectors: Float64Array } {
  const e = engine.exports;
  e.arenaReset();
  const a = e.arenaAlloc(16 * d * d),
    w = e.arenaAlloc(8 * d),
    z = e.arenaAlloc(16 * d * d),
    work = e.arenaAlloc(e.EIGH_WORK_BYTES_PER_LEVEL.value * d);
  if (!a || !w || !z || !work) check(1);
  new Float64Array(e.memory.buffer, a, 2 * d * d).set(matrix);
  check(e.eigh(a, d, w, z, work) === 0 ? 0 : 2);
  return {
    values: new Float64Array(e.memory.buffer, w, d).slice(),
    vectors: new Float64Array(e.memory.buffer, z, 2 * d * d).slice(),
  };
}

/**
 * The product A·B of two d×d complex matrices (row-major, interleaved), by the engine's kernel: the columns of
 * B are the vectors the kernel multiplies, so all O(d³) work runs in WebAssembly.
 *
 * @param engine a loaded engine
 * @param a the left factor
 * @param b the right factor
 * @param d the dimension
 * @returns A·B, row-major, interleaved
 */
export function multiply(engine: Engine, a: Float64Array, b: Float64Array, d: number): Float64Array {
  const columns = new Float64Array(2 * d * d), out = new Float64Array(2 * d * d);
  transposeInto(columns, b, d);
  transposeInto(out, transformStates(engine, a, columns, d), d);
  return out;
}

/**
 * Every vector of a sample-major state array multiplied by a d×d matrix (e.g. a change of basis), by the
 * engine's kernel.
 *
 * @param engine a loaded engine
 * @param m the matrix, row-major, interleaved
 * @param states vectors of length d one after another
 * @param d the dimension
 * @returns the transformed vectors, in the same layout
 */
export function transformStates(
  engine: Engine,
  m: Float64Array,
  states: Float64Array,
  d: number,
): Float64Array {
  const e = engine.exports;
  const count = states.length / (2 * d);
  e.arenaReset();
  const pa = e.arenaAlloc(16 * d * d),
    px = e.arenaAlloc(states.length * 8),
    py = e.arenaAlloc(states.length * 8),
    scratch = e.arenaAlloc(e.packedScratchBytes(d, count));
  if (!pa || !px || !py || !scratch) check(1);
  new Float64Array(e.memory.buffer, pa, 2 * d * d).set(m);
  new Float64Array(e.memory.buffer, px, states.length).set(states);
  new Float64Array(e.memory.buffer, py, states.length).fill(0);
  e.zgemvPacked(pa, d, px, py, count, 1, 0, scratch);
  return new Float64Array(e.memory.buffer, py, states.length).slice();
}

/** out := mᵀ (no conjugation), d×d interleaved. */
function transposeInto(out: Float64Array, m: Float64Array, d: number): void {
  for (let i = 0; i < d; i++) {
    for (let j = 0; j < d; j++) {
      out[2 * (j * d + i)] = m[2 * (i * d + j)]!;
      out[2 * (j * d + i) + 1] = m[2 * (i * d + j) + 1]!;
    }
  }
}

/** Populations |ψ_a|² of the state at sample k of a sample-major state array. */
export function populationsAt(
  states: Float64Array,
  d: number,
  k: number,
): Float64Array {
  const out = new Float64Array(d);
  for (let a = 0; a < d; a++) {
    const re = states[2 * (k * d + a)]!, im = states[2 * (k * d + a) + 1]!;
    out[a] = re * re + im * im;
  }
  return out;
}

/** Samples the coefficients at node times into a coefficient buffer. */
type Fill = (buffer: Float64Array, nodeTimes: Float64Array, count: number) => void;

/** A local error estimate this small is round-off: it says nothing about the step size. */
const ROUND_OFF = 4e-15;

/** The most steps an accuracy-driven run may take before it is refused. */
const MAX_ADAPTIVE_STEPS = 1e8;

/** One way of taking accuracy-driven steps (see {@link adaptive}). */
interface Stepper {
  /** Steps of the method one attempt takes (2 for step doubling). */
  stepsPerAttempt: number;
  /** The controller's exponent: 1/(q+1) for an error estimate of order q. */
  exponent: number;
  /** The longest attempt allowed. */
  longest: number;
  /** Attempts a step of `length` from t; returns its local error estimate. */
  attempt(t: number, length: number): number;
  /** Called with the error the next attempt may make. */
  allow?(allowed: number): void;
  /** The state at `at` inside the accepted attempt from t, into the engine's companion buffer. */
  sampleAt(t: number, at: number): void;
}

interface AdaptiveIo {
  fill: Fill;
  fine: Float64Array;
  coarse: Float64Array;
  store: (k: number, tau: number, inside?: boolean) => void;
  onProgress?: (fraction: number) => void;
}

/**
 * Step doubling with the 4th-order exponential integrator (the Schrödinger-picture scheme): an attempt of 2h is
 * two steps of h and, from the same start, one of 2h (engine `macroStep`); the estimate ‖Ψ_h − Ψ_2h‖/15 is
 * Richardson's for a 4th-order method.
 */
function stepDoubling(e: Exports, model: Model, io: AdaptiveIo): Stepper {
  const [c1, c2] = GAUSS_NODES;
  const fineTimes = new Float64Array(4), coarseTimes = new Float64Array(2);
  const twoSteps = (from: number, step: number) => {
    fineTimes.set([from + c1 * step, from + c2 * step, from + step + c1 * step, from + step + c2 * step]);
    io.fill(io.fine, fineTimes, 4);
  };
  return {
    stepsPerAttempt: 2,
    exponent: 1 / 5,
    longest: 2 * (model.maxStep ?? Infinity),
    attempt(t, length) {
      twoSteps(t, length / 2);
      coarseTimes.set([t + c1 * length, t + c2 * length]);
      io.fill(io.coarse, coarseTimes, 2);
      check(e.macroStep(t - model.tStart, length / 2));
      return e.stepError();
    },
    // The next step's Taylor series may stop at 1% of the error this step may make (never above 1e-12).
    allow: (allowed) => e.setTaylorTolerance(Math.min(1e-12, 0.01 * allowed)),
    sampleAt(t, at) {
      twoSteps(t, (at - t) / 2);
      check(e.sampleWithin(t - model.tStart, (at - t) / 2));
    },
  };
}

/** The Dormand–Prince 8(5,3) nodes c_i of its twelve stages (engine `rkStep`). */
const RK_NODES = [
  0,
  0.0526001519587677318785587544488,
  0.0789002279381515978178381316732,
  0.118350341907227396726757197510,
  0.281649658092772603273242802490,
  1 / 3,
  0.25,
  4 / 13,
  127 / 195,
  0.6,
  6 / 7,
  1,
];

/**
 * The embedded Runge–Kutta pair (the accuracy-driven interaction-picture scheme): one step per attempt, its
 * combined 5th/3rd-order estimate behaving as h⁸ (Hairer, Nørsett & Wanner, Solving ODEs I, §II.10).
 */
function rungeKutta(e: Exports, model: Model, io: AdaptiveIo): Stepper {
  const times = new Float64Array(RK_NODES.length);
  const stages = (t: number, step: number) => {
    RK_NODES.forEach((c, i) => (times[i] = t + c * step));
    io.fill(io.fine, times, RK_NODES.length);
  };
  return {
    stepsPerAttempt: 1,
    exponent: 1 / 8,
    longest: model.maxStep ?? Infinity,
    attempt(t, length) {
      stages(t, length);
      check(e.rkStep(t - model.tStart, length));
      return e.stepError();
    },
    sampleAt(t, at) {
      stages(t, at - t);
      check(e.rkSample(t - model.tStart, at - t));
    },
  };
}

/**
 * Accuracy-driven stepping on the whole stacked state (the exact state and every Dyson term): attempts chosen by
 * the standard controller length ← length·0.9·(allowed/err)^exponent (Hairer, Nørsett & Wanner, Solving ODEs I,
 * §II.4), with the error allowed per step proportional to its length so that the errors of a whole run add up to
 * at most half the requested accuracy. Recorded times inside a step get their states by a step from its start
 * (so they do not shorten the steps); the error estimate recorded there is the one at the step's start.
 *
 * @returns the number of steps taken
 */
function adaptive(e: Exports, model: Model, io: AdaptiveIo): number {
  const stepper = methodFor(model) === "runge-kutta-8"
    ? rungeKutta(e, model, io)
    : stepDoubling(e, model, io);
  const span = model.tEnd - model.tStart;
  const accuracy = model.accuracy!;
  const interval = span / (model.samples - 1);
  const sampleTime = (k: number) => (k === model.samples - 1 ? model.tEnd : model.tStart + k * interval);
  const near = 1e-14 * span;
  let length = Math.min(span / 16, stepper.longest);
  let steps = 0, tries = 0, next = 1, t = model.tStart;
  while (next < model.samples) {
    const big = Math.min(length, model.tEnd - t);
    // Below round-off (a few 1e-15 on unit vectors) no step size does better: accept, and let the
    // accumulated estimate say what it cost.
    const error = stepper.attempt(t, big), allowed = Math.max(0.5 * accuracy * big / span, ROUND_OFF);
    stepper.allow?.(allowed);
    const factor = error > 0 ? Math.min(4, Math.max(0.2, 0.9 * (allowed / error) ** stepper.exponent)) : 4;
    if (error <= allowed) {
      const end = model.tEnd - (t + big) <= near ? model.tEnd : t + big;
      for (; next < model.samples && sampleTime(next) < end - near; next++) {
        stepper.sampleAt(t, sampleTime(next));
        io.store(next, sampleTime(next) - model.tStart, true);
      }
      t = end;
      steps += stepper.stepsPerAttempt;
      if (next < model.samples && sampleTime(next) - t <= near) {
        io.store(next++, sampleTime(next - 1) - model.tStart);
      }
      io.onProgress?.((t - model.tStart) / span);
      if (big === length || factor < 1) length = Math.min(big * factor, stepper.longest);
    } else {
      e.rejectStep();
      length = Math.min(big * factor, stepper.longest);
    }
    if (++tries > MAX_ADAPTIVE_STEPS || !(length > 2e-13 * span)) {
      throw new EngineError(
        `accuracy ${accuracy} would take more than ${
          MAX_ADAPTIVE_STEPS.toExponential(0)
        } steps here, or steps ` +
          "shorter than round-off (is a coefficient not smooth, or far too fast?); ask for less accuracy or " +
          "use fixed steps",
        true,
      );
    }
  }
  return steps;
}
