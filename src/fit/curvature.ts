/**
 * Uncertainties from the curvature of the log posterior at its maximum (Laplace approximation):
 * covariance = H⁻¹, H the Hessian of −log P over the full parameter vector (fluxes included, so
 * their correlations with the lens reach every σ). Steps are chosen per parameter in two passes:
 * a trial second difference gives σ_i ≈ H_ii^{-1/2}, then the Hessian is taken with steps of
 * 0.1 σ_i — small enough that the quadratic approximation holds, large enough that rounding in
 * χ² (≈ 1e-12 relative) does not swamp the differences. A problem may ask for longer steps
 * (FitProblem.curvatureStepSigma; the pixelised source uses 0.3, see pixelisedProblem.ts).
 * Reference: MacKay 2003, Information Theory, Inference and Learning Algorithms, ch. 27.
 */
import { covarianceFromHessian, numericalHessian } from "./hessian.js";
import { FLUX_SCALE_RANGE, type FitProblem } from "./problem.js";
import { SerialEvaluator, type BatchEvaluator } from "./evalPool.js";

export interface CurvatureResult {
  covariance: Float64Array | null;
  sigma: Float64Array;
  positiveDefinite: boolean;
  reason: string;
  steps: Float64Array;
}

export async function curvatureCovariance(problem: FitProblem, mapFull: Float64Array, evaluator: BatchEvaluator = new SerialEvaluator(problem)): Promise<CurvatureResult> {
  const dim = mapFull.length;
  const box = fullBox(problem);
  const f = async (points: Float64Array[], out: Float64Array): Promise<void> => {
    const r = await evaluator.full(points);
    for (let i = 0; i < points.length; i++) out[i] = Number.isFinite(r.logPosterior[i]) ? -r.logPosterior[i] : NaN;
  };
  const centre = new Float64Array(1);
  await f([mapFull], centre);
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
      await f([plus, minus], v);
      curvature = (v[0] - 2 * centre[0] + v[1]) / (h * h);
      if (Number.isFinite(curvature) && curvature > 0) break;
      h *= 0.1; // a bound or an unphysical region next door: step in closer
    }
    const sigma = curvature > 0 ? 1 / Math.sqrt(curvature) : 1e-3 * width;
    steps[i] = Math.min(Math.max(problem.curvatureStepSigma * sigma, 1e-9 * width), 0.05 * width);
  }
  // A parameter at (or within a few steps of) a hard prior edge has no two-sided curvature: it
  // is held fixed for the Hessian (its σ is reported as unknown, and the at-bound warning says
  // why); the others' steps are shortened to stay inside the prior.
  const active: number[] = [];
  for (let i = 0; i < dim; i++) {
    const room = Math.min(mapFull[i] - box.hardLower[i], box.hardUpper[i] - mapFull[i]);
    if (room > 2.5 * steps[i]) active.push(i);
    else if (room > 1e-6 * (box.upper[i] - box.lower[i])) {
      steps[i] = room / 2.5;
      active.push(i);
    }
  }
  const sigma = new Float64Array(dim).fill(NaN);
  if (active.length === 0) return { covariance: null, sigma, positiveDefinite: false, reason: "every parameter sits at a prior edge", steps };
  const na = active.length;
  const sub = (points: Float64Array[], out: Float64Array): Promise<void> => {
    const expanded = points.map((p) => {
      const x = Float64Array.from(mapFull);
      for (let a = 0; a < na; a++) x[active[a]] = p[a];
      return x;
    });
    return f(expanded, out);
  };
  const hess = await numericalHessian(sub, Float64Array.from(active, (i) => mapFull[i]), { steps: Float64Array.from(active, (i) => steps[i]) });
  const cov = covarianceFromHessian(hess.hessian, na);
  let covariance: Float64Array | null = null;
  if (cov.covariance) {
    covariance = new Float64Array(dim * dim).fill(NaN);
    for (let a = 0; a < na; a++) {
      sigma[active[a]] = Math.sqrt(Math.max(0, cov.covariance[a * na + a]));
      for (let b = 0; b < na; b++) covariance[active[a] * dim + active[b]] = cov.covariance[a * na + b];
    }
  }
  const pinned = dim - na;
  const reason = pinned > 0 ? `${cov.reason}; ${pinned} parameter(s) at a prior edge held fixed` : cov.reason;
  return { covariance, sigma, positiveDefinite: cov.positiveDefinite, reason, steps };
}

/**
 * Box of the full vector (search box plus the profiled fluxes' prior ranges, for step sizes) and
 * the hard edges of the prior (where the log posterior becomes −∞).
 */
function fullBox(problem: FitProblem): { lower: Float64Array; upper: Float64Array; hardLower: Float64Array; hardUpper: Float64Array } {
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
  const hardLower = new Float64Array(n).fill(-Infinity);
  const hardUpper = new Float64Array(n).fill(Infinity);
  problem.spec.free.forEach((f, i) => {
    const p = f.prior;
    if (f.periodic !== undefined && p.kind === "uniform" && p.max - p.min >= f.periodic) return;
    hardLower[i] = p.min;
    hardUpper[i] = p.max;
  });
  for (let i = problem.nModel; i < n; i++) {
    hardLower[i] = FLUX_SCALE_RANGE[0];
    hardUpper[i] = FLUX_SCALE_RANGE[1];
  }
  return { lower, upper, hardLower, hardUpper };
}
