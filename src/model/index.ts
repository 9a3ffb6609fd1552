/** The model file and parameter vectors: public surface of src/model. */
export { loadModelFile, loadSkyFile, parseModel, parseModelText, parseSky, parseJsonText, type SkyFile } from "./load.js";
export { validateModel, DEFAULT_COSMOLOGY } from "./schema.js";
export {
  buildSpec, toNumbers, initialVector, freeNames, freeIndex, logPrior, priorTransform, bounds, wrapToBox,
  isAtBound, wrapAngleDeg, AT_BOUND_FRACTION,
  type ModelSpec, type FreeParameter, type LinearParameter, type SearchBounds,
} from "./parameters.js";
export { makePrior, logDensity, inverseCdf, searchBox, normalMass, type Prior } from "./priors.js";
export { erfc, normalCdf, normalPdf, normalQuantile } from "./normal.js";
export { COMPONENTS, componentDef, domainText, inDomain, type ComponentDef, type ParamDef, type Domain } from "./components.js";
export type * from "./types.js";
