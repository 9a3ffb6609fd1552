/**
 * Public surface of the Fourier engine: the NUFFT plan and the reference direct transform
 * between a model grid and visibilities, the pixel window, gridded statistics for χ², and the
 * primary beam. (Dirty images and PSFs live in dirty.ts / beamFit.ts.)
 */
export { NufftPlan, DEFAULT_NUFFT_OPTIONS, type NufftOptions } from "./nufft.js";
export { directForward, directAdjoint, type GridGeometry } from "./direct.js";
export { pixelWindow, sinc, checkNyquist } from "./window.js";
export {
  esKernel,
  esKernelFourier,
  esKernelForTolerance,
  esKernelForWidth,
  gaussLegendre,
  type EsKernel,
} from "./kernel.js";
export { GriddedStats, DEFAULT_GRIDDED_OPTIONS, type GriddedInput, type GriddedOptions } from "./gridded.js";
export {
  applyBeam,
  besselJ1,
  primaryBeamFwhmRad,
  primaryBeamImage,
  primaryBeamResponse,
  DEFAULT_PRIMARY_BEAM,
  type BeamShape,
  type PrimaryBeamOptions,
} from "./primaryBeam.js";
export { dotCompensated, CompensatedSum } from "./sum.js";
export {
  dirtyImage,
  directDirtyImage,
  defaultImaging,
  imagingWeights,
  resolveDirtyOptions,
  DEFAULT_DIRTY_OPTIONS,
  type DirtyImageOptions,
  type DirtyImageResult,
  type VisLike,
  type Weighting,
} from "./dirty.js";
export { fitBeam, type BeamFitResult } from "./beamFit.js";
