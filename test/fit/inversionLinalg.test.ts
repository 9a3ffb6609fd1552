import { CholeskyDecomposition, Matrix } from "ml-matrix";
import { describe, expect, it } from "vitest";
import {
  CgWorkspace,
  choleskyInPlace,
  choleskyLogDet,
  choleskySolve,
  conjugateGradient,
  inverseDiagonal,
  invertLowerInPlace,
} from "../../src/fit/inversionLinalg.js";
import { maximiseOverLogLambda } from "../../src/fit/inversionLambda.js";
import { Rng } from "../../src/random.js";
import { expectAbs, expectRel } from "../helpers.js";

/** A random SPD matrix G Gᵀ + k·I (row-major) and its ml-matrix twin. */
function spd(k: number, seed: number): { a: Float64Array; m: Matrix } {
  const rng = new Rng(seed);
  const g = Matrix.zeros(k, k);
  for (let i = 0; i < k; i++) for (let j = 0; j < k; j++) g.set(i, j, rng.normal());
  const m = g.mmul(g.transpose()).add(Matrix.eye(k).mul(k));
  const sym = m.add(m.transpose()).mul(0.5);
  const a = new Float64Array(k * k);
  for (let i = 0; i < k; i++) for (let j = 0; j < k; j++) a[i * k + j] = sym.get(i, j);
  return { a, m: sym };
}

describe("dense Cholesky of the inversion (reference: ml-matrix 6 CholeskyDecomposition / inverse)", () => {
  for (const k of [1, 2, 7, 40]) {
    it(`k = ${k}: factor, solve, log det and the diagonal of the inverse agree to 1e-10 relative`, () => {
      const { a, m } = spd(k, k);
      const ref = new CholeskyDecomposition(m);
      const L = ref.lowerTriangularMatrix;
      expect(choleskyInPlace(a, k)).toBe(true);
      for (let i = 0; i < k; i++) for (let j = 0; j <= i; j++) expectAbs(a[i * k + j], L.get(i, j), 1e-10 * Math.abs(L.get(i, i)), `L[${i}][${j}]`);
      let ld = 0;
      for (let i = 0; i < k; i++) ld += 2 * Math.log(L.get(i, i));
      expectRel(choleskyLogDet(a, k), ld, 1e-12, "log det");
      const rng = new Rng(99);
      const b = Float64Array.from({ length: k }, () => rng.normal());
      const x = Float64Array.from(b);
      choleskySolve(a, k, x);
      const xr = ref.solve(Matrix.columnVector(Array.from(b)));
      for (let i = 0; i < k; i++) expectAbs(x[i], xr.get(i, 0), 1e-10 * Math.abs(xr.get(i, 0)) + 1e-14, `x[${i}]`);
      const inv = ref.solve(Matrix.eye(k));
      invertLowerInPlace(a, k, new Float64Array(k));
      const d = new Float64Array(k);
      inverseDiagonal(a, k, d);
      for (let i = 0; i < k; i++) expectRel(d[i], inv.get(i, i), 1e-10, `(A⁻¹)_${i}${i}`);
    });
  }

  it("reports a matrix that is not positive definite (analytic: eigenvalues 3 and −1)", () => {
    const a = new Float64Array([1, 2, 2, 1]);
    expect(choleskyInPlace(a, 2)).toBe(false);
  });

  it("conjugateGradient converges to the Cholesky solution (1e-8 relative at tolerance 1e-12)", () => {
    const k = 60;
    const { a } = spd(k, 5);
    const rng = new Rng(4);
    const b = Float64Array.from({ length: k }, () => rng.normal());
    const x = new Float64Array(k);
    const it = conjugateGradient(a, k, b, x, 1e-12, 500, new CgWorkspace());
    expect(it).toBeLessThanOrEqual(500);
    const f = Float64Array.from(a);
    choleskyInPlace(f, k);
    const y = Float64Array.from(b);
    choleskySolve(f, k, y);
    for (let i = 0; i < k; i++) expectAbs(x[i], y[i], 1e-8 * Math.max(...y.map(Math.abs)), `x[${i}]`);
  });
});

describe("maximiseOverLogLambda", () => {
  it("finds the maximum of a concave function of log10 λ to the requested bracket (analytic maximum at 1.234)", () => {
    const res = maximiseOverLogLambda((x) => -((x - 1.234) ** 2), { log10Min: -3, log10Max: 3, tolerance: 1e-4 });
    expectAbs(Math.log10(res.lambda), 1.234, 1e-4, "argmax");
    // curve sorted by λ
    for (let i = 1; i < res.curve.lambda.length; i++) expect(res.curve.lambda[i]).toBeGreaterThan(res.curve.lambda[i - 1]);
  });

  it("extends the scan when the maximum lies beyond the initial range (analytic maximum at 4.5)", () => {
    const res = maximiseOverLogLambda((x) => -Math.abs(x - 4.5), { log10Min: -2, log10Max: 2, tolerance: 1e-3 });
    expectAbs(Math.log10(res.lambda), 4.5, 1e-3, "argmax");
  });
});
