/**
 * Normalised prior densities, their inverse CDFs (the nested-sampling prior transform) and a
 * finite search box per prior. Densities are normalised to integrate to 1 over their support,
 * so that log-evidences of models with different priors can be compared.
 *   uniform on [a, b]:     p(x) = 1/(b − a)
 *   log-uniform on [a, b]: p(x) = 1/(x ln(b/a))
 *   normal N(μ, σ) truncated to [lo, hi] (the user's min/max, else the parameter's allowed
 *   range, else the whole line): p(x) = φ((x − μ)/σ) / (σ Z), Z = Φ(β) − Φ(α),
 *   α = (lo − μ)/σ, β = (hi − μ)/σ.
 * Reference: truncated normal and its inverse-CDF sampling, e.g. Robert (1995, Statistics and
 * Computing 5, 121), §1 (from memory); log-uniform (Jeffreys) prior, common practice.
 */
import type { Domain } from "./components.js";
import { normalCdf, normalQuantile } from "./normal.js";
import type { PriorSpec } from "./types.js";

/** A prior ready for evaluation, truncation and constants precomputed. */
export type Prior =
  | { kind: "uniform"; min: number; max: number; logDensity: number }
  | { kind: "loguniform"; min: number; max: number; logLogRatio: number }
  | {
      kind: "normal";
      mean: number;
      sd: number;
      /** Truncation (may be ±Infinity). */
      min: number;
      max: number;
      /** The end is an excluded end of the parameter's range (e.g. q > 0): density 0 there. */
      minOpen: boolean;
      maxOpen: boolean;
      /** True when min/max came from the file, false when from the allowed range or none. */
      userMin: boolean;
      userMax: boolean;
      /** ln(σ √(2π) Z). */
      logNorm: number;
      /** Z = Φ(β) − Φ(α): the untruncated probability inside [min, max]. */
      mass: number;
    };

const LN_SQRT_2PI = 0.5 * Math.log(2 * Math.PI);

/**
 * Φ(β) − Φ(α) for α ≤ β, computed on the side of the tails so that it keeps its relative
 * accuracy when both limits lie far out in the same tail.
 */
export function normalMass(alpha: number, beta: number): number {
  if (alpha >= 0) return normalCdf(-alpha) - normalCdf(-beta);
  if (beta <= 0) return normalCdf(beta) - normalCdf(alpha);
  return 1 - normalCdf(alpha) - normalCdf(-beta);
}

/**
 * Build the evaluable prior from its file form, truncating a normal to the parameter's
 * allowed range when the file gives no min/max on that side.
 */
export function makePrior(spec: PriorSpec, domain: Domain): Prior {
  switch (spec.kind) {
    case "uniform":
      return { kind: "uniform", min: spec.min, max: spec.max, logDensity: -Math.log(spec.max - spec.min) };
    case "loguniform":
      return { kind: "loguniform", min: spec.min, max: spec.max, logLogRatio: Math.log(Math.log(spec.max) - Math.log(spec.min)) };
    case "normal": {
      const userMin = spec.min !== undefined;
      const userMax = spec.max !== undefined;
      const min = userMin ? (spec.min as number) : domain.lo;
      const max = userMax ? (spec.max as number) : domain.hi;
      const mass = normalMass((min - spec.mean) / spec.sd, (max - spec.mean) / spec.sd);
      return {
        kind: "normal",
        mean: spec.mean,
        sd: spec.sd,
        min,
        max,
        minOpen: !userMin && domain.loOpen && Number.isFinite(min),
        maxOpen: !userMax && domain.hiOpen && Number.isFinite(max),
        userMin,
        userMax,
        logNorm: Math.log(spec.sd) + LN_SQRT_2PI + Math.log(mass),
        mass,
      };
    }
  }
}

