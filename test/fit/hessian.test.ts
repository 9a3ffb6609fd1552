import { describe, expect, it } from "vitest";
import { covarianceFromHessian, numericalHessian, type ScalarBatch } from "../../src/fit/hessian.js";
import { expectAbs, expectRel } from "../helpers.js";

const batch =
  (f: (x: Float64Array) => number): ScalarBatch =>
  (pts, out) => {
    for (let i = 0; i < pts.length; i++) out[i] = f(pts[i]);
  };

describe("numericalHessian", () => {
  it("of a quadratic form ½xᵀAx + bᵀx + c equals A", async () => {
    // Analytic Hessian A. Central differences are exact for quadratics up to rounding
    // ε|f|/h² ≈ 2e-16·10/(1.2e-4)² ≈ 2e-7 (relative to entries of order 1); tolerance 1e-6.
    const A = [
      [4, 1, -0.5],
      [1, 3, 0.2],
      [-0.5, 0.2, 2],
    ];
    const b = [0.3, -1, 2];
    const f = (x: Float64Array): number => {
      let s = 5;
      for (let i = 0; i < 3; i++) {
        s += b[i] * x[i];
        for (let j = 0; j < 3; j++) s += 0.5 * x[i] * A[i][j] * x[j];
      }
      return s;
    };
    const r = await numericalHessian(batch(f), new Float64Array([0.7, -1.2, 2.5]));
    for (let i = 0; i < 3; i++) for (let j = 0; j < 3; j++) expectAbs(r.hessian[i * 3 + j], A[i][j], 1e-6, `H[${i}][${j}]`);
    expect(r.nEvaluations).toBe(1 + 2 * 3 + 2 * 3 * 2);
  });

  it("of exp(x)·sin(y) matches the analytic second derivatives", async () => {
    // ∂²/∂x² = eˣ sin y, ∂²/∂y² = −eˣ sin y, ∂²/∂x∂y = eˣ cos y (analytic). Truncation
    // h²f⁗/12 ≈ (1.2e-4)²·3/12 ≈ 4e-9 plus rounding ≈ 2e-8; tolerance 1e-6 relative.
    const x0 = 0.4;
    const y0 = 1.1;
    const r = await numericalHessian(batch((p) => Math.exp(p[0]) * Math.sin(p[1])), new Float64Array([x0, y0]));
    expectRel(r.hessian[0], Math.exp(x0) * Math.sin(y0), 1e-6, "Hxx");
    expectRel(r.hessian[3], -Math.exp(x0) * Math.sin(y0), 1e-6, "Hyy");
    expectRel(r.hessian[1], Math.exp(x0) * Math.cos(y0), 1e-6, "Hxy");
    expectRel(r.hessian[2], Math.exp(x0) * Math.cos(y0), 1e-6, "Hyx");
  });
});

describe("covarianceFromHessian", () => {
  it("of −log N(x; μ, Σ) at its maximum gives back Σ, with badly scaled parameters", async () => {
    // −log L = ½(x − μ)ᵀΣ⁻¹(x − μ) + const, whose Hessian is Σ⁻¹ exactly (analytic). The
    // parameters differ in scale by 10⁶ (σ = 1e-3 and 1e3), so the steps come from
    // typicalScale = σ. Error budget as for the quadratic above; tolerance 1e-6 relative.
    const sd = [1e-3, 2, 1e3];
    const rho = [
      [1, 0.3, -0.2],
      [0.3, 1, 0.5],
      [-0.2, 0.5, 1],
    ];
    const Sigma = rho.map((row, i) => row.map((r, j) => r * sd[i] * sd[j]));
    // Σ⁻¹ by Gauss–Jordan (independent of ml-matrix, which the code under test uses)
    const M = Sigma.map((row, i) => [...row, ...[0, 1, 2].map((j) => (i === j ? 1 : 0))]);
    for (let c = 0; c < 3; c++) {
      const p = M[c][c];
      for (let q = 0; q < 6; q++) M[c][q] /= p;
      for (let r = 0; r < 3; r++) {
        if (r === c) continue;
        const f = M[r][c];
        for (let q = 0; q < 6; q++) M[r][q] -= f * M[c][q];
      }
    }
    const P = M.map((row) => row.slice(3));
    const mu = [0.01, -3, 5000];
    const negLogL = (x: Float64Array): number => {
      let q = 0;
      for (let i = 0; i < 3; i++) for (let j = 0; j < 3; j++) q += (x[i] - mu[i]) * P[i][j] * (x[j] - mu[j]);
      return 0.5 * q + 12.3;
    };
    const h = await numericalHessian(batch(negLogL), Float64Array.from(mu), { typicalScale: Float64Array.from(sd) });
    const c = covarianceFromHessian(h.hessian, 3);
    expect(c.positiveDefinite).toBe(true);
    for (let i = 0; i < 3; i++) for (let j = 0; j < 3; j++) expectRel(c.covariance![i * 3 + j], Sigma[i][j], 1e-6, `Σ[${i}][${j}]`);
  });

  it("reports a saddle point instead of inverting", () => {
    // H = diag(2, −1) has a negative eigenvalue (analytic): not a maximum of the posterior.
    const c = covarianceFromHessian(new Float64Array([2, 0, 0, -1]), 2);
    expect(c.positiveDefinite).toBe(false);
    expect(c.covariance).toBeNull();
    expectAbs(c.eigenvalues[0], -1, 1e-14, "smallest eigenvalue");
    expect(c.reason).toMatch(/not positive definite: smallest eigenvalue -1\.000e\+0 .* along parameters \{p1:/);
  });

  it("reports a flat direction (singular Hessian)", () => {
    // Two perfectly degenerate parameters: H = [[1, 1], [1, 1]], eigenvalues 0 and 2 (analytic).
    const c = covarianceFromHessian(new Float64Array([1, 1, 1, 1]), 2);
    expect(c.positiveDefinite).toBe(false);
    expectAbs(c.eigenvalues[1], 2, 1e-14, "largest eigenvalue");
  });
});
