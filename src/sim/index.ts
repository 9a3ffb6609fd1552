/**
 * The instrument simulator: antenna layouts, Earth-rotation uv tracks, thermal noise, antenna
 * gain errors, observation files and mock observations.
 */
export {
  type AntennaLayout,
  type GenerateLayoutSpec,
  MIN_SPACING_DISHES,
  Y_ARM_ROTATION_DEG,
  Y_ARM_POWER_LAW,
  parseLayoutTable,
  readLayoutFile,
  formatLayoutTable,
  generateLayout,
  maxBaselineLengthM,
  minBaselineLengthM,
  defaultAntennaName,
} from "./layout.js";
export {
  type TrackGeometry,
  type UvTrackM,
  SIDEREAL_PER_SOLAR,
  HOUR_ANGLE_RATE_RAD_PER_S,
  DEFAULT_ELEVATION_LIMIT_DEG,
  enuToXyz,
  xyzToUvw,
  elevationRad,
  trackTimes,
  buildUvTrack,
} from "./uvw.js";
export { sefdJy, visibilitySigmaJy, stokesISigmaJy, imageSigmaJyPerBeam } from "./noise.js";
export { type GainErrorSpec, type AntennaGains, drawAntennaGains, baselineGain } from "./gains.js";
export {
  type Observation,
  type ObservationPreset,
  OBSERVATION_PRESETS,
  OBSERVATION_DEFAULTS,
  parseObservation,
  readObservationFile,
  channelFrequenciesHz,
} from "./observation.js";
export {
  type AnalyticComponent,
  type PointSourceComponent,
  type GaussianComponent,
  type SkyVisibilityFn,
  analyticSkyVisibilities,
} from "./analytic.js";
export { type SimulateOptions, type SimulationResult, simulateObservation, runSimulation } from "./simulate.js";
export { type ObservationSummary, summariseObservation } from "./summary.js";
