/**
 * The forecast for one array configuration: uv coverage and weights (noise off), synthesised
 * beams, largest angular scale, point-source and surface-brightness sensitivity, recovered flux
 * and peak S/N of the noise-free dirty image, and the Fisher-matrix uncertainty of every free
 * parameter of the sky file at its truth (`init`).
 * Reference: the modules it combines (coverage, beam, sensitivity, recovery, fisher,
 * covariance), each with its own references.
 */
import { emissionRadiusArcsec, type FieldChoice } from "../../fit/field.js";
import type { PrimaryBeamOptions } from "../../fourier/primaryBeam.js";
import type { SkyFile } from "../../model/load.js";
import { toNumbers, initialVector } from "../../model/parameters.js";
import { Rng } from "../../random.js";
import { RAD_TO_ARCSEC } from "../../units.js";
import type { Observation } from "../observation.js";
import { largestAngularScaleArcsec, synthesizedBeams, type BeamForecast } from "./beam.js";
import { summariseFisher, type FisherSummary } from "./covariance.js";
import { planCoverage, type PlanCoverage } from "./coverage.js";
import { fisherMatrices, type DifferenceScheme, type FisherMatrices } from "./fisher.js";
import { ModelVisibilityPlan } from "./modelVis.js";
import { fluxRecovery, imagingGeometry, type RecoveryResult } from "./recovery.js";
import { pointSourceSigmaJy, surfaceBrightnessSigma } from "./sensitivity.js";

/** One configuration to compare: a label for tables and its validated observation. */
export interface PlanConfiguration {
  label: string;
  obs: Observation;
}

export interface ForecastOptions {
  /** Seed of the noise draw in the noisy dirty image (default 1). */
  seed?: number;
  /** NUFFT worker threads (default 1). */
  threads?: number;
  /** NUFFT tolerance of the model visibilities (default 1e-8). */
  tolerance?: number;
  /** Model path: "auto" (closed forms when possible) or "grid" (default "auto"). */
  path?: "auto" | "grid";
  /** Briggs robustness of the second beam (default 0.5). */
  robust?: number;
  /** Attenuate the sky by the primary beam of the dishes (default true). */
  primaryBeam?: boolean;
  /** Skip the images (beams, recovered flux, dirty images): Fisher forecast only. */
  fisherOnly?: boolean;
}

/** Defaults of the optional ForecastOptions fields. */
export const DEFAULT_FORECAST_OPTIONS = Object.freeze({ seed: 1, threads: 1, tolerance: 1e-8, path: "auto" as const, robust: 0.5, primaryBeam: true, fisherOnly: false });

/** The forecast of one free parameter. */
export interface ParameterForecast {
  name: string;
  /** "arcsec", "deg", "Jy", … (as in the model file). */
  unit: string;
  truth: number;
  /** Forecast 1σ [unit]; Infinity when unconstrained. */
  sigma: number;
  /** σ_marginal/σ_conditional (1 = uncorrelated with the others). */
  inflation: number;
  degenerate: boolean;
  /** sd of the normal prior, when the parameter has one. */
  priorSd?: number;
  step: number;
  scheme: DifferenceScheme;
}

export interface ConfigForecast {
  label: string;
  obs: Observation;
  coverage: PlanCoverage;
  nAnt: number;
  nVis: number;
  onSourceS: number;
  /** Band centre [Hz]. */
  freqHz: number;
  /** Beams and PSF; null with fisherOnly. */
  beams: BeamForecast | null;
  largestAngularScaleArcsec: number;
  /** 1/sqrt(Σ w) [Jy/beam] and the radiometer-equation image noise for comparison [Jy/beam]. */
  pointSigmaJy: number;
  radiometerSigmaJy: number;
  /** Surface-brightness noise per natural beam; null with fisherOnly. */
  surfaceBrightness: { jyPerArcsec2: number; kelvin: number } | null;
  /** Recovered flux, S/N, dirty images; null with fisherOnly. */
  recovery: RecoveryResult | null;
  fisher: FisherMatrices;
  summary: FisherSummary;
  parameters: ParameterForecast[];
  modelKind: "grid" | "analytic";
  modelGrid: FieldChoice | null;
  notes: string[];
}

