/**
 * Numerical Hessian of a scalar function by central differences, and the covariance of a
 * posterior from the Hessian of −log posterior at its maximum (Laplace approximation).
 *
 * Step choice: a central second difference has truncation error ∝ h²·f⁗ and rounding error
 * ∝ ε·|f|/h², so the total is smallest near h ∝ ε^(1/4) times the scale on which f varies;
 * with ε = 2.2e-16, ε^(1/4) ≈ 1.2e-4. The default step for parameter i is therefore
 * 1.2e-4 · max(|x_i|, typicalScale_i) — give `typicalScale` (e.g. the prior width or an
 * expected 1σ) when a parameter sits near 0 or its natural scale is far from 1. For a
 * −log posterior the natural scale is the posterior σ; steps of ~1e-3–1e-2 σ are safe, and the
 * caller can pass them directly as `steps`.
 *
 * Reference: Press et al. 2007, Numerical Recipes 3rd ed., §5.7 (optimal finite-difference
 * steps); Abramowitz & Stegun 1964, 25.3.23 and 25.3.26 (central-difference formulas).
 */
import { EigenvalueDecomposition, Matrix } from "ml-matrix";
import { InputError } from "../errors.js";

/** Evaluates f at each point (same contract as the samplers' batch callbacks). */
export type ScalarBatch = (points: Float64Array[], out: Float64Array) => void | Promise<void>;

export interface HessianOptions {
  /** Absolute step per parameter (overrides the default rule). */
  steps?: Float64Array;
  /** Scale per parameter for the default rule (default 1 for every parameter). */
  typicalScale?: Float64Array;
}

export interface HessianResult {
  /** dim × dim row-major, symmetric. */
  hessian: Float64Array;
  /** f at the centre point. */
  value: number;
  /** Steps used per parameter. */
  steps: Float64Array;
  /** Function evaluations used: 1 + 2·dim + 2·dim·(dim − 1). */
  nEvaluations: number;
}

const EPS_QUARTER = Math.pow(2.220446049250313e-16, 0.25);

/**
 * Central-difference Hessian of f at x. All points are evaluated in one batch.
 * @param f batch evaluator of the scalar function
 * @param x centre point (parameter units)
 */
export async function numericalHessian(f: ScalarBatch, x: Float64Array, options: HessianOptions = {}): Promise<HessianResult> {
  const d = x.length;
  if (d === 0) throw new InputError("hessian: empty parameter vector");
  const h = new Float64Array(d);
  for (let i = 0; i < d; i++) {
    if (options.steps) h[i] = options.steps[i];
    else {
      const t = options.typicalScale ? options.typicalScale[i] : 1;
      h[i] = EPS_QUARTER * Math.max(Math.abs(x[i]), t);
    }
    if (!(h[i] > 0) || !Number.isFinite(h[i])) throw new InputError(`hessian: step for parameter ${i} is ${h[i]}; steps must be finite and > 0`);
    // make x + h exactly representable so the difference uses the step actually taken
    const xp = x[i] + h[i];
    h[i] = xp - x[i];
  }
  // point list: centre, ±h_i e_i, then for i < j the four (±h_i, ±h_j) corners
  const pts: Float64Array[] = [x.slice()];
  for (let i = 0; i < d; i++) {
    const p = x.slice();
    p[i] += h[i];
    const m = x.slice();
    m[i] -= h[i];
    pts.push(p, m);
  }
  for (let i = 0; i < d; i++) {
    for (let j = i + 1; j < d; j++) {
      for (const [si, sj] of [
        [1, 1],
        [1, -1],
        [-1, 1],
        [-1, -1],
      ]) {
        const p = x.slice();
        p[i] += si * h[i];
        p[j] += sj * h[j];
        pts.push(p);
      }
    }
  }
  const vals = new Float64Array(pts.length);
  await f(pts, vals);
  for (let k = 0; k < vals.length; k++) {
    if (!Number.isFinite(vals[k])) {
      throw new InputError(`hessian: function is ${vals[k]} at a point ${k === 0 ? "(the centre)" : "one step from the centre"}; move away from the prior edge or use smaller steps`);
    }
  }
  const f0 = vals[0];
  const H = new Float64Array(d * d);
  for (let i = 0; i < d; i++) {
    H[i * d + i] = (vals[1 + 2 * i] - 2 * f0 + vals[2 + 2 * i]) / (h[i] * h[i]);
  }
  let k = 1 + 2 * d;
  for (let i = 0; i < d; i++) {
    for (let j = i + 1; j < d; j++) {
      const v = (vals[k] - vals[k + 1] - vals[k + 2] + vals[k + 3]) / (4 * h[i] * h[j]);
      H[i * d + j] = v;
      H[j * d + i] = v;
      k += 4;
    }
  }
  return { hessian: H, value: f0, steps: h, nEvaluations: pts.length };
}

