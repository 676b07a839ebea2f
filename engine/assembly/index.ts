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
export { eigh } from "./eigh";
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
