/**
 * Monte-Carlo check of a forecast: simulate N noise realisations of a configuration, fit each
 * with a supplied fitter, and compare the scatter and bias of the fitted values with the Fisher σ.
 *
 * This is the extension point for `plan --trials`: the fitter is a parameter, so the lens fitter
 * (src/fit) can be passed in once it exists. Each realisation is the noise-free model of the
 * forecast plus independent Gaussian noise of σ_k = 1/sqrt(w_k) in the real and imaginary part
 * of every entry, drawn from one seeded stream in entry order (trial by trial) — the same noise
 * model as the simulator's. Scatter is the sample standard deviation (n − 1); position angles
 * are differenced modulo their period. With n trials the scatter/σ ratio itself fluctuates by
 * about 1/sqrt(2(n − 1)) (chi distribution), 0.16 for n = 20.
 * Reference: sample variance of a normal sample, e.g. Cramér 1946, Mathematical Methods of
 * Statistics, §29.3 (from memory).
 */
import { InputError } from "../../errors.js";
import type { SkyFile } from "../../model/load.js";
import { Rng } from "../../random.js";
import type { Visibilities } from "../../vis/types.js";
import { forecastConfiguration, type ConfigForecast, type ForecastOptions, type PlanConfiguration } from "./forecast.js";

/**
 * Fit one data set; `values` in the order of the sky file's free parameters (file units).
 * The visibility table shares its uv, weight and metadata arrays with the caller: do not mutate it.
 */
export type FitOne = (vis: Visibilities) => Promise<{ values: Float64Array; ok: boolean }>;

export interface TrialOptions {
  /** Seed of the noise stream (default 1). */
  seed?: number;
  /** A forecast of this configuration and sky to reuse (its noise-free model and σ). */
  forecast?: ConfigForecast;
  /** Options for the forecast when none is given (fisherOnly is implied). */
  forecastOptions?: ForecastOptions;
  /** Called after each trial (for progress bars): trials done, total. */
  onTrial?: (done: number, total: number) => void;
  /**
   * Results of trials already run (a resumed run): trial t < done.length is taken from here
   * instead of being fitted again. Its noise is still drawn, so the noise stream of the later
   * trials is the same as in one uninterrupted run.
   */
  done?: readonly TrialResult[];
  /** Called with each new trial's result (to checkpoint it). */
  onResult?: (t: number, result: TrialResult) => void;
}

/** One trial's fit: the values in the sky file's free-parameter order, and whether it succeeded. */
export interface TrialResult {
  ok: boolean;
  values: number[];
}

export interface TrialSummary {
  names: string[];
  truth: Float64Array;
  /** Fisher forecast 1σ per parameter. */
  fisherSigma: Float64Array;
  /** Mean of the fitted values, mean − truth, and the sample standard deviation. */
  mean: Float64Array;
  bias: Float64Array;
  scatter: Float64Array;
  /** scatter / Fisher σ, and bias / Fisher σ. */
  ratio: Float64Array;
  biasInSigma: Float64Array;
  nTrials: number;
  /** Trials whose fit reported ok (only these enter the statistics). */
  nOk: number;
  /** Fitted values of every ok trial. */
  values: Float64Array[];
}

/**
 * Run N simulated noise realisations through `fitOne` and summarise scatter and bias.
 * @param config the configuration (label, observation)
 * @param sky the sky file (truth = free parameters' init)
 * @param n number of trials (≥ 2)
 * @param fitOne the fitter
 * @returns statistics per free parameter (file units) next to the Fisher σ
 * Reference: see the module comment.
 */
export async function runTrials(config: PlanConfiguration, sky: SkyFile, n: number, fitOne: FitOne, options: TrialOptions = {}): Promise<TrialSummary> {
  if (!Number.isInteger(n) || n < 2) throw new InputError(`--trials ${n}: expected a whole number ≥ 2 (the scatter needs two fits)`);
  const forecast = options.forecast ?? forecastConfiguration(config, sky, { ...options.forecastOptions, fisherOnly: true });
  const base = forecast.coverage.vis;
  const m = base.count;
  const nPar = forecast.fisher.names.length;
  const truth = forecast.fisher.truth;
  const period = sky.spec.free.map((f) => f.periodic ?? 0);
  const sigma = new Float64Array(m);
  for (let k = 0; k < m; k++) sigma[k] = 1 / Math.sqrt(base.weight[k]);
  const rng = new Rng(options.seed ?? 1);
  const values: Float64Array[] = [];
  for (let t = 0; t < n; t++) {
    // Float32, as `Visibilities` stores data: rounding model + noise to 2^-24 relative is far below σ.
    const reJy = new Float32Array(m);
    const imJy = new Float32Array(m);
    for (let k = 0; k < m; k++) {
      reJy[k] = forecast.fisher.modelRe[k] + sigma[k] * rng.normal();
      imJy[k] = forecast.fisher.modelIm[k] + sigma[k] * rng.normal();
    }
    const previous = options.done?.[t];
    const fit = previous ? { ok: previous.ok, values: Float64Array.from(previous.values) } : await fitOne({ ...base, reJy, imJy });
    if (fit.values.length !== nPar) throw new Error(`runTrials: the fitter returned ${fit.values.length} values for ${nPar} free parameters`);
    if (!previous) options.onResult?.(t, { ok: fit.ok, values: Array.from(fit.values) });
    if (fit.ok) values.push(Float64Array.from(fit.values));
    options.onTrial?.(t + 1, n);
  }
  const mean = new Float64Array(nPar).fill(NaN);
  const bias = new Float64Array(nPar).fill(NaN);
  const scatter = new Float64Array(nPar).fill(NaN);
  const ratio = new Float64Array(nPar).fill(NaN);
  const biasInSigma = new Float64Array(nPar).fill(NaN);
  const nOk = values.length;
  for (let i = 0; i < nPar; i++) {
    if (nOk === 0) break;
    // Offsets from the truth, wrapped for periodic angles, so a pa near 0°/180° averages correctly.
    const d = values.map((v) => wrapOffset(v[i] - truth[i], period[i]));
    const mu = d.reduce((a, b) => a + b, 0) / nOk;
    mean[i] = truth[i] + mu;
    bias[i] = mu;
    if (nOk >= 2) scatter[i] = Math.sqrt(d.reduce((a, b) => a + (b - mu) * (b - mu), 0) / (nOk - 1));
    ratio[i] = scatter[i] / forecast.summary.sigma[i];
    biasInSigma[i] = mu / forecast.summary.sigma[i];
  }
  return {
    names: forecast.fisher.names.slice(),
    truth: Float64Array.from(truth),
    fisherSigma: Float64Array.from(forecast.summary.sigma),
    mean, bias, scatter, ratio, biasInSigma,
    nTrials: n,
    nOk,
    values,
  };
}

function wrapOffset(d: number, periodDeg: number): number {
  if (!(periodDeg > 0)) return d;
  let r = d % periodDeg;
  if (r >= periodDeg / 2) r -= periodDeg;
  if (r < -periodDeg / 2) r += periodDeg;
  return r;
}
