/**
 * Noise check: are the file's weights right? Consecutive integrations on the same baseline,
 * channel and correlation see (almost) the same sky, so their difference is noise:
 * for entries i, j, Re(d_i − d_j) and Im(d_i − d_j) each have variance σ_i² + σ_j².
 * If the true weights are s·w (s the factor the file's weights must be MULTIPLIED by), then
 * z = Δ/sqrt(1/w_i + 1/w_j) has variance 1/s for each part. Two estimators of s:
 * - mean:   s = Σ 2(1/w_i + 1/w_j) / Σ |d_i − d_j|²  (optimal for Gaussian noise),
 * - robust: s = m / median(z²), m = 0.4549364 the median of χ² with one degree of freedom, so
 *   a few outliers (RFI, glitches) do not move it. `weightScale` reports the robust value.
 *
 * Bias: the sky changes between consecutive integrations as the baseline rotates, by about
 * 2π·|Δuv|·θ in phase for structure θ from the phase centre; for short integrations and
 * compact fields this is negligible, otherwise it adds variance and biases s low (weights
 * look too high). Pairs further apart in time than 2.5× the median gap (scan boundaries) are
 * not used, which also keeps calibration jumps out.
 *
 * Reference: the successive-difference noise estimate is common practice (e.g. the "sigma
 * from differences" checks of interferometry packages; no single source); median of χ²₁ =
 * 0.454936 (analytic: the square of the normal quartile 0.6744898).
 */
import { InputError } from "../errors.js";
import { copyMetadata } from "./stokes.js";
import type { Visibilities } from "./types.js";

/** Median of the χ² distribution with one degree of freedom (= 0.6744897502² ). */
export const CHI2_1_MEDIAN = 0.6744897501960817 ** 2;

export interface WeightScaleEstimate {
  /** Factor to multiply the weights by (robust, median-based). NaN when no pairs were found. */
  weightScale: number;
  /** The same from the mean of squared differences (Gaussian-optimal, not robust). */
  weightScaleMean: number;
  /** Pairs of consecutive entries used. */
  pairs: number;
  /** Largest time gap accepted for a pair [s] (2.5× the median gap). */
  maxGapS: number;
}

/**
 * Estimate the weight-scale factor from consecutive-integration differences.
 * @param vis visibilities (any correlations; pairs never mix correlations or channels)
 * @returns the factor s (weights × s match the scatter), its mean-based twin and the pair count.
 */
export function estimateWeightScale(vis: Visibilities): WeightScaleEstimate {
  const n = vis.count;
  const none: WeightScaleEstimate = { weightScale: NaN, weightScaleMean: NaN, pairs: 0, maxGapS: NaN };
  if (n < 2) return none;
  const { antenna1: a1, antenna2: a2, channel: ch, correlation: corr, timeS: t } = vis;
  const order = new Uint32Array(n);
  for (let k = 0; k < n; k++) order[k] = k;
  order.sort((x, y) => a1[x] - a1[y] || a2[x] - a2[y] || ch[x] - ch[y] || corr[x] - corr[y] || t[x] - t[y]);
  const same = (x: number, y: number): boolean => a1[x] === a1[y] && a2[x] === a2[y] && ch[x] === ch[y] && corr[x] === corr[y];

  // Median positive gap between consecutive entries of a series: the integration time.
  const gaps: number[] = [];
  for (let i = 1; i < n; i++) {
    const x = order[i - 1];
    const y = order[i];
    if (same(x, y) && t[y] > t[x]) gaps.push(t[y] - t[x]);
  }
  if (gaps.length === 0) return none;
  gaps.sort((p, q) => p - q);
  const maxGap = 2.5 * gaps[Math.floor(gaps.length / 2)];

  const z2 = new Float64Array(2 * gaps.length);
  let m = 0;
  let sumVar = 0;
  let sumSq = 0;
  let pairs = 0;
  for (let i = 1; i < n; i++) {
    const x = order[i - 1];
    const y = order[i];
    if (!same(x, y)) continue;
    const dt = t[y] - t[x];
    if (!(dt > 0) || dt > maxGap) continue;
    const v = 1 / vis.weight[x] + 1 / vis.weight[y];
    const dr = vis.reJy[y] - vis.reJy[x];
    const di = vis.imJy[y] - vis.imJy[x];
    z2[m++] = (dr * dr) / v;
    z2[m++] = (di * di) / v;
    sumVar += 2 * v;
    sumSq += dr * dr + di * di;
    pairs++;
  }
  if (pairs === 0) return none;
  const sorted = z2.subarray(0, m).sort();
  const med = m % 2 === 1 ? sorted[(m - 1) / 2] : 0.5 * (sorted[m / 2 - 1] + sorted[m / 2]);
  return { weightScale: CHI2_1_MEDIAN / med, weightScaleMean: sumVar / sumSq, pairs, maxGapS: maxGap };
}

/**
 * Multiply every weight by `factor` (e.g. `estimateWeightScale(vis).weightScale`).
 * @returns a new Visibilities with its own weight array; the other arrays are shared with `vis`.
 */
export function rescaleWeights(vis: Visibilities, factor: number): Visibilities {
  if (!(factor > 0) || !Number.isFinite(factor)) {
    throw new InputError(`weight scale ${factor}: must be a finite number > 0 (it multiplies every weight)`);
  }
  const weight = new Float64Array(vis.count);
  for (let k = 0; k < vis.count; k++) weight[k] = vis.weight[k] * factor;
  const out: Visibilities = { ...vis, weight };
  copyMetadata(vis, out);
  return out;
}
