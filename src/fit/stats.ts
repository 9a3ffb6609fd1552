/**
 * Summaries of (possibly weighted) posterior samples: quantiles, mean, covariance, effective
 * sample size. Samples are stored n × dim row-major; weights need not be normalised.
 *
 * Quantile definition: sort by value, give sample i the cumulative-weight midpoint
 * p_i = (W_{<i} + w_i/2)/W and interpolate linearly in p (clamped at the ends). With equal
 * weights this is the "Hazen" rule p_i = (i − ½)/n (Hyndman & Fan 1996, Am. Stat. 50, 361,
 * definition 5). Covariance uses the unbiased form for reliability weights,
 * Σ w (x − x̄)(x − x̄)ᵀ / (V1 − V2/V1), V1 = Σw, V2 = Σw², which reduces to the usual n − 1 form
 * for equal weights.
 *
 * Reference: Hyndman & Fan 1996 (quantile definitions); Kish 1965, Survey Sampling (effective
 * sample size (Σw)²/Σw²).
 */
import { InputError } from "../errors.js";

function checkWeights(n: number, weights: Float64Array | undefined, where: string): void {
  if (weights === undefined) return;
  if (weights.length !== n) throw new InputError(`${where}: ${weights.length} weights for ${n} samples; give one weight per sample`);
  let total = 0;
  for (let i = 0; i < n; i++) {
    const w = weights[i];
    if (!(w >= 0) || !Number.isFinite(w)) throw new InputError(`${where}: weight[${i}] = ${w}; weights must be finite and ≥ 0`);
    total += w;
  }
  if (!(total > 0)) throw new InputError(`${where}: all weights are zero`);
}

/**
 * Weighted quantiles of one variable.
 * @param values n sample values (any unit; the result has the same unit)
 * @param weights n non-negative weights (default: equal)
 * @param probs probabilities in [0, 1], e.g. [0.16, 0.5, 0.84]
 */
export function weightedQuantiles(values: Float64Array, weights: Float64Array | undefined, probs: ArrayLike<number>): Float64Array {
  const n = values.length;
  if (n === 0) throw new InputError("weightedQuantiles: no samples");
  checkWeights(n, weights, "weightedQuantiles");
  const order = new Uint32Array(n);
  for (let i = 0; i < n; i++) order[i] = i;
  order.sort((a, b) => values[a] - values[b]);
  const sortedX = new Float64Array(n);
  const mid = new Float64Array(n);
  let total = 0;
  for (let i = 0; i < n; i++) total += weights ? weights[i] : 1;
  let cum = 0;
  let m = 0;
  for (let i = 0; i < n; i++) {
    const k = order[i];
    const w = weights ? weights[k] : 1;
    if (w === 0) continue; // zero-weight samples carry no probability
    sortedX[m] = values[k];
    mid[m] = (cum + w / 2) / total;
    cum += w;
    m++;
  }
  const out = new Float64Array(probs.length);
  for (let q = 0; q < probs.length; q++) {
    const p = probs[q];
    if (!(p >= 0 && p <= 1)) throw new InputError(`weightedQuantiles: probability ${p} is outside [0, 1]`);
    if (p <= mid[0]) out[q] = sortedX[0];
    else if (p >= mid[m - 1]) out[q] = sortedX[m - 1];
    else {
      // binary search for mid[lo] ≤ p < mid[lo+1]
      let lo = 0;
      let hi = m - 1;
      while (hi - lo > 1) {
        const c = (lo + hi) >> 1;
        if (mid[c] <= p) lo = c;
        else hi = c;
      }
      const f = (p - mid[lo]) / (mid[hi] - mid[lo]);
      out[q] = sortedX[lo] + f * (sortedX[hi] - sortedX[lo]);
    }
  }
  return out;
}

