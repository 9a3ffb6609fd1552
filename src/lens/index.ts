/** Public surface of src/lens: mass profiles, composite lens, ray tracing, critical curves. */
export { buildLens, buildMassProfile, LENS_TYPES, type LensContext } from "./build.js";
export {
  caustics,
  convergenceMap,
  criticalCurves,
  einsteinRadiusFromCurves,
  magnificationMap,
  mapToSourcePlane,
  polygonArea,
  totalMagnification,
  type CriticalCurves,
  type GridSpec,
  type Polyline,
} from "./critical.js";
export { Epl, EPL_MIN_Q, EPL_SLOPE_MAX, EPL_SLOPE_MIN, hessianFromHomogeneity, type EplParams } from "./epl.js";
export { fastAtanhRatio, fastAtanRatio, fastExp } from "./fastMath.js";
export { HessianWorkspace, Lens } from "./lens.js";
export { Multipole, type MultipoleParams } from "./multipole.js";
export { Nfw, NFW_MIN_Q, nfwF, nfwH, nfwKappaOverKappaS, type NfwParams } from "./nfw.js";
export { findPointImages, type NodeGrid, type PointImages } from "./pointImages.js";
export { PointMass, type PointMassParams } from "./pointMass.js";
export {
  orientation,
  Scratch,
  type AffineMap,
  type LinearDeflection,
  type MassProfile,
  type Orientation,
} from "./profile.js";
export { PseudoJaffe, type PseudoJaffeParams } from "./pseudoJaffe.js";
export { DEFAULT_RAYTRACE_OPTIONS, RayTracePlan, type BrightnessFunction, type RayTraceOptions } from "./raytrace.js";
export { ExternalShear, type ShearParams } from "./shear.js";
export { Sie, type SieParams } from "./sie.js";
export { lensSummary, summaryToJson, type JsonPolyline, type LensSummary, type NumericModel, type SummaryOptions } from "./summary.js";
export { readNumber, type ComponentInput, type NumberRule } from "./validate.js";
