/**
 * Covariance-kernel priors of a pixelised source: the node values s are a Gaussian random field
 * with covariance C/λ, C_ij = k(|β_i − β_j| / ℓ) + ε δ_ij, so the prior precision is λH with
 * H = C⁻¹ (dense). The correlation length ℓ [arcsec] is a hyperparameter set, like λ, by the
 * evidence.
 *   gaussian  k(r) = exp(−r²/2)                   (smooth clumps; "squared exponential")
 *   matern    k(r) = (1 + √3 r) exp(−√3 r)        (Matérn ν = 3/2: once differentiable, rougher)
 * Why: finite-difference priors (gradient, curvature) say only that neighbouring cells are
 * alike, with no length, and they prefer a source that is smooth on the scale of the cells. A
 * clumpy galaxy has a characteristic size; a kernel prior with ℓ fitted to it describes such a
 * source better, and in simulations such priors bias lens parameters less (Vernardos & Koopmans
 * 2022). Because the kernel is a function of sky separation, the prior does not depend on the
 * grid's cell size or on where the nodes fall, which the evidence of a moving grid needs.
 * ε = 1e-6 (relative to k(0) = 1) is a white-noise floor: the eigenvalues of a Gaussian kernel on
 * a grid finer than ℓ fall below double precision, and C must stay positive definite.
 *
 * Reference: Rasmussen & Williams 2006, Gaussian Processes for Machine Learning, §4.2 eqs. 4.9 and
 * 4.17 (squared-exponential and Matérn ν = 3/2 kernels; from memory); Vernardos & Koopmans 2022,
 * MNRAS 516, 1347 (kernel priors for lensed sources; from memory).
 */
import { choleskyInPlace, choleskyLogDet, invertLowerInPlace } from "./inversionLinalg.js";

/** Covariance kernels (the model file's `regularisation` of a kernel prior). */
export type KernelKind = "gaussian" | "matern";

export const KERNEL_KINDS: readonly KernelKind[] = ["gaussian", "matern"];

/** White-noise floor ε of C relative to k(0). */
export const KERNEL_NUGGET = 1e-6;

const SQRT3 = Math.sqrt(3);

/** k(d/ℓ) for separation² d2 [arcsec²]; inverse scale² invL2 = 1/ℓ² [arcsec⁻²]. */
export function kernelValue(kind: KernelKind, d2: number, invL2: number): number {
  if (kind === "gaussian") return Math.exp(-0.5 * d2 * invL2);
  const r = SQRT3 * Math.sqrt(d2 * invL2);
  return (1 + r) * Math.exp(-r);
}

/**
 * H = C⁻¹ for the nodes of a source grid, with the operations the inversion needs (the same as
 * SparseSymmetric's). Buffers grow on demand; a build with the same nodes, kernel and ℓ as the
 * last is free (a held grid).
 */
export class KernelPrior {
  readonly kind: KernelKind;
  size = 0;
  /** log det C (with the nugget) of the last build. */
  logDetCovariance = 0;
  /** ℓ of the last build [arcsec]. */
  scaleArcsec = NaN;
  private hInv = new Float64Array(0);
  private work = new Float64Array(0);
  private row = new Float64Array(0);
  private lastX = new Float64Array(0);
  private lastY = new Float64Array(0);
  private diagTrace = 0;

  constructor(kind: KernelKind) {
    this.kind = kind;
  }

  /**
   * Build H = C⁻¹ for K nodes at (x, y) [arcsec] and correlation length ℓ [arcsec].
   * Returns false when C is not positive definite in floating point.
   */
  build(xArcsec: Float64Array, yArcsec: Float64Array, K: number, scaleArcsec: number): boolean {
    if (K === this.size && scaleArcsec === this.scaleArcsec && this.sameNodes(xArcsec, yArcsec, K)) return true;
    if (this.hInv.length < K * K) {
      this.hInv = new Float64Array(K * K);
      this.work = new Float64Array(K * K);
      this.row = new Float64Array(K);
      this.lastX = new Float64Array(K);
      this.lastY = new Float64Array(K);
    }
    const { work, hInv } = this;
    const invL2 = 1 / (scaleArcsec * scaleArcsec);
    for (let i = 0; i < K; i++) {
      const xi = xArcsec[i];
      const yi = yArcsec[i];
      const r = i * K;
      for (let j = 0; j < i; j++) {
        const dx = xi - xArcsec[j];
        const dy = yi - yArcsec[j];
        work[r + j] = kernelValue(this.kind, dx * dx + dy * dy, invL2);
      }
      work[r + i] = 1 + KERNEL_NUGGET;
    }
    this.size = 0;
    this.scaleArcsec = NaN;
    if (!choleskyInPlace(work, K)) return false;
    this.logDetCovariance = choleskyLogDet(work, K);
    // X = L⁻¹ (lower), then C⁻¹ = XᵀX: (C⁻¹)_ij = Σ_{m ≥ max(i, j)} X_mi X_mj, lower triangle by rows of X
    invertLowerInPlace(work, K, this.row);
    hInv.fill(0, 0, K * K);
    for (let m = 0; m < K; m++) {
      const rm = m * K;
      for (let i = 0; i <= m; i++) {
        const xmi = work[rm + i];
        if (xmi === 0) continue;
        const ri = i * K;
        for (let j = 0; j <= i; j++) hInv[ri + j] += xmi * work[rm + j];
      }
    }
    let tr = 0;
    for (let i = 0; i < K; i++) {
      tr += hInv[i * K + i];
      for (let j = 0; j < i; j++) hInv[j * K + i] = hInv[i * K + j];
    }
    this.diagTrace = tr;
    this.size = K;
    this.scaleArcsec = scaleArcsec;
    this.lastX.set(xArcsec.subarray(0, K));
    this.lastY.set(yArcsec.subarray(0, K));
    return true;
  }

  private sameNodes(x: Float64Array, y: Float64Array, K: number): boolean {
    if (this.lastX.length < K) return false;
    for (let i = 0; i < K; i++) if (x[i] !== this.lastX[i] || y[i] !== this.lastY[i]) return false;
    return true;
  }

  /** log det H = −log det C. */
  get logDet(): number {
    return -this.logDetCovariance;
  }

  /** Σ_i H_ii. */
  trace(): number {
    return this.diagTrace;
  }

  /** dense[i·K + j] += scale·H_ij. */
  addToDense(dense: Float64Array, scale: number): void {
    const n = this.size * this.size;
    const h = this.hInv;
    for (let p = 0; p < n; p++) dense[p] += scale * h[p];
  }

  /** out = H x. */
  multiply(x: Float64Array, out: Float64Array): void {
    const K = this.size;
    const h = this.hInv;
    for (let i = 0; i < K; i++) {
      let s = 0;
      const r = i * K;
      for (let j = 0; j < K; j++) s += h[r + j] * x[j];
      out[i] = s;
    }
  }

  /** xᵀ H x. */
  quadratic(x: Float64Array): number {
    const K = this.size;
    const h = this.hInv;
    let s = 0;
    for (let i = 0; i < K; i++) {
      let t = 0;
      const r = i * K;
      for (let j = 0; j < K; j++) t += h[r + j] * x[j];
      s += x[i] * t;
    }
    return s;
  }
}
