import { describe, expect, it } from "vitest";
import { effectiveSampleSize, summarise, weightedCovariance, weightedMean, weightedQuantiles, weightsFromLog } from "../../src/fit/stats.js";
import { InputError } from "../../src/errors.js";
import { Rng } from "../../src/random.js";
import { expectAbs, expectRel } from "../helpers.js";

// Φ⁻¹(0.84) = 0.994458 (standard normal quantile, from memory; Φ(1) = 0.8413 is the familiar
// neighbour, and the symmetric Φ⁻¹(0.16) = −0.994458).
const Z84 = 0.994458;

describe("weightedQuantiles", () => {
  it("with equal weights follows the Hazen rule p_i = (i − ½)/n", () => {
    // Hyndman & Fan 1996, definition 5: quantile p lies between order statistics at (i − ½)/n,
    // linearly interpolated (hand-computed for the 4 values below; exact arithmetic).
    const x = new Float64Array([10, 40, 20, 30]); // sorted: 10 20 30 40 at p = .125 .375 .625 .875
    const q = weightedQuantiles(x, undefined, [0, 0.125, 0.25, 0.5, 0.8, 1]);
    expect(Array.from(q)).toEqual([10, 10, 15, 25, 37, 40]);
  });

  it("of a large normal sample gives ±Φ⁻¹(0.84) and 0; importance weights correct a wider draw", () => {
    // Unweighted: 10⁵ draws of N(0, 1); quantile sd = sqrt(p(1 − p)/n)/φ(z) ≈ 0.005 → tolerance 0.025.
    // Weighted: draws from N(0, 2²) with weights N(0,1)/N(0,4) ∝ exp(−3x²/8) target N(0, 1)
    // (importance sampling; analytic). ESS ≈ 0.6·n, so the same tolerance holds.
    const rng = new Rng(99);
    const n = 100_000;
    const x = new Float64Array(n);
    const y = new Float64Array(n);
    const w = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      x[i] = rng.normal();
      y[i] = 2 * rng.normal();
      w[i] = Math.exp((-3 * y[i] * y[i]) / 8);
    }
    const qx = weightedQuantiles(x, undefined, [0.16, 0.5, 0.84]);
    const qy = weightedQuantiles(y, w, [0.16, 0.5, 0.84]);
    for (const [q, what] of [
      [qx, "unweighted"],
      [qy, "weighted"],
    ] as const) {
      expectAbs(q[0], -Z84, 0.025, `${what} q16`);
      expectAbs(q[1], 0, 0.025, `${what} q50`);
      expectAbs(q[2], Z84, 0.025, `${what} q84`);
    }
    expect(effectiveSampleSize(w) / n).toBeGreaterThan(0.5);
  });

  it("rejects negative weights with a clear message", () => {
    expect(() => weightedQuantiles(new Float64Array([1, 2]), new Float64Array([1, -1]), [0.5])).toThrow(InputError);
    expect(() => weightedQuantiles(new Float64Array([1, 2]), new Float64Array([1, -1]), [0.5])).toThrow(/weight\[1\] = -1; weights must be finite and ≥ 0/);
  });
});

describe("weightedMean / weightedCovariance", () => {
  it("with equal weights equal the textbook sample mean and (n − 1) covariance", () => {
    // Brute-force reference: the direct formulas on a small hand-written sample.
    const s = new Float64Array([1, 2, 3, 5, 4, 4, 0, 7]); // 4 samples × 2
    const mean = weightedMean(s, 2);
    expectAbs(mean[0], 2, 1e-15, "mean x");
    expectAbs(mean[1], 4.5, 1e-15, "mean y");
    // x: 1 3 4 0 (dev −1 1 2 −2); y: 2 5 4 7 (dev −2.5 .5 −.5 2.5)
    const cov = weightedCovariance(s, 2);
    expectAbs(cov[0], 10 / 3, 1e-14, "var x");
    expectAbs(cov[3], 13 / 3, 1e-14, "var y");
    expectAbs(cov[1], (2.5 + 0.5 - 1 - 5) / 3, 1e-14, "cov xy");
    expect(cov[1]).toBe(cov[2]);
    // a constant weight (any scale) changes nothing
    const c3 = weightedCovariance(s, 2, new Float64Array([3, 3, 3, 3]));
    for (let i = 0; i < 4; i++) expectRel(c3[i], cov[i], 1e-14, `cov[${i}] with weights 3`);
  });

  it("zero weights remove samples exactly", () => {
    // Analytic: a zero-weight sample contributes nothing to mean, covariance (V1, V2) or quantiles.
    const s = new Float64Array([1, 2, 3, 100, 5]);
    const w = new Float64Array([1, 1, 1, 0, 1]);
    const ref = new Float64Array([1, 2, 3, 5]);
    expectAbs(weightedMean(s, 1, w)[0], weightedMean(ref, 1)[0], 1e-15, "mean");
    expectAbs(weightedCovariance(s, 1, w)[0], weightedCovariance(ref, 1)[0], 1e-14, "variance");
    expect(weightedQuantiles(s, w, [0.5])[0]).toBe(weightedQuantiles(ref, undefined, [0.5])[0]);
  });
});

describe("weightsFromLog / summarise", () => {
  it("normalise huge log-weights without overflow and summarise per parameter", () => {
    // exp(1000) overflows; the max-shift keeps ratios exact: weights ∝ (1, e⁻¹, e⁻²) (analytic).
    const w = weightsFromLog(new Float64Array([1000, 999, 998]));
    const z = 1 + Math.exp(-1) + Math.exp(-2);
    expectRel(w[0], 1 / z, 1e-14, "w0");
    expectRel(w[2], Math.exp(-2) / z, 1e-14, "w2");
    const sum = summarise(new Float64Array([0, 10, 1, 20, 2, 30]), 2);
    expectAbs(sum[0].mean, 1, 1e-15, "mean of parameter 0");
    expectAbs(sum[1].q50, 20, 1e-15, "median of parameter 1");
    expectAbs(sum[1].sigma, 10, 1e-14, "sd of parameter 1");
  });
});
