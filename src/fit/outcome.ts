/**
 * What a finished fit hands to the output writers (result.json, chain.h5, FITS, PNG, report):
 * plain typed data, no behaviour. Angles in arcsec, fluxes in Jy, images on the CONVENTIONS.md
 * model grid (row-major, column 0 = East edge, row 0 = South edge).
 */
import type { ModelSpec } from "../model/parameters.js";
import type { NumericModel } from "../model/types.js";

/** A Polyline in the image or source plane [arcsec]. */
export interface Polyline {
  xArcsec: Float64Array;
  yArcsec: Float64Array;
}

/** A square image on a grid centred on (centreXArcsec, centreYArcsec). */
export interface GridImage {
  data: Float64Array;
  n: number;
  cellArcsec: number;
  centreXArcsec: number;
  centreYArcsec: number;
  /** FITS BUNIT: "Jy/pixel", "Jy/beam", "Jy/arcsec2". */
  unit: string;
}

/** Azimuthally binned visibilities of one dataset (amplitude and phase vs uv distance). */
export interface UvBins {
  uvDistKlambda: Float64Array;
  dataRe: Float64Array;
  dataIm: Float64Array;
  modelRe: Float64Array;
  modelIm: Float64Array;
  /** 1σ of the binned real (and imaginary) part [Jy]. */
  sigmaJy: Float64Array;
  count: Int32Array;
}

export interface DatasetInfo {
  name: string;
  path: string;
  nVis: number;
  phaseCentreDeg?: [number, number];
  /** Factor multiplying every σ of this dataset. */
  noiseScale: number;
  /** Flux scale relative to the first dataset (1 for the first). */
  fluxScale: number;
  chi2: number;
  /** Synthesized beam of the natural-weighted dirty image [arcsec, deg]. */
  beam?: { bmajArcsec: number; bminArcsec: number; bpaDeg: number };
}

/** Ensemble-sampler output. */
export interface ChainOutput {
  /** steps × walkers × dim, row-major. */
  chain: Float64Array;
  /** steps × walkers. */
  logPosterior: Float64Array;
  /** steps × walkers: the log-likelihood part. */
  logLikelihood: Float64Array;
  nSteps: number;
  nWalkers: number;
  dim: number;
  /** Steps discarded as burn-in when summarising. */
  burnIn: number;
  /** Integrated autocorrelation time per parameter [steps]. */
  tau: Float64Array;
  acceptanceFraction: Float64Array;
  converged: boolean;
}

/** Nested-sampling output. */
export interface NestedOutput {
  /** nSamples × dim. */
  samples: Float64Array;
  logWeights: Float64Array;
  logLikelihood: Float64Array;
  nSamples: number;
  dim: number;
  logEvidence: number;
  logEvidenceError: number;
}

export interface FitOutcome {
  spec: ModelSpec;
  /** Names of every sampled/reported parameter: the model's free parameters, then `dataset[d].flux_scale` for d ≥ 1. */
  names: string[];
  /** Units of each parameter ("arcsec", "deg", "Jy", ""). */
  units: string[];
  /** Maximum a posteriori. */
  value: Float64Array;
  sigma: Float64Array;
  /** 16th and 84th percentiles (or value ∓ σ from the curvature). */
  lo: Float64Array;
  hi: Float64Array;
  uncertaintyMethod: "hessian" | "ensemble" | "nested" | "none";
  /** dim × dim covariance, when available. */
  covariance?: Float64Array;
  /** The best-fit model, numbers only. */
  model: NumericModel;
  chi2: number;
  nVis: number;
  nFree: number;
  reducedChi2: number;
  logEvidence?: { value: number; error: number };
  derived: Record<string, number | null>;
  warnings: string[];
  datasets: DatasetInfo[];
  chain?: ChainOutput;
  nested?: NestedOutput;
  /** Samples for the corner plot (flat, nSamples × dim) with optional weights. */
  posteriorSamples?: { samples: Float64Array; weights?: Float64Array; n: number };
  /** Truth, when known (demo): same order as names, NaN where unknown. */
  truth?: Float64Array;
  /**
   * Pixelised source: the log-evidence at the best-fit lens against λ (ℓ held), and against a
   * kernel prior's ℓ (λ re-optimised at each), each sorted by the abscissa.
   */
  evidenceCurves?: {
    lambda: { x: Float64Array; logEvidence: Float64Array; best: number };
    scaleArcsec?: { x: Float64Array; logEvidence: Float64Array; best: number };
  };
  images: {
    /** Best-fit lensed sky (not beam-attenuated) [Jy/pixel]. */
    modelSky: GridImage;
    /** Best-fit source in the source plane [Jy/arcsec²]. */
    source: GridImage;
    /** Source-plane 1σ map, for pixelised sources. */
    sourceSigma?: GridImage;
    /** Natural-weighted dirty images of the first dataset [Jy/beam]: data, model, residual. */
    dataDirty: GridImage;
    modelDirty: GridImage;
    residualDirty: GridImage;
    /** Residual rms in the dirty image [Jy/beam]. */
    residualRmsJyPerBeam: number;
  };
  /** Critical curves (image plane) and caustics (source plane) of the best-fit lens. */
  criticalCurves: Polyline[];
  caustics: Polyline[];
  /** Binned visibilities of each dataset. */
  uvBins: UvBins[];
  /** Phase centre of the first dataset [deg] for the FITS WCS; (0, 0) when unknown. */
  phaseCentreDeg: [number, number];
  /** Wall-clock seconds per stage. */
  timings: Record<string, number>;
  /** The command line, version and seed. */
  command: string;
  version: string;
  seed: number;
}
