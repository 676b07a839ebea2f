/**
 * The engine's input: a finite Hamiltonian H(t) = H0(t) + λ·V(t), each part a
 * sum of constant matrices times scalar coefficients, an initial state and a
 * time grid. Matrices are dense, row-major, with real and imaginary parts
 * interleaved.
 *
 * @module
 */

/** Fills `out` (interleaved re, im) with a coefficient's values at `times`. */
export type Sampler = (times: Float64Array, out: Float64Array) => void;

/** A scalar coefficient: a constant, or a function of time sampled on demand. */
export type Coefficient =
  | { kind: "constant"; re: number; im: number }
  | { kind: "sampled"; sample: Sampler };

/** One term c(t)·M of H0 or of V. */
export interface OperatorTerm {
  /** d×d, row-major, interleaved (re, im): length 2·d² (empty when the term is sparse). */
  matrix: Float64Array;
  /** The scalar in front. */
  coefficient: Coefficient;
  /** The term as a sparse matrix; then `matrix` is not read. A model's terms are all dense or all sparse. */
  sparse?: SparseMatrix;
}

/** A d×d complex matrix in compressed sparse rows. */
export interface SparseMatrix {
  /** d+1 offsets into column/values: row i holds entries rowStart[i] … rowStart[i+1]−1. */
  rowStart: Int32Array;
  /** The column of each entry. */
  column: Int32Array;
  /** The entries, interleaved (re, im). */
  values: Float64Array;
}

/** Everything the engine needs for one run. */
export interface Model {
  /** Hilbert-space dimension d. */
  dim: number;
  /** H0(t) = Σ terms; constant when every coefficient is constant. */
  unperturbed: OperatorTerm[];
  /** V(t) = Σ terms: the series is in powers of λ·V. */
  perturbation: OperatorTerm[];
  /** λ, the bookkeeping strength (1 unless swept). */
  strength: number;
  /** ψ(t_start): length 2·d, interleaved, unit norm. */
  initial: Float64Array;
  /**
   * Initial states propagated together in one run, all by the same products (default 1): `initial` then holds
   * them one after another (2·dim numbers each), e.g. basis states for columns of the propagator.
   */
  columns?: number;
  /** Start of the time window. */
  tStart: number;
  /** End of the time window (> tStart). */
  tEnd: number;
  /** Requested number of integrator steps (the engine may round up; it reports what it used). */
  steps: number;
  /** Recorded times, evenly spaced, ends included (≥ 2). */
  samples: number;
  /** Highest Dyson order N ≥ 0. */
  order: number;
  /**
   * When set, a stepped scheme chooses its own steps so that the final populations of the exact state and of
   * every partial sum are within this (absolute) accuracy; `steps` is then ignored.
   */
  accuracy?: number;
  /** With an accuracy: the longest step the engine may take (e.g. to resolve the fastest phase). */
  maxStep?: number;
  /**
   * The eigen-decomposition of the constant H0 (ascending values; vectors as columns, row-major, interleaved)
   * when the caller has it already, so that the engine does not compute it again. Ignored when H0 depends on t.
   */
  unperturbedEigen?: { values: Float64Array; vectors: Float64Array };
}

/** Whether a coefficient depends on time. */
export function isTimeDependent(c: Coefficient): boolean {
  return c.kind === "sampled";
}

/** The scheme a model calls for. */
export type Scheme =
  | "time-independent"
  | "interaction-picture"
  | "time-dependent-h0"
  | "sparse-schrodinger"
  | "sparse-interaction";

/** The non-zeros a model's sparse terms hold in all (0 for dense terms). */
export function nonZerosOf(
  model: {
    unperturbed: ({ sparse?: SparseMatrix } | undefined)[];
    perturbation: ({ sparse?: SparseMatrix } | undefined)[];
  },
): number {
  return [...model.unperturbed, ...model.perturbation].reduce(
    (s, t) => s + (t?.sparse?.column.length ?? 0),
    0,
  );
}

/** Whether a model's operators are sparse (then every term is). */
export function isSparse(model: Pick<Model, "unperturbed" | "perturbation">): boolean {
  return model.unperturbed.some((t) => t.sparse !== undefined) ||
    model.perturbation.some((t) => t.sparse !== undefined);
}

/** The smallest dimension whose dense products are worth sharing with a helper thread (engine `SHARE_FROM`). */
export const HELPER_FROM_DIM = 64;

