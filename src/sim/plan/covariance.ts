/**
 * Forecast uncertainties from a Fisher matrix: σ_i = sqrt((F⁻¹)_ii), the correlation matrix,
 * and flags for parameters the data cannot pin down.
 *
 * The matrix is first scaled to unit diagonal, R = D^(−1/2) F D^(−1/2) with D = diag F, so that
 * its eigenvalues do not depend on the parameters' units: they lie in (0, P], and two parameters
 * with correlation ρ give eigenvalues 1 ± ρ. Then:
 * - a parameter with F_ii ≤ 0 carries no information (σ = ∞);
 * - eigen-directions with λ ≤ NULL_EIGEN_FRACTION·λ_max are treated as unconstrained (F is then
 *   singular for practical purposes: such a direction would widen σ by ≳ 10⁴); every parameter
 *   with a component above NULL_COMPONENT in such a direction is flagged and gets σ = ∞, and the
 *   other σ come from the pseudo-inverse over the remaining directions;
 * - the inflation factor sqrt(F_ii (F⁻¹)_ii) = σ_marginal/σ_conditional measures how much the
 *   correlations with the other parameters widen σ_i; above MAX_INFLATION the parameter is
 *   flagged as degenerate (nearly so) although its σ is finite. The finite differences give F to
 *   about 10⁻⁵ relative, so scaled eigenvalues below ~10⁻⁴ (inflation ≳ 100) are not reliable
 *   either: the flag marks where the forecast σ itself should not be trusted.
 * Reference: Golub & Van Loan 2013, Matrix Computations, 4th ed., §8.1 and §5.5 (symmetric
 * eigenproblem, pseudo-inverse; from memory); variance inflation factor, e.g. Belsley, Kuh &
 * Welsch 1980, Regression Diagnostics, ch. 3 (from memory).
 */
import { EigenvalueDecomposition, Matrix } from "ml-matrix";

/** Scaled eigenvalues at or below this fraction of the largest count as zero. */
export const NULL_EIGEN_FRACTION = 1e-8;
/** A parameter belongs to a null direction when its eigenvector component exceeds this. */
export const NULL_COMPONENT = 0.1;
/** σ widened more than this factor by correlations flags a (near) degeneracy. */
export const MAX_INFLATION = 100;

export interface FisherSummary {
  /** 1σ forecast per parameter [parameter units]; Infinity when unconstrained. */
  sigma: Float64Array;
  /** P × P row-major correlation matrix; NaN where a σ is infinite. */
  correlation: Float64Array;
  /** σ_marginal/σ_conditional per parameter (1 = uncorrelated); Infinity when unconstrained. */
  inflation: Float64Array;
  /** True for parameters in an unconstrained direction or with inflation > MAX_INFLATION. */
  degenerate: boolean[];
  /** λ_max/λ_min of the unit-diagonal matrix (Infinity if some F_ii ≤ 0). */
  conditionNumber: number;
  /** True when F (restricted to parameters with F_ii > 0) had null directions. */
  singular: boolean;
}

/**
 * Combine data and prior information and invert.
 * @param dataMatrix P × P row-major information from the visibilities
 * @param priorMatrix P × P row-major prior curvature (or null)
 * @param nPar P
 * @param timeScale multiplies the data information (t/t₀: weights ∝ integration time)
 * @returns σ [parameter units], correlations, inflation factors and flags
 * Reference: see the module comment.
 */
export function summariseFisher(dataMatrix: Float64Array, priorMatrix: Float64Array | null, nPar: number, timeScale = 1): FisherSummary {
  const F = new Float64Array(nPar * nPar);
  for (let q = 0; q < nPar * nPar; q++) F[q] = timeScale * dataMatrix[q] + (priorMatrix ? priorMatrix[q] : 0);
  const sigma = new Float64Array(nPar).fill(Infinity);
  const inflation = new Float64Array(nPar).fill(Infinity);
  const correlation = new Float64Array(nPar * nPar).fill(NaN);
  const degenerate = new Array<boolean>(nPar).fill(true);
  const live: number[] = [];
  for (let i = 0; i < nPar; i++) if (F[i * nPar + i] > 0 && Number.isFinite(F[i * nPar + i])) live.push(i);
  const n = live.length;
  if (n === 0) return { sigma, correlation, inflation, degenerate, conditionNumber: Infinity, singular: true };

  const d = live.map((i) => Math.sqrt(F[i * nPar + i]));
  const R = new Matrix(n, n);
  for (let a = 0; a < n; a++) {
    for (let b = 0; b < n; b++) {
      const i = live[a], j = live[b];
      R.set(a, b, (0.5 * (F[i * nPar + j] + F[j * nPar + i])) / (d[a] * d[b]));
    }
  }
  const evd = new EigenvalueDecomposition(R, { assumeSymmetric: true });
  const lambda = evd.realEigenvalues;
  const vec = evd.eigenvectorMatrix;
  const lMax = Math.max(...lambda);
  const lMin = Math.min(...lambda);
  const nullDir = lambda.map((l) => !(l > NULL_EIGEN_FRACTION * lMax));
  const inNull = new Array<boolean>(n).fill(false);
  for (let k = 0; k < n; k++) {
    if (!nullDir[k]) continue;
    for (let a = 0; a < n; a++) if (Math.abs(vec.get(a, k)) > NULL_COMPONENT) inNull[a] = true;
  }
  // Pseudo-inverse of R over the constrained directions, scaled back: C = D^(−1/2) R⁺ D^(−1/2).
  const cov = (a: number, b: number): number => {
    let s = 0;
    for (let k = 0; k < n; k++) if (!nullDir[k]) s += (vec.get(a, k) * vec.get(b, k)) / lambda[k];
    return s / (d[a] * d[b]);
  };
  for (let a = 0; a < n; a++) {
    const i = live[a];
    if (inNull[a]) continue;
    const c = cov(a, a);
    sigma[i] = Math.sqrt(c);
    inflation[i] = Math.sqrt(c) * d[a];
    degenerate[i] = !(inflation[i] <= MAX_INFLATION);
  }
  for (let a = 0; a < n; a++) {
    for (let b = 0; b < n; b++) {
      const i = live[a], j = live[b];
      if (!Number.isFinite(sigma[i]) || !Number.isFinite(sigma[j])) continue;
      correlation[i * nPar + j] = a === b ? 1 : cov(a, b) / (sigma[i] * sigma[j]);
    }
  }
  const singular = nullDir.some((x) => x);
  const conditionNumber = n < nPar ? Infinity : lMin > 0 ? lMax / lMin : Infinity;
  return { sigma, correlation, inflation, degenerate, conditionNumber, singular };
}