export interface CovarianceResult {
  /** Inverse Hessian, dim × dim row-major; null when the Hessian is not positive definite. */
  covariance: Float64Array | null;
  positiveDefinite: boolean;
  /**
   * Eigenvalues, ascending, of the Hessian scaled to unit diagonal, D^(−1/2) H D^(−1/2) with
   * D = diag H (of H itself when some diagonal entry is ≤ 0). The scaling makes the test
   * independent of parameter units: its eigenvalues lie in (0, dim] for a positive-definite H.
   */
  eigenvalues: Float64Array;
  /** Matching eigenvectors as columns, dim × dim row-major (column k ↔ eigenvalues[k]). */
  eigenvectors: Float64Array;
  /** Why the covariance could not be formed, or "ok". */
  reason: string;
}

/**
 * Covariance = H⁻¹ of a Hessian of −log posterior, via the eigendecomposition of H scaled to
 * unit diagonal (so parameters of very different units do not trigger false alarms). Reports
 * (instead of inverting) when a diagonal entry is ≤ 0 or some scaled eigenvalue is
 * ≤ relTolerance·(largest): then the point is not a maximum, or some parameter combination is
 * unconstrained.
 * @param hessian dim × dim row-major
 * Reference: Laplace approximation, e.g. MacKay 2003, Information Theory, Inference and
 * Learning Algorithms, ch. 27.
 */
export function covarianceFromHessian(hessian: Float64Array, dim: number, relTolerance = 1e-12): CovarianceResult {
  if (hessian.length !== dim * dim) throw new InputError(`covariance: Hessian has ${hessian.length} entries; expected ${dim * dim}`);
  const scale = new Float64Array(dim);
  let diagPositive = true;
  for (let i = 0; i < dim; i++) if (!(hessian[i * dim + i] > 0)) diagPositive = false;
  for (let i = 0; i < dim; i++) scale[i] = diagPositive ? Math.sqrt(hessian[i * dim + i]) : 1;
  const m = new Matrix(dim, dim);
  for (let i = 0; i < dim; i++) {
    for (let j = 0; j < dim; j++) m.set(i, j, (0.5 * (hessian[i * dim + j] + hessian[j * dim + i])) / (scale[i] * scale[j]));
  }
  const evd = new EigenvalueDecomposition(m, { assumeSymmetric: true });
  const raw = evd.realEigenvalues;
  const vecs = evd.eigenvectorMatrix;
  const order = raw.map((_, i) => i).sort((a, b) => raw[a] - raw[b]);
  const eigenvalues = new Float64Array(dim);
  const eigenvectors = new Float64Array(dim * dim);
  for (let k = 0; k < dim; k++) {
    eigenvalues[k] = raw[order[k]];
    for (let i = 0; i < dim; i++) eigenvectors[i * dim + k] = vecs.get(i, order[k]);
  }
  const maxEig = eigenvalues[dim - 1];
  const minEig = eigenvalues[0];
  if (!diagPositive || !(maxEig > 0) || !(minEig > relTolerance * maxEig)) {
    let worst = "";
    for (let i = 0; i < dim; i++) {
      const c = eigenvectors[i * dim];
      if (Math.abs(c) > 0.3) worst += `${worst ? ", " : ""}p${i}:${c.toFixed(2)}`;
    }
    return {
      covariance: null,
      positiveDefinite: false,
      eigenvalues,
      eigenvectors,
      reason: `Hessian is not positive definite: smallest ${diagPositive ? "scaled " : ""}eigenvalue ${minEig.toExponential(3)} (largest ${maxEig.toExponential(3)}), along parameters {${worst}}`,
    };
  }
  const cov = new Float64Array(dim * dim);
  for (let i = 0; i < dim; i++) {
    for (let j = i; j < dim; j++) {
      let s = 0;
      for (let k = 0; k < dim; k++) s += (eigenvectors[i * dim + k] * eigenvectors[j * dim + k]) / eigenvalues[k];
      const v = s / (scale[i] * scale[j]);
      cov[i * dim + j] = v;
      cov[j * dim + i] = v;
    }
  }
  return { covariance: cov, positiveDefinite: true, eigenvalues, eigenvectors, reason: "ok" };
}