/** ln p(x): the normalised log density, −Infinity outside the support (and for NaN). */
export function logDensity(prior: Prior, x: number): number {
  switch (prior.kind) {
    case "uniform":
      return x >= prior.min && x <= prior.max ? prior.logDensity : -Infinity;
    case "loguniform":
      return x >= prior.min && x <= prior.max ? -Math.log(x) - prior.logLogRatio : -Infinity;
    case "normal": {
      const inside = (prior.minOpen ? x > prior.min : x >= prior.min) && (prior.maxOpen ? x < prior.max : x <= prior.max);
      if (!inside) return -Infinity;
      const z = (x - prior.mean) / prior.sd;
      return -0.5 * z * z - prior.logNorm;
    }
  }
}

/**
 * Inverse CDF: the x whose prior probability below it is u ∈ [0, 1].
 * Reference: inverse-transform sampling; truncated normal by inverting
 * Φ(α) + u (Φ(β) − Φ(α)) on the tail side so that far-tail truncations stay accurate.
 */
export function inverseCdf(prior: Prior, u: number): number {
  switch (prior.kind) {
    case "uniform":
      return prior.min + u * (prior.max - prior.min);
    case "loguniform":
      // ln b − ln a rather than ln(b/a): b/a overflows for ranges like [1e-300, 1e300].
      return Math.exp(Math.log(prior.min) + u * (Math.log(prior.max) - Math.log(prior.min)));
    case "normal": {
      const { mean, sd } = prior;
      const alpha = (prior.min - mean) / sd;
      const beta = (prior.max - mean) / sd;
      let z: number;
      if (alpha >= 0) {
        // Whole support in the upper tail: invert the upper-tail probability Φ(−z).
        const qa = normalCdf(-alpha);
        const qb = normalCdf(-beta);
        z = -normalQuantile(qa - u * (qa - qb));
      } else {
        const pa = normalCdf(alpha);
        const pb = normalCdf(beta);
        z = normalQuantile(pa + u * (pb - pa));
      }
      // Rounding can step a hair outside [α, β]; clamp so the result stays in the support.
      if (z < alpha) z = alpha;
      if (z > beta) z = beta;
      let x = mean + sd * z;
      // An excluded end (q > 0) is never returned: step 1e-12 sd inside (a negligible shift).
      if (prior.minOpen && x <= prior.min) x = prior.min + 1e-12 * sd;
      if (prior.maxOpen && x >= prior.max) x = prior.max - 1e-12 * sd;
      return x;
    }
  }
}

/** Width of a normal's search box in standard deviations on each side of the mean. */
export const NORMAL_BOX_SD = 5;
/** Fraction of the box by which a box end is moved off an excluded end of the range (q > 0). */
export const OPEN_END_OFFSET = 1e-6;

/**
 * A finite search box [lo, hi] for a global optimiser. Uniform and log-uniform: their range.
 * Normal: mean ± 5 sd clipped to the truncation; where it meets an excluded end of the allowed
 * range, moved inside by 1e-6 of its width; in all cases widened to contain `init`.
 */
export function searchBox(prior: Prior, init: number): [number, number] {
  if (prior.kind !== "normal") return [prior.min, prior.max];
  const { mean, sd } = prior;
  let lo = Math.max(mean - NORMAL_BOX_SD * sd, prior.min);
  let hi = Math.min(mean + NORMAL_BOX_SD * sd, prior.max);
  if (lo >= hi) {
    // The mean lies far outside the truncation: take 2·5 sd from the nearer end.
    if (mean < prior.min) {
      lo = prior.min;
      hi = Math.min(prior.max, prior.min + 2 * NORMAL_BOX_SD * sd);
    } else {
      hi = prior.max;
      lo = Math.max(prior.min, prior.max - 2 * NORMAL_BOX_SD * sd);
    }
  }
  if (Number.isFinite(init)) {
    lo = Math.min(lo, init);
    hi = Math.max(hi, init);
  }
  const width = hi - lo;
  if (prior.minOpen && lo <= prior.min) lo = prior.min + OPEN_END_OFFSET * width;
  if (prior.maxOpen && hi >= prior.max) hi = prior.max - OPEN_END_OFFSET * width;
  // init lies inside the allowed range, so the box may always reach it.
  if (Number.isFinite(init)) {
    lo = Math.min(lo, init);
    hi = Math.max(hi, init);
  }
  return [lo, hi];
}