/** Weighted mean of n × dim samples (row-major); returns dim values. */
export function weightedMean(samples: Float64Array, dim: number, weights?: Float64Array): Float64Array {
  const n = sampleCount(samples, dim, "weightedMean");
  checkWeights(n, weights, "weightedMean");
  const mean = new Float64Array(dim);
  let total = 0;
  for (let i = 0; i < n; i++) {
    const w = weights ? weights[i] : 1;
    total += w;
    for (let j = 0; j < dim; j++) mean[j] += w * samples[i * dim + j];
  }
  for (let j = 0; j < dim; j++) mean[j] /= total;
  return mean;
}

/**
 * Weighted covariance (dim × dim, row-major) of n × dim samples, unbiased for reliability
 * weights (see the module comment). Needs an effective sample size > 1.
 */
export function weightedCovariance(samples: Float64Array, dim: number, weights?: Float64Array): Float64Array {
  const n = sampleCount(samples, dim, "weightedCovariance");
  const mean = weightedMean(samples, dim, weights);
  const cov = new Float64Array(dim * dim);
  let v1 = 0;
  let v2 = 0;
  const d = new Float64Array(dim);
  for (let i = 0; i < n; i++) {
    const w = weights ? weights[i] : 1;
    v1 += w;
    v2 += w * w;
    for (let j = 0; j < dim; j++) d[j] = samples[i * dim + j] - mean[j];
    for (let j = 0; j < dim; j++) {
      const wd = w * d[j];
      for (let k = j; k < dim; k++) cov[j * dim + k] += wd * d[k];
    }
  }
  const denom = v1 - v2 / v1;
  if (!(denom > 0)) throw new InputError("weightedCovariance: effective sample size ≤ 1; need more samples with non-zero weight");
  for (let j = 0; j < dim; j++) {
    for (let k = j; k < dim; k++) {
      const v = cov[j * dim + k] / denom;
      cov[j * dim + k] = v;
      cov[k * dim + j] = v;
    }
  }
  return cov;
}

/** Kish effective sample size (Σw)²/Σw² (n for equal weights). */
export function effectiveSampleSize(weights: Float64Array): number {
  let s = 0;
  let s2 = 0;
  for (let i = 0; i < weights.length; i++) {
    s += weights[i];
    s2 += weights[i] * weights[i];
  }
  return (s * s) / s2;
}

/** Convert log-weights to weights normalised to sum 1 (stable: subtracts the maximum first). */
export function weightsFromLog(logWeights: Float64Array): Float64Array {
  let max = -Infinity;
  for (let i = 0; i < logWeights.length; i++) if (logWeights[i] > max) max = logWeights[i];
  const w = new Float64Array(logWeights.length);
  let s = 0;
  for (let i = 0; i < w.length; i++) {
    w[i] = Math.exp(logWeights[i] - max);
    s += w[i];
  }
  for (let i = 0; i < w.length; i++) w[i] /= s;
  return w;
}

/** Per-parameter summary: mean, standard deviation and the 16/50/84 percentiles. */
export interface ParameterSummary {
  mean: number;
  sigma: number;
  q16: number;
  q50: number;
  q84: number;
}

/** Summaries of every parameter of n × dim (weighted) samples. */
export function summarise(samples: Float64Array, dim: number, weights?: Float64Array): ParameterSummary[] {
  const n = sampleCount(samples, dim, "summarise");
  const mean = weightedMean(samples, dim, weights);
  const cov = weightedCovariance(samples, dim, weights);
  const col = new Float64Array(n);
  const out: ParameterSummary[] = [];
  for (let j = 0; j < dim; j++) {
    for (let i = 0; i < n; i++) col[i] = samples[i * dim + j];
    const q = weightedQuantiles(col, weights, [0.16, 0.5, 0.84]);
    out.push({ mean: mean[j], sigma: Math.sqrt(cov[j * dim + j]), q16: q[0], q50: q[1], q84: q[2] });
  }
  return out;
}

function sampleCount(samples: Float64Array, dim: number, where: string): number {
  if (!Number.isInteger(dim) || dim < 1 || samples.length % dim !== 0 || samples.length === 0) {
    throw new InputError(`${where}: ${samples.length} numbers do not form samples of dimension ${dim}`);
  }
  return samples.length / dim;
}
