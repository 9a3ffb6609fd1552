/**
 * Forecasts for comparing array configurations before observing (`arcfringe plan`): coverage,
 * beams, sensitivity, recovered flux, Fisher-matrix uncertainties, time to reach a target σ and
 * the Monte-Carlo check of the forecast.
 */
export { type PlanCoverage, planCoverage } from "./coverage.js";
export {
  type UvPoints, type ModelVisibilityOptions, DEFAULT_MODEL_VIS_OPTIONS, ModelVisibilityPlan, isAnalyticSky, checkForecastSky,
} from "./modelVis.js";
export { type DifferenceScheme, type FisherOptions, type FisherMatrices, defaultStep, fisherMatrices, SENSITIVITY_FLOOR } from "./fisher.js";
export { type FisherSummary, summariseFisher, NULL_EIGEN_FRACTION, NULL_COMPONENT, MAX_INFLATION } from "./covariance.js";
export { type BeamForecast, synthesizedBeams, largestAngularScaleArcsec, PSF_SIZE, PSF_PIXELS_PER_RESOLUTION, LAS_COEFFICIENT } from "./beam.js";
export { pointSourceSigmaJy, gaussianBeamAreaArcsec2, surfaceBrightnessSigma } from "./sensitivity.js";
export { type ImagingGeometry, type RecoveryResult, type RecoveryInput, imagingGeometry, fluxRecovery, highPass, MASK_FLUX_FRACTION, MAX_IMAGE_SIZE } from "./recovery.js";
export {
  type PlanConfiguration, type ForecastOptions, type ParameterForecast, type ConfigForecast, DEFAULT_FORECAST_OPTIONS, forecastConfiguration,
} from "./forecast.js";
export { type TimeTarget, type TimeToReach, parseTimeTarget, timeToReach } from "./timeToReach.js";
export { type FitOne, type TrialOptions, type TrialSummary, runTrials } from "./trials.js";
export { isSinglePointSourceSky, pointSourceFitter } from "./pointFit.js";
