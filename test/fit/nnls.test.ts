import { describe, expect, it } from "vitest";
import { nnls, nnlsNormal } from "../../src/fit/nnls.js";
import { InputError } from "../../src/errors.js";
import { Rng } from "../../src/random.js";
import { expectAbs } from "../helpers.js";

/** Unconstrained least squares on the columns in `set` by Gaussian elimination of the normal equations. */
function lsOnSet(ata: Float64Array, atb: Float64Array, n: number, set: number[]): Float64Array | null {
  const k = set.length;
  const M = set.map((i) => [...set.map((j) => ata[i * n + j]), atb[i]]);
  for (let c = 0; c < k; c++) {
    let p = c;
    for (let r = c + 1; r < k; r++) if (Math.abs(M[r][c]) > Math.abs(M[p][c])) p = r;
    [M[c], M[p]] = [M[p], M[c]];
    if (Math.abs(M[c][c]) < 1e-14) return null;
    for (let r = 0; r < k; r++) {
      if (r === c) continue;
      const f = M[r][c] / M[c][c];
      for (let q = c; q <= k; q++) M[r][q] -= f * M[c][q];
    }
  }
  const x = new Float64Array(n);
  set.forEach((i, a) => (x[i] = M[a][k] / M[a][a]));
  return x;
}

/** ‖Ax − b‖² − bᵀb = xᵀGx − 2xᵀc (the constant bᵀb does not change the minimiser). */
function objective(ata: Float64Array, atb: Float64Array, n: number, x: Float64Array): number {
  let v = 0;
  for (let i = 0; i < n; i++) {
    let gi = 0;
    for (let j = 0; j < n; j++) gi += ata[i * n + j] * x[j];
    v += x[i] * gi - 2 * x[i] * atb[i];
  }
  return v;
}

describe("nnls: textbook cases", () => {
  it("A = I: the solution is b with negative entries set to zero", () => {
    // Analytic: the problem separates into min (x_i − b_i)², x_i ≥ 0.
    const r = nnls(new Float64Array([1, 0, 0, 0, 1, 0, 0, 0, 1]), 3, 3, new Float64Array([1, -2, 3]));
    expect(Array.from(r.x)).toEqual([1, 0, 3]);
    expectAbs(r.residualSq, 4, 1e-14, "‖Ax − b‖²");
  });

  it("A = [[1,0],[1,1],[0,1]], b = (2, 1, −1): x = (1.5, 0)", () => {
    // Analytic: unconstrained LS gives (2, −1), infeasible; with x₂ = 0 the best x₁ minimises
    // (x₁ − 2)² + (x₁ − 1)² + 1 → x₁ = 1.5, and the dual w₂ = Aᵀb − AᵀAx = 0 − 1.5 < 0 (KKT).
    const r = nnls(new Float64Array([1, 0, 1, 1, 0, 1]), 3, 2, new Float64Array([2, 1, -1]));
    expectAbs(r.x[0], 1.5, 1e-14, "x₁");
    expect(r.x[1]).toBe(0);
    expectAbs(r.dual[1], -1.5, 1e-14, "w₂");
    expectAbs(r.residualSq, 1.5, 1e-14, "‖Ax − b‖² = 0.25 + 0.25 + 1");
    expect(r.converged).toBe(true);
  });
});

describe("nnlsNormal against brute-force enumeration of active sets", () => {
  it("finds the optimum of 60 random small problems and meets the KKT conditions", () => {
    // Reference: the NNLS optimum is the unconstrained LS solution on some column subset that is
    // feasible; enumerating all 2ⁿ subsets and keeping the feasible one of least objective
    // gives it independently of the active-set logic. Well-conditioned random A (m > n), so
    // solutions agree to ~1e-12; tolerance 1e-9 on x and 1e-9·scale on the KKT residuals.
    const rng = new Rng(2718);
    for (let trial = 0; trial < 60; trial++) {
      const n = 2 + (trial % 5); // 2..6 unknowns
      const m = n + 3;
      const a = new Float64Array(m * n);
      const b = new Float64Array(m);
      for (let i = 0; i < a.length; i++) a[i] = rng.normal();
      for (let i = 0; i < m; i++) b[i] = rng.normal();
      const ata = new Float64Array(n * n);
      const atb = new Float64Array(n);
      let btb = 0;
      for (let r = 0; r < m; r++) {
        btb += b[r] * b[r];
        for (let i = 0; i < n; i++) {
          atb[i] += a[r * n + i] * b[r];
          for (let j = 0; j < n; j++) ata[i * n + j] += a[r * n + i] * a[r * n + j];
        }
      }
      let best: Float64Array = new Float64Array(n);
      let bestVal = 0; // x = 0 is always feasible
      for (let mask = 1; mask < 1 << n; mask++) {
        const set: number[] = [];
        for (let i = 0; i < n; i++) if (mask & (1 << i)) set.push(i);
        const x = lsOnSet(ata, atb, n, set);
        if (!x || set.some((i) => x[i] < 0)) continue;
        const v = objective(ata, atb, n, x);
        if (v < bestVal) {
          bestVal = v;
          best = x;
        }
      }
      const r = nnlsNormal(ata, atb, btb);
      expect(r.converged, `trial ${trial}: ${r.reason}`).toBe(true);
      for (let i = 0; i < n; i++) expectAbs(r.x[i], best[i], 1e-9, `trial ${trial} x[${i}]`);
      // KKT: x ≥ 0, w ≤ 0, w_i = 0 where x_i > 0
      let scale = 0;
      for (let i = 0; i < n; i++) scale = Math.max(scale, Math.abs(atb[i]));
      for (let i = 0; i < n; i++) {
        expect(r.x[i]).toBeGreaterThanOrEqual(0);
        expect(r.dual[i]).toBeLessThanOrEqual(1e-9 * scale);
        if (r.x[i] > 0) expectAbs(r.dual[i], 0, 1e-9 * scale, `trial ${trial} w[${i}] on the support`);
      }
      // the residual from the normal form equals the one from the definition
      expectAbs(r.residualSq, btb + bestVal, 1e-9 * btb, `trial ${trial} ‖Ax − b‖²`);
    }
  });

  it("handles exactly collinear columns (singular AᵀA) and still meets KKT", () => {
    // Columns 0 and 1 are identical: the optimum value is unique, x is not. Check KKT and the
    // analytic optimum value: b = (1, 2, 0) is fitted by (x₀ + x₁)(1, 1, 0) + x₂(0, 0, 1) with
    // x₀ + x₁ = 1.5, x₂ = 0 → residual ‖(−0.5, 0.5, 0)‖² = 0.5.
    const a = new Float64Array([1, 1, 0, 1, 1, 0, 0, 0, 1]);
    const r = nnls(a, 3, 3, new Float64Array([1, 2, 0]));
    expect(r.converged).toBe(true);
    expectAbs(r.x[0] + r.x[1], 1.5, 1e-12, "x₀ + x₁");
    expectAbs(r.residualSq, 0.5, 1e-12, "‖Ax − b‖²");
    for (let i = 0; i < 3; i++) expect(r.dual[i]).toBeLessThanOrEqual(1e-12);
  });

  it("rejects a non-square normal matrix with a clear message", () => {
    expect(() => nnlsNormal(new Float64Array(5), new Float64Array(2))).toThrow(InputError);
    expect(() => nnlsNormal(new Float64Array(5), new Float64Array(2))).toThrow(/normal matrix has 5 entries; expected n² = 4 for n = 2/);
  });
});
