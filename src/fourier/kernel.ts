/**
 * The exponential-of-semicircle (ES) spreading kernel of the NUFFT and its Fourier transform.
 *
 * φ(z) = exp(β(√(1 − z²) − 1)) for |z| ≤ 1, 0 outside; the kernel spans `width` fine-grid cells,
 * so z = (fine-grid offset)/(width/2). With upsampling 2 the rule width = ⌈log10(1/ε)⌉ + 1,
 * β = 2.30·width gives a relative error near ε. φ has no closed-form Fourier transform: it is
 * evaluated by Gauss–Legendre quadrature, which is all the NUFFT correction factors need.
 * This module knows nothing about grids or points.
 *
 * Reference: Barnett, Magland & af Klinteberg 2019, SIAM J. Sci. Comput. 41(5), C479 (§3);
 * REFERENCES.md §9.
 */
import { InputError } from "../errors.js";

/** Largest supported kernel width [fine-grid cells]; 16 reaches double-precision round-off. */
export const MAX_KERNEL_WIDTH = 16;
/** Smallest supported kernel width [fine-grid cells]. */
export const MIN_KERNEL_WIDTH = 2;

/** Shape of one ES kernel. */
export interface EsKernel {
  /** Support in fine-grid cells (integer in [2, 16]). */
  width: number;
  /** Shape parameter β (dimensionless); 2.30·width for upsampling 2. */
  beta: number;
}

/**
 * Kernel width and β for a requested relative tolerance at upsampling 2.
 * @param tolerance requested relative ℓ2 accuracy, in [1e-15, 0.1].
 * @returns width = ⌈log10(1/ε)⌉ + 1 and β = 2.30·width.
 * Reference: Barnett et al. 2019 §3 (rule quoted from memory in REFERENCES.md §9).
 */
export function esKernelForTolerance(tolerance: number): EsKernel {
  if (!(tolerance >= 1e-15 && tolerance <= 0.1)) {
    throw new InputError(
      `NUFFT tolerance: got ${tolerance}; it must lie in [1e-15, 0.1] (e.g. 1e-6 for fitting, 1e-12 for set-up sums)`,
    );
  }
  // The small offset keeps exact powers of ten (1e-6 → 6) from rounding up a digit.
  const width = Math.ceil(Math.log10(1 / tolerance) - 1e-9) + 1;
  return esKernelForWidth(Math.max(MIN_KERNEL_WIDTH, Math.min(MAX_KERNEL_WIDTH, width)));
}

/**
 * Kernel of a given width with the upsampling-2 shape parameter β = 2.30·width.
 * @param width support in fine-grid cells, integer in [2, 16].
 */
export function esKernelForWidth(width: number): EsKernel {
  if (!Number.isInteger(width) || width < MIN_KERNEL_WIDTH || width > MAX_KERNEL_WIDTH) {
    throw new InputError(
      `NUFFT kernel width: got ${width}; it must be an integer in [${MIN_KERNEL_WIDTH}, ${MAX_KERNEL_WIDTH}] (about one digit of accuracy per cell)`,
    );
  }
  return { width, beta: 2.3 * width };
}

/**
 * φ(z) = exp(β(√(1 − z²) − 1)) on |z| ≤ 1, 0 outside (dimensionless; φ(0) = 1).
 * Reference: Barnett et al. 2019, eq. (1.8); REFERENCES.md §9.
 */
export function esKernel(z: number, beta: number): number {
  const s = 1 - z * z;
  return s >= 0 ? Math.exp(beta * (Math.sqrt(s) - 1)) : 0;
}

/** Nodes and weights of an n-point Gauss–Legendre rule on [−1, 1]. */
export interface QuadratureRule {
  nodes: Float64Array;
  weights: Float64Array;
}

/**
 * n-point Gauss–Legendre rule on [−1, 1], by Newton iteration on P_n from the Chebyshev guess.
 * Reference: Press et al., Numerical Recipes 3rd ed. §4.6 (`gauleg`, from memory).
 */
export function gaussLegendre(n: number): QuadratureRule {
  const nodes = new Float64Array(n);
  const weights = new Float64Array(n);
  const half = (n + 1) >> 1;
  for (let i = 0; i < half; i++) {
    let z = Math.cos((Math.PI * (i + 0.75)) / (n + 0.5));
    let dp = 0;
    for (let iter = 0; iter < 100; iter++) {
      // P_n(z) and P_{n−1}(z) by the three-term recurrence.
      let p1 = 1;
      let p2 = 0;
      for (let j = 1; j <= n; j++) {
        const p3 = p2;
        p2 = p1;
        p1 = ((2 * j - 1) * z * p2 - (j - 1) * p3) / j;
      }
      dp = (n * (z * p1 - p2)) / (z * z - 1);
      const dz = p1 / dp;
      z -= dz;
      if (Math.abs(dz) < 1e-16) break;
    }
    // Recompute the derivative at the converged node for the weight.
    let p1 = 1;
    let p2 = 0;
    for (let j = 1; j <= n; j++) {
      const p3 = p2;
      p2 = p1;
      p1 = ((2 * j - 1) * z * p2 - (j - 1) * p3) / j;
    }
    dp = (n * (z * p1 - p2)) / (z * z - 1);
    nodes[i] = -z;
    nodes[n - 1 - i] = z;
    const wgt = 2 / ((1 - z * z) * dp * dp);
    weights[i] = wgt;
    weights[n - 1 - i] = wgt;
  }
  return { nodes, weights };
}

/**
 * Fourier transform Φ(k) = ∫_{−1}^{1} φ(z) e^{−ikz} dz = 2∫_0^1 φ(z) cos(kz) dz of the ES kernel
 * (real and even because φ is), by Gauss–Legendre quadrature on [0, 1].
 * @param kValues angular frequencies k (dimensionless, per unit z).
 * @param out receives Φ(k) for each k.
 * @param nodesCount quadrature nodes; the default resolves the √(1−z²) kink at z = 1, where φ
 *   is already e^{−β}, to far below the NUFFT tolerance.
 * Reference: Barnett et al. 2019 §3 (quadrature of the kernel transform); REFERENCES.md §9.
 */
export function esKernelFourier(
  kValues: ArrayLike<number>,
  beta: number,
  out: Float64Array,
  nodesCount = 200,
): void {
  const rule = gaussLegendre(nodesCount);
  const q = rule.nodes.length;
  const zNodes = new Float64Array(q);
  const fw = new Float64Array(q);
  for (let m = 0; m < q; m++) {
    const z = 0.5 * (rule.nodes[m] + 1); // map [−1, 1] → [0, 1]
    zNodes[m] = z;
    fw[m] = rule.weights[m] * esKernel(z, beta); // 2 · (1/2) Jacobian = 1
  }
  for (let i = 0; i < kValues.length; i++) {
    const k = kValues[i];
    let s = 0;
    for (let m = 0; m < q; m++) s += fw[m] * Math.cos(k * zNodes[m]);
    out[i] = s;
  }
}
