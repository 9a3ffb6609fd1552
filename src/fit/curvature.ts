/**
 * Uncertainties from the curvature of the log posterior at its maximum (Laplace approximation):
 * covariance = H⁻¹, H the Hessian of −log P over the full parameter vector (fluxes included, so
 * their correlations with the lens reach every σ). Steps are chosen per parameter in two passes:
 * a trial second difference gives σ_i ≈ H_ii^{-1/2}, then the Hessian is taken with steps of
 * 0.1 σ_i — small enough that the quadratic approximation holds, large enough that rounding in
 * χ² (≈ 1e-12 relative) does not swamp the differences.
 * Reference: MacKay 2003, Information Theory, Inference and Learning Algorithms, ch. 27.
 */
import { covarianceFromHessian, numericalHessian } from "./hessian.js";
import type { FitProblem } from "./problem.js";

export interface CurvatureResult {
  covariance: Float64Array | null;
  sigma: Float64Array;
  positiveDefinite: boolean;
  reason: string;
  steps: Float64Array;
}

export async function curvatureCovariance(problem: FitProblem, mapFull: Float64Array): Promise<CurvatureResult> {
  const dim = mapFull.length;
  const box = fullBox(problem);
  const f = (points: Float64Array[], out: Float64Array): void => {
    for (let i = 0; i < points.length; i++) {
      const lp = problem.evaluateFull(Float64Array.from(points[i])).logPosterior;
      out[i] = Number.isFinite(lp) ? -lp : NaN;
    }
  };
  const centre = new Float64Array(1);
  f([mapFull], centre);
  // Pass 1: diagonal curvature with a trial step of 1e-3 of the search width.
  const steps = new Float64Array(dim);
  for (let i = 0; i < dim; i++) {
    const width = box.upper[i] - box.lower[i];
    let h = 1e-3 * width;
    let curvature = NaN;
    for (let attempt = 0; attempt < 4; attempt++) {
      const plus = Float64Array.from(mapFull);
      const minus = Float64Array.from(mapFull);
      plus[i] += h;
      minus[i] -= h;
      const v = new Float64Array(2);
      f([plus, minus], v);
      curvature = (v[0] - 2 * centre[0] + v[1]) / (h * h);
      if (Number.isFinite(curvature) && curvature > 0) break;
      h *= 0.1; // a bound or an unphysical region next door: step in closer
    }
    const sigma = curvature > 0 ? 1 / Math.sqrt(curvature) : 1e-3 * width;
    steps[i] = Math.min(Math.max(0.1 * sigma, 1e-9 * width), 0.05 * width);
  }
  const hess = await numericalHessian(f, mapFull, { steps });
  const cov = covarianceFromHessian(hess.hessian, dim);
  const sigma = new Float64Array(dim).fill(NaN);
  if (cov.covariance) for (let i = 0; i < dim; i++) sigma[i] = Math.sqrt(Math.max(0, cov.covariance[i * dim + i]));
  return { covariance: cov.covariance, sigma, positiveDefinite: cov.positiveDefinite, reason: cov.reason, steps };
}

/** Box of the full vector (search box plus the profiled fluxes' prior ranges). */
function fullBox(problem: FitProblem): { lower: Float64Array; upper: Float64Array } {
  const sb = problem.searchBox();
  const n = problem.names.length;
  const lower = new Float64Array(n);
  const upper = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    lower[i] = -1;
    upper[i] = 1;
  }
  problem.searchIndex.forEach((fi, s) => {
    lower[fi] = sb.lower[s];
    upper[fi] = sb.upper[s];
  });
  for (let c = 0; c < problem.layout.columnFreeIndex.length; c++) {
    const i = problem.layout.columnFreeIndex[c];
    const init = Math.abs(problem.spec.free[i].init) || 1e-3;
    lower[i] = 0;
    upper[i] = 10 * init;
  }
  return { lower, upper };
}
