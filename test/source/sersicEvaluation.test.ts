import { describe, expect, it } from "vitest";
import { GaussianProfile } from "../../src/source/gaussian.js";
import { SersicProfile, sersicBn, sersicFluxOverIeRe2 } from "../../src/source/sersic.js";
import { Rng } from "../../src/random.js";

/**
 * Assert |a_i − ref_i| ≤ rtol·(1 + cond_i)·|ref_i| for every i, with cond_i the condition number
 * of the evaluation (for I = e^(−E): |E|, since a relative error ε in E gives |E|·ε in I).
 * One expect per array: per-point expects are slow.
 */
function expectAllRel(a: Float64Array, ref: Float64Array, cond: Float64Array, rtol: number, what: string): void {
  let worst = 0;
  let at = -1;
  for (let i = 0; i < a.length; i++) {
    const err = Math.abs(a[i] - ref[i]) / (Math.abs(ref[i]) * (1 + cond[i]));
    if (!(err <= worst)) {
      worst = err;
      at = i;
    }
  }
  expect(worst <= rtol, `${what}: worst scaled error ${worst} at point ${at} (${a[at]} vs ${ref[at]}); tolerance ${rtol}`).toBe(true);
}

/**
 * Direct evaluation of CONVENTIONS.md's Sérsic law with Math.pow and Math.exp, for unit flux:
 * I = I_e exp(−b_n[(ξ/R_e)^(1/n) − 1]), ξ = sqrt(q x'² + y'²/q), I_e = 1/(R_e² · F/(I_e R_e²)).
 * Returns [I, b_n (ξ/R_e)^(1/n)] (the second is the condition number of the exponential).
 */
function sersicDirect(x: number, y: number, rEff: number, n: number, q: number, paDeg: number, x0: number, y0: number): [number, number] {
  const phi = (paDeg * Math.PI) / 180;
  const dx = x - x0;
  const dy = y - y0;
  const xp = dx * Math.sin(phi) + dy * Math.cos(phi);
  const yp = -dx * Math.cos(phi) + dy * Math.sin(phi);
  const xi = Math.sqrt(q * xp * xp + (yp * yp) / q);
  const bn = sersicBn(n);
  const ie = 1 / (sersicFluxOverIeRe2(n, bn) * rEff * rEff);
  const bw = bn * Math.pow(xi / rEff, 1 / n);
  return [ie * Math.exp(bn - bw), bw];
}

function points(seed: number, n: number): [Float64Array, Float64Array] {
  const rng = new Rng(seed);
  const x = new Float64Array(n);
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    // radii from 1e-4 R_e to ~15 R_e around the centre (0.05, −0.02), R_e = 0.2″
    const r = 0.2 * Math.pow(10, -4 + 5.2 * rng.uniform());
    const a = 2 * Math.PI * rng.uniform();
    x[i] = 0.05 + r * Math.cos(a);
    y[i] = -0.02 + r * Math.sin(a);
  }
  return [x, y];
}

describe("SersicProfile.addBrightness per-ray evaluation", () => {
  it("equals the Sérsic law evaluated with Math.pow for n = 0.5, 1, 2, 4 (square roots) and 0.7, 1.3, 3.1, 6 (exp·log)", () => {
    // Reference: CONVENTIONS.md Sérsic law, evaluated directly (Math.pow, Math.exp). The
    // brightness passes through exp(−b w): a relative error ε in w gives b·w·ε in I (b·w reaches
    // ~200 at 15 R_e for n = 0.5). Both sides make a few ulp of error in w and in the exponential
    // → tolerance 8 ulp (1.8e-15) × (1 + b·w).
    const [x, y] = points(31, 4000);
    for (const n of [0.5, 1, 2, 4, 0.7, 1.3, 3.1, 6]) {
      const s = new SersicProfile(0.2, n, 0.8, 40, 0.05, -0.02);
      const out = new Float64Array(x.length);
      s.addBrightness(x, y, out, x.length, 1);
      const ref = new Float64Array(x.length);
      const cond = new Float64Array(x.length);
      for (let i = 0; i < x.length; i++) [ref[i], cond[i]] = sersicDirect(x[i], y[i], 0.2, n, 0.8, 40, 0.05, -0.02);
      expectAllRel(out, ref, cond, 1.8e-15, `n = ${n}`);
    }
  });

  it("is continuous across the square-root shortcut: n = 1 and n = 1 ± 1e-12 agree to 1e-9", () => {
    // Analytic: ∂I/∂n is finite, |Δn| = 1e-12 changes I by ~1e-12·|∂ ln I/∂n| (< 1e-10 here);
    // 1e-9 leaves room for rounding in b_n's Newton solve.
    const [x, y] = points(32, 2000);
    const at = (n: number) => {
      const out = new Float64Array(x.length);
      new SersicProfile(0.2, n, 0.8, 40, 0.05, -0.02).addBrightness(x, y, out, x.length, 1);
      return out;
    };
    const mid = at(1);
    for (const n of [1 - 1e-12, 1 + 1e-12]) {
      expectAllRel(at(n), mid, new Float64Array(x.length), 1e-9, `n = ${n}`);
    }
  });
});

describe("GaussianProfile.addBrightness per-ray evaluation", () => {
  it("equals exp(−ξ²/(2σ²))/(2πσ²) evaluated with Math.exp", () => {
    // Reference: REFERENCES.md §5 / CONVENTIONS.md elliptical Gaussian, evaluated directly.
    // The condition number of e^(−E) is E = ξ²/(2σ²) (up to ~600 at the outer points); a few ulp
    // on both sides → tolerance 8 ulp (1.8e-15) × (1 + E).
    const [x, y] = points(33, 4000);
    const sigma = 0.15;
    const q = 0.6;
    const phi = (110 * Math.PI) / 180;
    const g = new GaussianProfile(sigma, q, 110, 0.05, -0.02);
    const out = new Float64Array(x.length);
    g.addBrightness(x, y, out, x.length, 2.5);
    const ref = new Float64Array(x.length);
    const cond = new Float64Array(x.length);
    for (let i = 0; i < x.length; i++) {
      const dx = x[i] - 0.05;
      const dy = y[i] + 0.02;
      const xp = dx * Math.sin(phi) + dy * Math.cos(phi);
      const yp = -dx * Math.cos(phi) + dy * Math.sin(phi);
      const xi2 = q * xp * xp + (yp * yp) / q;
      cond[i] = xi2 / (2 * sigma * sigma);
      ref[i] = (2.5 * Math.exp(-cond[i])) / (2 * Math.PI * sigma * sigma);
    }
    // every reference value is a normal number here (ξ²/(2σ²) < 700), so relative errors are meaningful
    expect(ref.every((v) => v > 1e-300)).toBe(true);
    expectAllRel(out, ref, cond, 1.8e-15, "Gaussian");
  });
});
