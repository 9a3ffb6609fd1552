/** Public surface of src/source (analytic sources). */
export {
  ANALYTIC_SOURCE_TYPES,
  AnalyticSource,
  buildSource,
  isAnalyticSourceType,
  type SourceComponent,
  type SourceProfile,
} from "./analytic.js";
export { GaussianProfile, PointSourceProfile } from "./gaussian.js";
export { gamma, lnGamma, regularizedGammaP } from "./gammaFunctions.js";
export { SERSIC_N_MAX, SERSIC_N_MIN, SersicProfile, sersicBn, sersicFluxOverIeRe2 } from "./sersic.js";
