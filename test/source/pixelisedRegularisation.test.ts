import { CholeskyDecomposition, EigenvalueDecomposition, Matrix } from "ml-matrix";
import { describe, expect, it } from "vitest";
import { AdaptiveSourceMesh } from "../../src/source/mesh.js";
import {
  meshRegularisation,
  physicalRegularisationScale,
  regularGridRegularisation,
  SparseSymmetric,
  type RegularisationOrder,
} from "../../src/source/regularisation.js";
import { Rng } from "../../src/random.js";
import { expectAbs, expectRel } from "../helpers.js";

function applyH(H: SparseSymmetric, x: Float64Array): Float64Array {
  const out = new Float64Array(H.size);
  H.multiply(x, out);
  return out;
}

function maxAbs(v: Float64Array): number {
  let m = 0;
  for (const x of v) m = Math.max(m, Math.abs(x));
  return m;
}

function dense(H: SparseSymmetric): Matrix {
  const K = H.size;
  const m = Matrix.zeros(K, K);
  for (let i = 0; i < K; i++) for (let p = H.rowPtr[i]; p < H.rowPtr[i + 1]; p++) m.set(i, H.col[p], H.val[p]);
  return m;
}

describe("regularGridRegularisation", () => {
  const side = 9;
  const K = side * side;
  const xs = Float64Array.from({ length: K }, (_, i) => i % side);
  const ys = Float64Array.from({ length: K }, (_, i) => Math.floor(i / side));

  it("zeroth order is the identity (Suyu et al. 2006 §2, from memory)", () => {
    const H = new SparseSymmetric();
    regularGridRegularisation(side, "zeroth", H);
    expect(H.nnz).toBe(K);
    const x = Float64Array.from({ length: K }, (_, i) => i * 0.1 - 2);
    expect(Array.from(applyH(H, x))).toEqual(Array.from(x));
  });

  it("gradient H annihilates constants and nothing else (null space of the grid Laplacian is 1-D: analytic)", () => {
    const H = new SparseSymmetric();
    regularGridRegularisation(side, "gradient", H);
    expectAbs(maxAbs(applyH(H, new Float64Array(K).fill(3.7))), 0, 1e-13, "H·constant (round-off of 3.7·(4 − 4 terms))");
    // a ramp is not in the null space: xᵀHx = Σ over horizontal pairs of 1² = side·(side − 1)
    expectRel(H.quadratic(xs), side * (side - 1), 1e-14, "ramp energy");
    // symmetric
    const D = dense(H);
    expect(D.isSymmetric()).toBe(true);
  });

  it("curvature H annihilates constants and linear ramps in x and y (and the bilinear xy) (analytic: second differences)", () => {
    const H = new SparseSymmetric();
    regularGridRegularisation(side, "curvature", H);
    const c = new Float64Array(K).fill(1);
    const xy = Float64Array.from(xs, (x, i) => x * ys[i]);
    const ramp = Float64Array.from(xs, (x, i) => 0.3 - 1.2 * x + 2.5 * ys[i]);
    for (const [name, v] of [["constant", c], ["x", xs], ["y", ys], ["ramp", ramp], ["xy", xy]] as const) {
      expectAbs(maxAbs(applyH(H, v)), 0, 1e-12, `H·${name}`);
    }
    // x² is not: its second difference along x is 2 at each of side·(side − 2) rows → xᵀHx = 4·side·(side − 2)
    const x2 = Float64Array.from(xs, (x) => x * x);
    expectRel(H.quadratic(x2), 4 * side * (side - 2), 1e-12, "x² energy");
    // nullity 4 (1, x, y, xy): the smallest 4 eigenvalues vanish, the 5th does not (analytic)
    const ev = new EigenvalueDecomposition(dense(H)).realEigenvalues.sort((a, b) => a - b);
    for (let i = 0; i < 4; i++) expectAbs(ev[i], 0, 1e-10, `eigenvalue ${i}`);
    expect(ev[4]).toBeGreaterThan(1e-4);
  });

  it("logDetShifted equals the dense Cholesky log-determinant of H + εI (ml-matrix 6 reference, 1e-10 relative)", () => {
    for (const order of ["gradient", "curvature"] as RegularisationOrder[]) {
      const H = new SparseSymmetric();
      regularGridRegularisation(side, order, H);
      const eps = 1e-3;
      const ref = new CholeskyDecomposition(dense(H).add(Matrix.eye(K).mul(eps)));
      const L = ref.lowerTriangularMatrix;
      let ld = 0;
      for (let i = 0; i < K; i++) ld += 2 * Math.log(L.get(i, i));
      expectRel(H.logDetShifted(eps), ld, 1e-10, `log det ${order}`);
    }
  });
});