/**
 * Whether a helper thread would pay for itself on this model: dense operators of dimension
 * {@link HELPER_FROM_DIM} or more (sparse products and small ones are not shared).
 *
 * @param model the model to be solved
 * @returns true when {@link loadEngine}'s `helper` option is worth its start-up (~25 ms of a second core; with
 *   `waitForHelper: false` the run does not wait for it)
 */
export function wantsHelper(model: Pick<Model, "dim" | "unperturbed" | "perturbation">): boolean {
  return model.dim >= HELPER_FROM_DIM && !isSparse(model);
}

/**
 * Picks the scheme: sparse operators (the Schrödinger picture, whatever depends on t), no t anywhere, constant
 * H0 with V(t), or H0(t).
 */
export function schemeFor(model: Model): Scheme {
  if (isSparse(model)) {
    // a constant H0: the interaction picture of its diagonal keeps V's pattern (with an accuracy: Runge–Kutta
    // steps; H0's off-diagonal part, if any, joins the rate)
    const constant = model.unperturbed.every((t) => !isTimeDependent(t.coefficient));
    return constant && model.accuracy !== undefined ? "sparse-interaction" : "sparse-schrodinger";
  }
  if (model.unperturbed.some((t) => isTimeDependent(t.coefficient))) {
    return "time-dependent-h0";
  }
  if (model.perturbation.some((t) => isTimeDependent(t.coefficient))) {
    return "interaction-picture";
  }
  return "time-independent";
}

/**
 * How a stepped scheme steps. Fixed steps and the Schrödinger-picture scheme use the 4th-order commutator-free
 * exponential integrator (norm-preserving, step doubling for the error). An accuracy-driven interaction-picture
 * run uses a Lawson (integrating-factor) exponential Runge–Kutta method: H0's evolution by its exact exponential
 * (the interaction picture), the coupling by the Dormand–Prince 8(5,3) pair with its embedded error estimate,
 * whose twelve stages per step sample the coupling far more densely; it preserves the norm only to its accuracy.
 * see: Lawson, SIAM J. Numer. Anal. 4 (1967) 372; Hochbruck & Ostermann, Acta Numerica 19 (2010) 209.
 */
export type Method = "commutator-free-4" | "runge-kutta-8";

/** How each method is named in reports. */
export const METHOD_NAMES: Record<Method, string> = {
  "commutator-free-4": "4th-order commutator-free exponential integrator",
  "runge-kutta-8":
    "Lawson exponential Runge–Kutta (the interaction picture's phases exactly, the rest by the Dormand–Prince 8(5,3) pair)",
};

/** The stepping method of a model (undefined for the time-independent scheme, which takes no steps). */
export function methodFor(model: Model): Method | undefined {
  const scheme = schemeFor(model);
  if (scheme === "time-independent") return undefined;
  if (scheme === "sparse-interaction") return "runge-kutta-8";
  return scheme === "interaction-picture" && model.accuracy !== undefined
    ? "runge-kutta-8"
    : "commutator-free-4";
}

/**
 * The largest phase per step (rad) each method resolves: the fastest coupled Bohr frequency or coefficient rate
 * times the step must stay below it, or the samples of the coupling may alias and the error estimate cannot
 * tell. Two Gauss nodes per 4th-order step: 1 rad. Twelve stages per Runge–Kutta step, at most 0.27 of a step
 * apart: 5 rad (at most 1.34 rad, under π/2, between two samples of the fastest phase). Measured at up to ~4.5
 * rad per step on the dense driven bench cases (d = 8, 64, 256) and the accuracy test's five cases, the pair's
 * estimate stayed within 10× of the true error (on the bench cases 2–5× above it).
 */
export const PHASE_PER_STEP_LIMIT: Record<Method, number> = { "commutator-free-4": 1, "runge-kutta-8": 5 };

/** Integrator steps per recorded interval: enough for the request, even (for step doubling). */
export function stepsPerSample(model: Pick<Model, "steps" | "samples">): number {
  const per = Math.max(1, Math.ceil(model.steps / (model.samples - 1)));
  return per % 2 === 0 ? per : per + 1;
}

/** The two Gauss nodes of the 4th-order step, as fractions of the step. */
export const GAUSS_NODES = [0.5 - Math.sqrt(3) / 6, 0.5 + Math.sqrt(3) / 6] as const;

/**
 * Calls visit(t) at every time a stepped scheme samples the coefficients: the two Gauss nodes of each step of
 * size h, and of each doubled step 2h (the step-doubling reference), in the engine's own arithmetic.
 *
 * @param grid the window, the requested steps and the recorded samples
 * @param visit called once per node time
 */
