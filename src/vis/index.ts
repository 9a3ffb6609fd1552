/**
 * Public surface of the visibility data layer: the `Visibilities` type, readers and writers
 * (UVFITS, arcfringe HDF5, CSV), Stokes I formation, the weight-scale (noise) check and the
 * summary printed by `inspect`. Import from here.
 */
export type { Visibilities, ReadReport, StokesReport, CorrelationCode } from "./types.js";
export { CORRELATION_NAMES } from "./types.js";
export { readVisibilities, writeVisibilities, detectFormat, formatFromExtension } from "./read.js";
export type { ReadOptions, VisFormat } from "./read.js";
export { readUvfits } from "./uvfits.js";
export { writeUvfits } from "./uvfitsWrite.js";
export { readCsv, writeCsv } from "./csv.js";
export { readHdf5, writeHdf5, HDF5_FORMAT, HDF5_FORMAT_VERSION, HDF5_SIGN_CONVENTION } from "./hdf5.js";
export { toStokesI } from "./stokes.js";
export { estimateWeightScale, rescaleWeights, CHI2_1_MEDIAN } from "./noise.js";
export type { WeightScaleEstimate } from "./noise.js";
export { summariseVisibilities } from "./summary.js";
export type { VisSummary } from "./summary.js";
