import { describe, expect, it } from "vitest";
import { esKernel, esKernelForWidth } from "../../src/fourier/kernel.js";
import { esKernelWeights, fitEsKernelPoly, makeKernelEvaluator, POLY_MAX_WIDTH } from "../../src/fourier/kernelPoly.js";
import { NufftPlan } from "../../src/fourier/nufft.js";
import { Rng } from "../../src/random.js";
import { relL2 } from "../helpers.js";

/** Largest |weight − φ(z_m)| over a dense grid of fractions s ∈ [0, 1) for one width. */
function maxKernelError(width: number): number {
  const { beta } = esKernelForWidth(width);
  const k = fitEsKernelPoly(width, beta);
  const out = new Float64Array(width);
  let err = 0;
  const samples = 20_000;
  for (let i = 0; i < samples; i++) {
    // Includes s = 0 (the kernel's edge, z = 1) and points just below 1.
    const s = i === samples - 1 ? 1 - 2 ** -40 : i / samples;
    esKernelWeights(k, s, out, 0);
    for (let m = 0; m < width; m++) {
      const exact = esKernel(1 - (s + m) / (width / 2), beta);
      err = Math.max(err, Math.abs(out[m] - exact));
    }
  }
  return err;
}

describe("esKernelWeights (piecewise-polynomial ES kernel)", () => {
  for (let w = 2; w <= POLY_MAX_WIDTH; w++) {
    it(`is within ε/10 of exp(β(√(1−z²)−1)) at width ${w}`, () => {
      // Reference: the kernel formula itself (Barnett et al. 2019 eq. 1.8, REFERENCES.md §9),
      // evaluated by esKernel. The width is chosen for ε = 10^(1−w) (kernel.ts rule), so a
      // kernel error below ε/10 (absolute, φ ≤ 1) is invisible next to the NUFFT's own error;
      // the fit aims at max(ε/1000, 1e-14), so the bound has ≥ 10× margin by construction.
      const eps = 10 ** (1 - w);
      const err = maxKernelError(w);
      expect(err, `max |poly − φ| = ${err} at w = ${w}, bound ${eps / 10}`).toBeLessThan(eps / 10);
    });
  }

  it(`widths above ${POLY_MAX_WIDTH} use exp/sqrt and agree with esKernel to round-off`, () => {
    // No approximation here, only the rounding of z = 1 − (s + m)/(w/2) (≈ 1e-16), amplified
    // by the kernel's steep slope next to |z| = 1 where d√(1−z²)/dz is unbounded; measured
    // 1.0e-14 (w = 14), 3.9e-15 (w = 15). Bound 1e-13: ten times that (common practice, no
    // source). ε/10 (1e-14 … 1e-16) is not reachable here in double precision; the old
    // exp/sqrt table code had the same rounding.
    expect(fitEsKernelPoly(14, esKernelForWidth(14).beta).polynomial).toBe(false);
    for (let w = POLY_MAX_WIDTH + 1; w <= 16; w++) {
      const err = maxKernelError(w);
      expect(err, `max |weight − φ| = ${err} at w = ${w}`).toBeLessThan(1e-13);
    }
  });

  it("the generated evaluator gives the same weights to the last bit", () => {
    // Same operations in the same order (kernelPoly.ts), so exact equality (analytic).
    const rng = new Rng(5);
    for (const w of [2, 3, 7, 13]) {
      const k = fitEsKernelPoly(w, esKernelForWidth(w).beta);
      const gen = makeKernelEvaluator(k);
      const a = new Float64Array(w);
      const b = new Float64Array(w);
      for (let i = 0; i < 500; i++) {
        const s = rng.uniform();
        esKernelWeights(k, s, a, 0);
        gen(s, b, 0);
        for (let m = 0; m < w; m++) expect(b[m], `w = ${w}, s = ${s}, m = ${m}`).toBe(a[m]);
      }
    }
  });
});

describe("NufftPlan.executeAdjointPair", () => {
  it("equals two executeAdjoint calls (real parts) sharing the points", () => {
    // Same weights and grid; only the order of additions could differ, and it does not here
    // (both spread sorted points in the same order): agreement to round-off → 1e-13
    // (brute-force comparison, common practice).
    const rng = new Rng(8);
    const n = 32;
    const cell = 2e-7;
    const m = 3000;
    const u = Float64Array.from({ length: m }, () => (rng.uniform() - 0.5) / cell);
    const v = Float64Array.from({ length: m }, () => (rng.uniform() - 0.5) / cell);
    const aRe = Float64Array.from({ length: m }, () => rng.normal());
    const aIm = Float64Array.from({ length: m }, () => rng.normal());
    const b = Float64Array.from({ length: m }, () => rng.uniform());
    for (const precomputeKernel of [true, false]) {
      const plan = new NufftPlan({ nx: n, cellRad: cell, tolerance: 1e-12, threads: 1, precomputeKernel });
      plan.setPoints(u, v);
      const refA = new Float64Array(n * n);
      const refB = new Float64Array(n * n);
      plan.executeAdjoint(aRe, aIm, refA);
      plan.executeAdjoint(b, null, refB);
      const outA = new Float64Array(n * n);
      const outB = new Float64Array(n * n);
      plan.executeAdjointPair(aRe, aIm, b, outA, outB);
      plan.dispose();
      expect(relL2(outA, refA)).toBeLessThan(1e-13);
      expect(relL2(outB, refB)).toBeLessThan(1e-13);
      expect(Math.max(...refB.map(Math.abs))).toBeGreaterThan(0);
    }
  });
});
