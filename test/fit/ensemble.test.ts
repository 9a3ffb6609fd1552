import { describe, expect, it } from "vitest";
import { EnsembleSampler, drawStretch, type LogProbBatch } from "../../src/fit/ensemble.js";
import { integratedTime } from "../../src/fit/autocorr.js";
import { weightedCovariance, weightedMean } from "../../src/fit/stats.js";
import { InputError } from "../../src/errors.js";
import { Rng } from "../../src/random.js";
import { expectAbs } from "../helpers.js";

// Target of REFERENCES.md §10: mean (1, −2, 0.5), covariance Σ below.
const MU = [1, -2, 0.5];
const SIGMA = [
  [1, 0.5, 0.2],
  [0.5, 2, -0.3],
  [0.2, -0.3, 0.5],
];

/** Inverse of a 3 × 3 matrix by cofactors (exact enough for a test target). */
function inv3(m: number[][]): number[][] {
  const [a, b, c] = m[0];
  const [d, e, f] = m[1];
  const [g, h, i] = m[2];
  const A = e * i - f * h;
  const B = -(d * i - f * g);
  const C = d * h - e * g;
  const det = a * A + b * B + c * C;
  return [
    [A / det, -(b * i - c * h) / det, (b * f - c * e) / det],
    [B / det, (a * i - c * g) / det, -(a * f - c * d) / det],
    [C / det, -(a * h - b * g) / det, (a * e - b * d) / det],
  ];
}
const PREC = inv3(SIGMA);

const gaussianBatch: LogProbBatch = (pts, out) => {
  for (let k = 0; k < pts.length; k++) {
    const x = pts[k];
    let q = 0;
    for (let i = 0; i < 3; i++) for (let j = 0; j < 3; j++) q += (x[i] - MU[i]) * PREC[i][j] * (x[j] - MU[j]);
    out[k] = -0.5 * q;
  }
};

describe("drawStretch(rng, a = 2)", () => {
  it("has mean (a² + a + 1)/(3a) = 7/6 and range [1/a, a]", () => {
    // E[z] for g(z) ∝ 1/√z on [1/a, a] (Goodman & Weare 2010; REFERENCES.md §10): analytic 7/6.
    // Var z = E[z²] − E[z]² = 1.55 − 1.36111 = 0.18889 (analytic: E[z²] = (2/5)(a^{5/2} − a^{−5/2})/(2(√a − 1/√a))),
    // so the MC error of 10⁶ draws is 4.35e-4; tolerance 5σ = 2.2e-3.
    const rng = new Rng(12345);
    const n = 1_000_000;
    let s = 0;
    let lo = Infinity;
    let hi = -Infinity;
    for (let k = 0; k < n; k++) {
      const z = drawStretch(rng, 2);
      s += z;
      lo = Math.min(lo, z);
      hi = Math.max(hi, z);
    }
    expectAbs(s / n, 7 / 6, 5 * Math.sqrt(0.18889 / n), "E[z]");
    expect(lo).toBeGreaterThanOrEqual(0.5);
    expect(hi).toBeLessThanOrEqual(2);
    // the ends are reached (REFERENCES.md §10 measured range [0.500001, 1.999999])
    expect(lo).toBeLessThan(0.501);
    expect(hi).toBeGreaterThan(1.999);
  });
});

