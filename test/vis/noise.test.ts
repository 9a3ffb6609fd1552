/** estimateWeightScale / rescaleWeights on synthetic white noise of known σ (seeded). */
import { describe, expect, it } from "vitest";
import { expectRel } from "../helpers.js";
import { CHI2_1_MEDIAN, estimateWeightScale, rescaleWeights } from "../../src/vis/index.js";
import { allocate } from "../../src/vis/uvfits.js";
import { Rng } from "../../src/random.js";

/** A constant 1 Jy source plus white noise σ_true, with weights claiming σ_file. */
function noisy(seed: number, sigmaTrue: number, sigmaFile: number, nBl: number, nT: number) {
  const rng = new Rng(seed);
  const v = allocate(nBl * nT, new Float64Array([1e11]), 1e6, 2451544.5);
  let k = 0;
  for (let b = 0; b < nBl; b++) {
    for (let t = 0; t < nT; t++) {
      v.antenna1[k] = 1 + (b % 20);
      v.antenna2[k] = 21 + Math.floor(b / 20);
      v.timeS[k] = 6 * t;
      v.uLambda[k] = 1000 + b;
      v.vLambda[k] = 500 - b;
      v.reJy[k] = 1 + sigmaTrue * rng.normal();
      v.imJy[k] = sigmaTrue * rng.normal();
      // Weights that vary from entry to entry, all claiming σ_file·(0.5..1.5)
      const f = 0.5 + rng.uniform();
      v.weight[k] = 1 / (sigmaFile * f) ** 2;
      // ... and noise that honours that variation
      v.reJy[k] = 1 + (v.reJy[k] - 1) * f;
      v.imJy[k] *= f;
      v.correlation[k] = 1;
      k++;
    }
  }
  return v;
}

describe("estimateWeightScale", () => {
  it("median of χ²₁ is 0.454936 (analytic: 0.6744898², the normal quartile squared)", () => {
    expectRel(CHI2_1_MEDIAN, 0.4549364231, 1e-9, "median χ²₁");
  });

  it("recovers (σ_file/σ_true)² within 2 % on white noise (robust and mean estimators)", () => {
    // σ_true = 2·σ_file → the weights must be multiplied by 1/4. 200 baselines × 500 times:
    // 99800 pairs, 199600 z² values → robust estimator's standard error 2.33/sqrt(n) = 0.52 %,
    // mean estimator's sqrt(2/n)·… ≈ 0.4 %: 2 % is about 4 standard errors.
    const v = noisy(3, 0.02, 0.01, 200, 500);
    const est = estimateWeightScale(v);
    expect(est.pairs).toBe(200 * 499);
    expectRel(est.weightScale, 0.25, 0.02, "robust weight scale");
    expectRel(est.weightScaleMean, 0.25, 0.02, "mean weight scale");
    // rescaleWeights makes the weights honest: estimating again gives 1.
    const fixed = rescaleWeights(v, est.weightScale);
    expectRel(estimateWeightScale(fixed).weightScale, 1, 1e-12, "after rescaling");
    expect(fixed.reJy).toBe(v.reJy); // shares the data arrays
    expect(v.weight[0]).not.toBe(fixed.weight[0]);
  });

  it("is robust to 1 % of wild outliers where the mean estimator is not", () => {
    const v = noisy(4, 0.01, 0.01, 100, 400);
    const rng = new Rng(99);
    for (let i = 0; i < v.count / 100; i++) v.reJy[rng.int(v.count)] += 5; // 500σ glitches
    const est = estimateWeightScale(v);
    // Each outlier spoils ~2 of 2·39900 z² values: the median moves by O(1 %) → 5 % bound.
    expectRel(est.weightScale, 1, 0.05, "robust");
    expect(est.weightScaleMean).toBeLessThan(0.1);
  });

  it("skips pairs across a scan gap longer than 2.5× the integration time", () => {
    const v = noisy(5, 0.01, 0.01, 1, 10);
    for (let k = 5; k < 10; k++) v.timeS[k] += 600; // a 10-minute gap after 5 integrations of 6 s
    expect(estimateWeightScale(v).pairs).toBe(8);
  });

  it("rejects a non-positive factor with an InputError", () => {
    const v = noisy(6, 0.01, 0.01, 1, 3);
    expect(() => rescaleWeights(v, 0)).toThrow(/weight scale 0: must be a finite number > 0/);
    expect(() => rescaleWeights(v, NaN)).toThrow(/weight scale NaN/);
  });
});
