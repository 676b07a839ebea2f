// The ordo engine: Dyson terms and exact propagation. See engine/mod.ts for
// the TypeScript face.
export { arenaAlloc, arenaReset } from "./arena";
export { phasesOf } from "./trig";
export {
  fusedMultiplyAdd,
  PEAK_FLOPS_PER_ITERATION,
  packedScratchBytes,
  peakLoop,
  setKernelScratch,
  useSimd,
  zcsrmvRef,
  zcsrmvSimd,
  zgemv,
  zgemvPacked,
  zgemvRef,
  zgemvSimd,
} from "./kernels";
export {
  EIGH_WORK_BYTES_PER_LEVEL,
  eigenvaluesOnly,
  eigh,
  lastEighByInverseIteration,
  setInverseIterationExtraSteps,
} from "./eigh";
export {
  advance,
  advanceExact,
  allocSparseTerm,
  sparseColumn,
  sparseRowStart,
  sparseValues,
  bufBasis,
  bufCoefCoarse,
  bufCoefFine,
  bufEnergies,
  bufH0Terms,
  bufInitial,
  bufRecord,
  bufVTerms,
  init,
  macroStep,
  prepare,
  record,
  recordSample,
  rejectStep,
  rkSample,
  rkStep,
  sampleWithin,
  setTaylorTolerance,
  takeKernelFlops,
  stepError,
} from "./schemes";

// ------------------------------------------------------------------ the helper thread's loop
import { awaitJob, blockDone, blockEnd, claim, countHelperBlock, currentJob, jobKind, join } from "./share";
import { JOB_PACKED_ROWS, packedRowsJob } from "./kernels";
import { JOB_ORDERS, JOB_STAGE_PHASES, ordersJob, stagePhasesJob } from "./schemes";
import {
  inverseVectorsJob,
  JOB_INVERSE_VECTORS,
  JOB_LOG_ROWS,
  JOB_MATVEC_ROWS,
  JOB_REFLECT_VECTORS,
  logRowsJob,
  matvecRowsJob,
  reflectVectorsJob,
} from "./eigh";
export { helperBlocks, helperFailed, stopHelper, useHelper } from "./share";

/** The helper thread's loop (called once, in the worker): takes blocks of each job posted, until told to stop. */
export function helperLoop(): void {
  const first = currentJob();
  join();
  for (let job = awaitJob(first); job != 0; job = awaitJob(job)) {
    for (let s = claim(job); s >= 0; s = claim(job)) {
      const kind = jobKind(), e = blockEnd(s);
      if (kind == JOB_PACKED_ROWS) packedRowsJob(s, e);
      else if (kind == JOB_REFLECT_VECTORS) reflectVectorsJob(s, e);
      else if (kind == JOB_LOG_ROWS) logRowsJob(s, e);
      else if (kind == JOB_MATVEC_ROWS) matvecRowsJob(s, e);
      else if (kind == JOB_STAGE_PHASES) stagePhasesJob(s, e);
      else if (kind == JOB_ORDERS) ordersJob(s, e);
      else if (kind == JOB_INVERSE_VECTORS) inverseVectorsJob(s, e);
      countHelperBlock();
      blockDone(); // last: the caller may post the next job once every block is done
    }
  }
}
