// The ordo engine: Dyson terms and exact propagation. See engine/mod.ts for
// the TypeScript face.
export { arenaAlloc, arenaReset } from "./arena";
export {
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
export { eigh, eigvalsh } from "./eigh";
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
import { awaitJob, finishJob } from "./share";
import { JOB_PACKED_ROWS, packedRowsJob } from "./kernels";
import {
  JOB_LOG_ROWS,
  JOB_MATVEC_ROWS,
  JOB_REFLECT_COLUMNS,
  JOB_ROTATE_ROWS,
  JOB_UPDATE_ROWS,
  logRowsJob,
  matvecRowsJob,
  reflectColumnsJob,
  rotateRowsJob,
  updateRowsJob,
} from "./eigh";
export { helperJobs, stopHelper, useHelper } from "./share";

/** The helper thread's loop (called once, in the worker): claims and does jobs until told to stop. */
export function helperLoop(): void {
  for (let kind = awaitJob(); kind != 0; kind = awaitJob()) {
    if (kind == JOB_PACKED_ROWS) packedRowsJob();
    else if (kind == JOB_REFLECT_COLUMNS) reflectColumnsJob();
    else if (kind == JOB_ROTATE_ROWS) rotateRowsJob();
    else if (kind == JOB_LOG_ROWS) logRowsJob();
    else if (kind == JOB_MATVEC_ROWS) matvecRowsJob();
    else if (kind == JOB_UPDATE_ROWS) updateRowsJob();
    finishJob();
  }
}
