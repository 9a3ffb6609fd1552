import { CholeskyDecomposition, Matrix } from "ml-matrix";
import { describe, expect, it } from "vitest";
import { KernelPrior, kernelValue, KERNEL_NUGGET } from "../../src/fit/kernelPrior.js";
import { Rng } from "../../src/random.js";
import { expectRel } from "../helpers.js";

/**
 * The general Matérn covariance k(r) = 2^{1−ν}/Γ(ν) (√(2ν) r)^ν K_ν(√(2ν) r) (Rasmussen & Williams
 * 2006, eq. 4.14; from memory) at ν = 3/2, with the closed form of the half-integer Bessel function
 * K_{3/2}(z) = √(π/(2z)) e^{−z} (1 + 1/z) (Abramowitz & Stegun 1964, 10.2.17; from memory) and
 * Γ(3/2) = √π/2. An independent route to the ν = 3/2 kernel the code writes in its reduced form.
 */
function maternGeneral32(r: number): number {
  const nu = 1.5;
  const z = Math.sqrt(2 * nu) * r;
  const besselK32 = Math.sqrt(Math.PI / (2 * z)) * Math.exp(-z) * (1 + 1 / z);
  return (Math.pow(2, 1 - nu) / (Math.sqrt(Math.PI) / 2)) * Math.pow(z, nu) * besselK32;
}

describe("covariance kernels", () => {
  it("Matérn ν = 3/2 equals the general Bessel-function form (1e-13); both kernels are 1 at r = 0", () => {
    for (const r of [0.01, 0.3, 1, 2.5, 7]) {
      expectRel(kernelValue("matern", r * r, 1), maternGeneral32(r), 1e-13, `matern r = ${r}`);
    }
    expect(kernelValue("matern", 0, 1)).toBe(1);
    expect(kernelValue("gaussian", 0, 1)).toBe(1);
    // squared exponential exp(−r²/2ℓ²) (Rasmussen & Williams eq. 4.9): e^{−1/2} at r = ℓ
    expectRel(kernelValue("gaussian", 0.04, 1 / 0.04), Math.exp(-0.5), 1e-15, "gaussian r = ℓ");
  });

  it("builds H = C⁻¹ and log det C that agree with ml-matrix's inverse and Cholesky (1e-8)", () => {
    const rng = new Rng(11);
    const K = 60;
    const x = Float64Array.from({ length: K }, () => rng.uniform() * 0.8 - 0.4);
    const y = Float64Array.from({ length: K }, () => rng.uniform() * 0.8 - 0.4);
    for (const kind of ["gaussian", "matern"] as const) {
      const scale = kind === "gaussian" ? 0.05 : 0.12;
      const prior = new KernelPrior(kind);
      expect(prior.build(x, y, K, scale)).toBe(true);
      const C = Matrix.zeros(K, K);
      for (let i = 0; i < K; i++) {
        for (let j = 0; j < K; j++) {
          const d2 = (x[i] - x[j]) ** 2 + (y[i] - y[j]) ** 2;
          C.set(i, j, kernelValue(kind, d2, 1 / scale ** 2) + (i === j ? KERNEL_NUGGET : 0));
        }
      }
      const ch = new CholeskyDecomposition(C);
      const Lc = ch.lowerTriangularMatrix;
      let logDet = 0;
      for (let i = 0; i < K; i++) logDet += 2 * Math.log(Lc.get(i, i));
      expectRel(prior.logDetCovariance, logDet, 1e-10, `${kind} log det C`);
      const inv = ch.solve(Matrix.eye(K));
      const dense = new Float64Array(K * K);
      prior.addToDense(dense, 1);
      let maxErr = 0;
      let maxVal = 0;
      let tr = 0;
      for (let i = 0; i < K; i++) {
        tr += inv.get(i, i);
        for (let j = 0; j < K; j++) {
          maxErr = Math.max(maxErr, Math.abs(dense[i * K + j] - inv.get(i, j)));
          maxVal = Math.max(maxVal, Math.abs(inv.get(i, j)));
        }
      }
      expect(maxErr / maxVal, kind).toBeLessThan(1e-8);
      expectRel(prior.trace(), tr, 1e-8, `${kind} tr H`);
      // quadratic and multiply agree with the dense matrix
      const v = Float64Array.from({ length: K }, () => rng.normal());
      const hv = new Float64Array(K);
      prior.multiply(v, hv);
      let q = 0;
      for (let i = 0; i < K; i++) q += v[i] * hv[i];
      expectRel(prior.quadratic(v), q, 1e-10, `${kind} vᵀHv`);
    }
  });
});