export function forEachNode(
  grid: Pick<Model, "tStart" | "tEnd" | "steps" | "samples">,
  visit: (t: number) => void,
): void {
  const per = stepsPerSample(grid);
  const h = (grid.tEnd - grid.tStart) / (grid.samples - 1) / per;
  const [c1, c2] = GAUSS_NODES;
  const total = per * (grid.samples - 1);
  for (let s = 0; s < total; s++) {
    const t = grid.tStart + s * h;
    visit(t + c1 * h);
    visit(t + c2 * h);
    if (s % 2 === 0) {
      visit(t + c1 * 2 * h);
      visit(t + c2 * 2 * h);
    }
  }
}

/** WebAssembly memory the engine may use: 32-bit addresses reach 4 GiB; we keep headroom. */
export const WASM_LIMIT_BYTES = 3 * 1024 ** 3;

/** Memory the recorded states may take in the host (JavaScript) heap. */
export const RECORD_LIMIT_BYTES = 8 * 1024 ** 3;

/** Steps whose coefficient samples are held at once (the input arrives in chunks of this many). */
export const CHUNK_STEPS = 256;

/** Estimated memory of a run, in bytes: inside the engine and for the recorded states, each with its largest part. */
export interface MemoryEstimate {
  wasmBytes: number;
  recordBytes: number;
  /** wasm + records. */
  bytes: number;
  /** The largest part, described. */
  largest: string;
}

/**
 * Estimates a run's memory from the engine's allocations (engine/assembly/schemes.ts `init`)
 * and the recorded states.
 */
export function estimateMemory(
  model: Pick<Model, "dim" | "order" | "samples" | "columns"> & {
    unperturbed: ({ sparse?: SparseMatrix } | undefined)[];
    perturbation: ({ sparse?: SparseMatrix } | undefined)[];
    /** Sparse terms whose non-zeros are not known yet (a check before assembly): their matrices cost nothing here. */
    sparse?: boolean;
  },
): MemoryEstimate {
  const d = model.dim, r = model.order + 1, dm = d * (model.columns ?? 1);
  const terms = Math.max(model.unperturbed.length, 1) + Math.max(model.perturbation.length, 1);
  // vectors: the stacked state and its copies (series, record, tmp, save: r+2 each; comp r+1; two Taylor
  // buffers), the Runge–Kutta stages and work (17 × (r+1)), the packed kernel's scratch, and a few singles
  // sparse terms: no d×d matrix at all, their CSR arrays instead (16 bytes a value, 4 a column, 4 a row)
  const all = [...model.unperturbed, ...model.perturbation];
  const sparse = model.sparse === true || all.some((t) => t?.sparse !== undefined);
  const nonZeros = nonZerosOf(model);
  const matrices = sparse ? 0 : terms + 10;
  const vectors = 4 * (r + 2) + (r + 1) + 2 * Math.max(r, 2) + 17 * (r + 1) + Math.max(16, r + 3) + 10;
  const parts: [string, number, "wasm" | "record"][] = [
    sparse
      ? [
        `engine operators: ${all.length} sparse terms, ${nonZeros} non-zeros`,
        nonZeros * 20 + all.length * (d + 1) * 4,
        "wasm",
      ]
      : [`engine operators: ${matrices} matrices of d² = ${d * d} complex`, matrices * d * d * 16, "wasm"],
    [
      `engine state: ${vectors} vectors of d = ${d} complex${dm > d ? ` × ${dm / d} columns` : ""}`,
      vectors * dm * 16,
      "wasm",
    ],
    [
      `coefficient chunk: ${CHUNK_STEPS} steps × 3 nodes × ${terms} terms`,
      CHUNK_STEPS * 3 * terms * 16,
      "wasm",
    ],
    [
      `recorded states: ${model.samples} samples × ${r + 2} vectors × d = ${d} complex${
        dm > d ? ` × ${dm / d} columns` : ""
      }`,
      model.samples * (r + 2) * dm * 16,
      "record",
    ],
  ];
  const sum = (kind: string) => parts.filter((p) => p[2] === kind).reduce((s, p) => s + p[1], 0);
  const wasmBytes = sum("wasm") + 2 * 65536, recordBytes = sum("record");
  const largest = parts.reduce((a, b) => (b[1] > a[1] ? b : a))[0];
  return { wasmBytes, recordBytes, bytes: wasmBytes + recordBytes, largest };
}