describe("EnsembleSampler on the REFERENCES.md §10 Gaussian", () => {
  it("gives acceptance 0.55–0.75, τ 20–60, mean within 0.1 and covariance within 0.2 (32 walkers × 5000 steps)", async () => {
    // All four assertions and their bounds are the ones REFERENCES.md §10 suggests for this target
    // (emcee 3.1.4 measured acceptance 0.646–0.648, τ 33–40, mean error ≤ 0.048, cov error ≤ 0.042).
    const rng = new Rng(2024);
    const s = new EnsembleSampler({ nWalkers: 32, dim: 3 }, gaussianBatch, rng);
    await s.initialiseBall(Float64Array.from(MU), new Float64Array([0.1, 0.1, 0.1]));
    const steps = 5000;
    const burn = 200;
    expect(await s.step(steps)).toBe(steps);
    const acc = s.meanAcceptance();
    expect(acc, `acceptance ${acc}`).toBeGreaterThan(0.55);
    expect(acc, `acceptance ${acc}`).toBeLessThan(0.75);
    const ac = integratedTime(s.chain, s.nStoredSteps, 32, 3, { discard: burn });
    for (let p = 0; p < 3; p++) {
      expect(ac.tau[p], `τ[${p}] = ${ac.tau[p]}`).toBeGreaterThan(20);
      expect(ac.tau[p], `τ[${p}] = ${ac.tau[p]}`).toBeLessThan(60);
    }
    const flat = s.flatSamples(burn);
    const mean = weightedMean(flat, 3);
    const cov = weightedCovariance(flat, 3);
    for (let i = 0; i < 3; i++) {
      expectAbs(mean[i], MU[i], 0.1, `mean[${i}]`);
      for (let j = 0; j < 3; j++) expectAbs(cov[i * 3 + j], SIGMA[i][j], 0.2, `cov[${i}][${j}]`);
    }
    // per-walker acceptance is reported for every walker and averages to the mean
    const perWalker = s.acceptanceFraction();
    expect(perWalker.length).toBe(32);
    expectAbs(perWalker.reduce((a, b) => a + b, 0) / 32, acc, 1e-12, "mean of per-walker acceptance");
  });

  it("resumes exactly: N steps, JSON state, M more equals N + M in one go", async () => {
    // Exact reproducibility is the contract of a checkpoint (no tolerance: bit-identical chains).
    const full = new EnsembleSampler({ nWalkers: 8, dim: 3 }, gaussianBatch, new Rng(7));
    await full.initialiseBall(new Float64Array([0, 0, 0]), new Float64Array([1, 1, 1]));
    await full.step(50);

    const first = new EnsembleSampler({ nWalkers: 8, dim: 3 }, gaussianBatch, new Rng(7));
    await first.initialiseBall(new Float64Array([0, 0, 0]), new Float64Array([1, 1, 1]));
    await first.step(30);
    const saved = JSON.parse(JSON.stringify(first.getState()));
    const resumed = new EnsembleSampler({ nWalkers: 8, dim: 3 }, gaussianBatch, new Rng(999));
    resumed.setState(saved);
    await resumed.step(20);
    expect(resumed.nSteps).toBe(50);
    expect(Array.from(resumed.chain)).toEqual(Array.from(full.chain));
    expect(Array.from(resumed.logProbChain)).toEqual(Array.from(full.logProbChain));
    expect(Array.from(resumed.acceptanceFraction())).toEqual(Array.from(full.acceptanceFraction()));

    // a light state (chain saved elsewhere) continues identically and holds only the new steps
    const light = new EnsembleSampler({ nWalkers: 8, dim: 3 }, gaussianBatch, new Rng(1));
    light.setState(JSON.parse(JSON.stringify(first.getState(false))));
    await light.step(20);
    expect(light.firstStoredStep).toBe(30);
    expect(Array.from(light.chain)).toEqual(Array.from(full.chain.subarray(30 * 8 * 3)));
  });

  it("gives the same chain with an async, out-of-order batch evaluator", async () => {
    // The random stream is drawn before each batch, so how the batch is evaluated cannot matter.
    const asyncBatch: LogProbBatch = async (pts, out) => {
      const tmp = new Float64Array(pts.length);
      gaussianBatch(pts, tmp);
      for (let k = pts.length - 1; k >= 0; k--) {
        await Promise.resolve();
        out[k] = tmp[k];
      }
    };
    const a = new EnsembleSampler({ nWalkers: 10, dim: 3 }, gaussianBatch, new Rng(3));
    const b = new EnsembleSampler({ nWalkers: 10, dim: 3 }, asyncBatch, new Rng(3));
    for (const s of [a, b]) {
      await s.initialiseBall(new Float64Array([1, 1, 1]), new Float64Array([0.5, 0.5, 0.5]));
      await s.step(25);
    }
    expect(Array.from(b.chain)).toEqual(Array.from(a.chain));
  });

  it("initialiseBall redraws walkers with −∞ log-probability; the chain never leaves the support", async () => {
    // Support x0 > 0 (analytic half-space); the ball is centred on its edge, so about half the
    // first draws are rejected and must be redrawn.
    const halfSpace: LogProbBatch = (pts, out) => {
      for (let k = 0; k < pts.length; k++) out[k] = pts[k][0] > 0 ? -0.5 * (pts[k][0] ** 2 + pts[k][1] ** 2) : -Infinity;
    };
    const s = new EnsembleSampler({ nWalkers: 16, dim: 2 }, halfSpace, new Rng(5));
    await s.initialiseBall(new Float64Array([0, 0]), new Float64Array([1, 1]));
    expect(s.nEvaluations).toBeGreaterThan(16);
    await s.step(200);
    const c = s.chain;
    for (let i = 0; i < c.length; i += 2) expect(c[i]).toBeGreaterThan(0);
  });

  it("stops after a budget and reports progress", async () => {
    let calls = 0;
    const s = new EnsembleSampler({ nWalkers: 8, dim: 3, onProgress: () => calls++ }, gaussianBatch, new Rng(11));
    await s.initialiseBall(new Float64Array([0, 0, 0]), new Float64Array([1, 1, 1]));
    // each step costs nWalkers = 8 evaluations: 100 evaluations allow 12 whole steps
    expect(await s.step(1000, { maxEvaluations: 100 })).toBe(12);
    expect(calls).toBe(12);
    let n = 0;
    expect(await s.step(1000, { shouldStop: () => n++ >= 3 })).toBe(3);
  });

  it("rejects an odd number of walkers with a clear message", () => {
    expect(() => new EnsembleSampler({ nWalkers: 7, dim: 3 }, gaussianBatch, new Rng(1))).toThrow(InputError);
    expect(() => new EnsembleSampler({ nWalkers: 7, dim: 3 }, gaussianBatch, new Rng(1))).toThrow(/nWalkers = 7; must be even and ≥ 2·dim = 6/);
  });
});