/**
 * Forecast one configuration for a sky.
 * @param config label and observation
 * @param sky sky file: free parameters' `init` are the truth
 * @returns the typed forecast (σ in each parameter's file unit)
 * Reference: see the module comment.
 */
export function forecastConfiguration(config: PlanConfiguration, sky: SkyFile, options: ForecastOptions = {}): ConfigForecast {
  const o = { ...DEFAULT_FORECAST_OPTIONS, ...options };
  const obs = config.obs;
  const coverage = planCoverage(obs);
  const vis = coverage.vis;
  const primaryBeam: PrimaryBeamOptions | null = o.primaryBeam ? { dishDiameterM: obs.dishM } : null;
  const truth = toNumbers(sky.spec, initialVector(sky.spec));
  const notes: string[] = [];

  const plan = new ModelVisibilityPlan(
    truth,
    { uLambda: vis.uLambda, vLambda: vis.vLambda, channel: vis.channel, channelFreqHz: vis.channelFreqHz },
    coverage.uvMaxAxisLambda,
    sky.spec.label,
    { tolerance: o.tolerance, threads: o.threads, beam: primaryBeam, path: o.path },
  );
  let fisher: FisherMatrices;
  try {
    // Arcsec steps scale with the model cell; the closed-form path has no grid, so use the cell
    // the grid rule would choose (Nyquist/3 ≈ beam/6, fit/field.ts).
    const cellArcsec = plan.field?.cellArcsec ?? ((0.5 / coverage.uvMaxAxisLambda) * RAD_TO_ARCSEC) / 3;
    fisher = fisherMatrices(sky.spec, plan, vis.weight, { cellArcsec });
  } finally {
    plan.dispose();
  }
  notes.push(...plan.notes.map((s) => `model grid: ${s}`));
  const nPar = sky.spec.free.length;
  const summary = summariseFisher(fisher.dataMatrix, fisher.priorMatrix, nPar);
  const parameters: ParameterForecast[] = sky.spec.free.map((f, i) => ({
    name: f.name,
    unit: f.unit,
    truth: fisher.truth[i],
    sigma: summary.sigma[i],
    inflation: summary.inflation[i],
    degenerate: summary.degenerate[i],
    ...(f.prior.kind === "normal" ? { priorSd: f.prior.sd } : {}),
    step: fisher.steps[i],
    scheme: fisher.schemes[i],
  }));

  const pointSigmaJy = pointSourceSigmaJy(coverage.sumWeights);
  let beams: BeamForecast | null = null;
  let recovery: RecoveryResult | null = null;
  let surfaceBrightness: ConfigForecast["surfaceBrightness"] = null;
  if (!o.fisherOnly) {
    beams = synthesizedBeams(vis, coverage.uvMaxRadialLambda, o.robust);
    surfaceBrightness = surfaceBrightnessSigma(pointSigmaJy, beams.natural.bmajArcsec, beams.natural.bminArcsec, obs.freqHz);
    const geometry = imagingGeometry(coverage.uvMaxRadialLambda, coverage.uvMaxAxisLambda, emissionRadiusArcsec(truth), beams.natural.bmajArcsec);
    notes.push(...geometry.notes);
    recovery = fluxRecovery({
      truth,
      uLambda: vis.uLambda,
      vLambda: vis.vLambda,
      modelRe: fisher.modelRe,
      modelIm: fisher.modelIm,
      weight: vis.weight,
      uvMinRadialLambda: coverage.uvMinRadialLambda,
      geometry,
      freqHz: obs.freqHz,
      primaryBeam,
      rng: new Rng(o.seed),
    });
  }
  if (summary.singular) notes.push("the Fisher matrix is singular: some parameter combination is not constrained by these data (σ = ∞ for the parameters involved)");
  return {
    label: config.label,
    obs,
    coverage,
    nAnt: coverage.summary.nAnt,
    nVis: vis.count,
    onSourceS: coverage.onSourceS,
    freqHz: obs.freqHz,
    beams,
    largestAngularScaleArcsec: largestAngularScaleArcsec(coverage.uvMinRadialLambda),
    pointSigmaJy,
    radiometerSigmaJy: coverage.summary.imageSigmaJyPerBeam,
    surfaceBrightness,
    recovery,
    fisher,
    summary,
    parameters,
    modelKind: plan.kind,
    modelGrid: plan.field,
    notes,
  };
}