describe("meshRegularisation", () => {
  const rng = new Rng(23);
  const n = 200;
  const x = new Float64Array(n);
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    x[i] = rng.normal() * 0.2;
    y[i] = rng.normal() * 0.1;
  }
  let xMin = Infinity, xMax = -Infinity, yMin = Infinity, yMax = -Infinity;
  for (let i = 0; i < n; i++) {
    xMin = Math.min(xMin, x[i]);
    xMax = Math.max(xMax, x[i]);
    yMin = Math.min(yMin, y[i]);
    yMax = Math.max(yMax, y[i]);
  }
  const mesh = new AdaptiveSourceMesh(n);
  mesh.build(x, y, n, xMin, xMax, yMin, yMax);
  const K = mesh.cellCount;

  it("gradient (graph Laplacian of the Delaunay edges) annihilates constants (analytic)", () => {
    const H = new SparseSymmetric();
    meshRegularisation(mesh, "gradient", H);
    expectAbs(maxAbs(applyH(H, new Float64Array(K).fill(2))), 0, 1e-12, "H·1");
    // Euler: edges = 3n − 3 − h; the Laplacian trace is twice the number of edges (4 hull nodes)
    expectRel(H.trace(), 2 * (3 * K - 3 - 4), 1e-14, "tr H = 2·edges");
  });

  it("curvature (mean-value-coordinate residuals) annihilates constants and linear ramps (Floater 2003 linear precision; 1e-10)", () => {
    const H = new SparseSymmetric();
    meshRegularisation(mesh, "curvature", H);
    const ramp = Float64Array.from({ length: K }, (_, i) => 1.5 + 4 * mesh.xArcsec[i] - 7 * mesh.yArcsec[i]);
    const h = applyH(H, ramp);
    // scale: entries of H are O(1)·(neighbour weights)², ramp values O(1)
    expectAbs(maxAbs(h), 0, 1e-10 * maxAbs(ramp) * (H.trace() / K), "H·ramp");
    // but a quadratic is penalised
    const quad = Float64Array.from({ length: K }, (_, i) => mesh.xArcsec[i] ** 2 + mesh.yArcsec[i] ** 2);
    expect(H.quadratic(quad)).toBeGreaterThan(0);
  });
});

describe("physicalRegularisationScale", () => {
  // S(β) = exp(−r²/2σ²) sampled on the nodes of square grids of two cell sizes. Analytic integrals
  // (Gaussian moments): ∫S² d²β = πσ²; ∫|∇S|² d²β = π; ∫[(∂²S/∂x²)² + (∂²S/∂y²)²] d²β = 3π/(2σ²).
  // c·sᵀHs must approach each integral at both cell sizes: the prior then does not depend on the
  // cell size a lens gives the grid. Tolerance 3 %: the finite differences err by O((Δ/σ)²), with
  // Δ/σ ≤ 0.2 here (index units would be off by (Δ₁/Δ₂)² = 2.25 between the two grids).
  const sigma = 0.1;
  const analytic = { zeroth: Math.PI * sigma ** 2, gradient: Math.PI, curvature: (3 * Math.PI) / (2 * sigma ** 2) };
  for (const order of ["zeroth", "gradient", "curvature"] as const) {
    it(`${order}: c·sᵀHs equals the integral of the continuous form at two cell sizes (analytic Gaussian integrals)`, () => {
      for (const side of [41, 61]) {
        const halfWidth = 4 * sigma;
        const cell = (2 * halfWidth) / (side - 1);
        const H = new SparseSymmetric();
        regularGridRegularisation(side, order, H);
        const s = new Float64Array(side * side);
        for (let b = 0; b < side; b++) {
          for (let a = 0; a < side; a++) {
            const x = -halfWidth + a * cell;
            const y = -halfWidth + b * cell;
            s[b * side + a] = Math.exp(-(x * x + y * y) / (2 * sigma * sigma));
          }
        }
        const value = physicalRegularisationScale(order, cell) * H.quadratic(s);
        expect(Math.abs(value / analytic[order] - 1), `${order}, Δ = ${cell.toPrecision(3)}″: ${value} vs ${analytic[order]}`).toBeLessThan(0.03);
      }
    });
  }
});
