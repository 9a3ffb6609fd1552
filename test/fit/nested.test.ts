import { describe, expect, it } from "vitest";
import { NestedSampler, logUnitBallVolume, type LogLikeBatch, type PriorTransform } from "../../src/fit/nested.js";
import { weightedCovariance, weightedMean, weightsFromLog } from "../../src/fit/stats.js";
import { Rng } from "../../src/random.js";
import { expectAbs } from "../helpers.js";

/** Uniform prior on [−half, half]^d. */
function boxPrior(half: number): PriorTransform {
  return (u, th) => {
    for (let i = 0; i < u.length; i++) th[i] = -half + 2 * half * u[i];
  };
}

/**
 * Normalised Gaussian likelihood N(θ; μ, Σ) (∫L dθ = 1), Σ given by its Cholesky factor rows.
 * With a uniform prior of volume V that contains the likelihood, Z = ∫L π dθ = 1/V (analytic),
 * up to the mass outside the box (< 1e-20 here: the box edge is ≥ 9 σ away).
 */
function gaussianLike(mu: number[], cov: number[][]): LogLikeBatch {
  const d = mu.length;
  // Cholesky of Σ, then log L = −½|L⁻¹(θ − μ)|² − ½ log|2πΣ|
  const L: number[][] = cov.map(() => new Array(d).fill(0));
  for (let i = 0; i < d; i++) {
    for (let j = 0; j <= i; j++) {
      let s = cov[i][j];
      for (let k = 0; k < j; k++) s -= L[i][k] * L[j][k];
      L[i][j] = i === j ? Math.sqrt(s) : s / L[j][j];
    }
  }
  let logDet = 0;
  for (let i = 0; i < d; i++) logDet += 2 * Math.log(L[i][i]);
  const norm = -0.5 * (d * Math.log(2 * Math.PI) + logDet);
  const y = new Float64Array(d);
  return (pts, out) => {
    for (let k = 0; k < pts.length; k++) {
      let q = 0;
      for (let i = 0; i < d; i++) {
        let v = pts[k][i] - mu[i];
        for (let j = 0; j < i; j++) v -= L[i][j] * y[j];
        y[i] = v / L[i][i];
        q += y[i] * y[i];
      }
      out[k] = norm - 0.5 * q;
    }
  };
}

const COV2 = [
  [1, 0.6],
  [0.6, 0.8],
];
const MU2 = [1.5, -2];

describe("NestedSampler: Gaussian likelihood in a wide uniform box", () => {
  it("d = 2: log Z = −log(20²) within 3σ, posterior mean and covariance recovered", async () => {
    // Analytic log Z = −log V = −log 400 (see gaussianLike). 3× the reported error is the
    // criterion of the task (Skilling 2006: the error sqrt(H/n) is a 1σ estimate).
    const ns = new NestedSampler({ dim: 2, nLive: 400 }, boxPrior(10), gaussianLike(MU2, COV2), new Rng(21));
    const status = await ns.run();
    expect(status.converged).toBe(true);
    const r = ns.result();
    const truth = -Math.log(400);
    expect(Math.abs(r.logZ - truth), `log Z = ${r.logZ} ± ${r.logZError}, truth ${truth}`).toBeLessThan(3 * r.logZError);
    // H = −log Z − (d/2)(1 + log 2π) − ½ log|Σ| for a Gaussian well inside the box (analytic):
    // 5.9915 − 2.8379 + 0.3466 = 3.50; the estimate scatters by ~ its own error, tolerance 0.3.
    expectAbs(r.information, 3.5, 0.3, "information H");
    const w = weightsFromLog(r.logWeights);
    const mean = weightedMean(r.samples, 2, w);
    const cov = weightedCovariance(r.samples, 2, w);
    // Posterior = the Gaussian itself. Weighted samples have an effective size of ~ n_live·H
    // (≈ 1000 here), so the mean error is ~ σ/√1000 ≈ 0.03 and the covariance error ~ 0.05;
    // tolerances 0.1 and 0.15 are about 3σ.
    for (let i = 0; i < 2; i++) {
      expectAbs(mean[i], MU2[i], 0.1, `mean[${i}]`);
      for (let j = 0; j < 2; j++) expectAbs(cov[i * 2 + j], COV2[i][j], 0.15, `cov[${i}][${j}]`);
    }
  });

  it("d = 5: log Z = −log(20⁵) within 3σ", async () => {
    // Analytic log Z = −5 log 20 = −14.979 (box [−10, 10]⁵, Gaussian ≥ 9σ from every face).
    const mu = [0.5, -1, 2, 0, 1];
    const cov = [
      [1.0, 0.3, 0.0, 0.1, 0.0],
      [0.3, 0.5, 0.1, 0.0, 0.0],
      [0.0, 0.1, 0.8, -0.2, 0.0],
      [0.1, 0.0, -0.2, 0.6, 0.2],
      [0.0, 0.0, 0.0, 0.2, 0.4],
    ];
    const ns = new NestedSampler({ dim: 5, nLive: 300 }, boxPrior(10), gaussianLike(mu, cov), new Rng(55));
    await ns.run();
    const r = ns.result();
    const truth = -5 * Math.log(20);
    expect(Math.abs(r.logZ - truth), `log Z = ${r.logZ} ± ${r.logZError}, truth ${truth}`).toBeLessThan(3 * r.logZError);
    const w = weightsFromLog(r.logWeights);
    const mean = weightedMean(r.samples, 5, w);
    // same reasoning as for d = 2 (ESS ~ n_live·H ≈ 2000)
    for (let i = 0; i < 5; i++) expectAbs(mean[i], mu[i], 0.1, `mean[${i}]`);
  });

  it("bimodal: two equal Gaussians recover log Z and an even split between the modes", async () => {
    // L = ½N(μ₁, σ²I) + ½N(μ₂, σ²I), so ∫L = 1 and log Z = −log 400 (analytic). A single
    // ellipsoid over both modes is inefficient, so this exercises the slice-sampling fallback.
    // Each mode holds posterior mass ½; the live-point split drifts like an urn process with
    // sd ≈ 0.5/√n_live = 0.025, tolerance 0.1 (4 sd).
    const sigma = 0.4;
    const like: LogLikeBatch = (pts, out) => {
      for (let k = 0; k < pts.length; k++) {
        const [x, y] = pts[k];
        const a = -((x - 4) ** 2 + (y - 1) ** 2) / (2 * sigma * sigma);
        const b = -((x + 4) ** 2 + (y + 2) ** 2) / (2 * sigma * sigma);
        const m = Math.max(a, b);
        out[k] = m + Math.log(0.5 * Math.exp(a - m) + 0.5 * Math.exp(b - m)) - Math.log(2 * Math.PI * sigma * sigma);
      }
    };
    let sliced = false;
    const ns = new NestedSampler({ dim: 2, nLive: 400, onProgress: (p) => (sliced ||= p.mode === "slice") }, boxPrior(10), like, new Rng(8));
    await ns.run();
    const r = ns.result();
    expect(sliced).toBe(true);
    expect(Math.abs(r.logZ + Math.log(400)), `log Z = ${r.logZ} ± ${r.logZError}`).toBeLessThan(3 * r.logZError);
    const w = weightsFromLog(r.logWeights);
    let right = 0;
    for (let k = 0; k < w.length; k++) if (r.samples[2 * k] > 0) right += w[k];
    expectAbs(right, 0.5, 0.1, "posterior mass of the x > 0 mode");
  });

  it("slice sampling alone (rejection disabled) also recovers log Z", async () => {
    // minEfficiency = 1 makes every rejection round fail the efficiency test, so nearly all
    // replacements come from the slice sampler; same analytic target as the d = 2 case.
    const ns = new NestedSampler({ dim: 2, nLive: 200, minEfficiency: 1 }, boxPrior(10), gaussianLike(MU2, COV2), new Rng(4));
    await ns.run();
    const r = ns.result();
    expect(Math.abs(r.logZ + Math.log(400)), `log Z = ${r.logZ} ± ${r.logZError}`).toBeLessThan(3 * r.logZError);
  });

  it("resumes exactly from a JSON checkpoint", async () => {
    // Bit-identical continuation is the checkpoint contract (no tolerance). minEfficiency 0.6
    // makes the run switch between rejection and slicing, so both code paths are resumed.
    const modes = new Set<string>();
    const make = (seed: number): NestedSampler =>
      new NestedSampler(
        { dim: 2, nLive: 60, minEfficiency: 0.6, batchSize: 3, onProgress: (p) => modes.add(p.mode) },
        boxPrior(10),
        gaussianLike(MU2, COV2),
        new Rng(seed),
      );
    const full = make(31);
    await full.run();
    expect(modes.has("slice") && modes.has("ellipsoid")).toBe(true);
    const a = make(31);
    const st = await a.run({ maxIterations: 137 });
    expect(st.converged).toBe(false);
    const b = make(12345);
    b.setState(JSON.parse(JSON.stringify(a.getState())));
    await b.run();
    const rf = full.result();
    const rb = b.result();
    expect(rb.nIterations).toBe(rf.nIterations);
    expect(rb.nEvaluations).toBe(rf.nEvaluations);
    expect(rb.logZ).toBe(rf.logZ);
    expect(Array.from(rb.samples)).toEqual(Array.from(rf.samples));
    expect(Array.from(rb.logWeights)).toEqual(Array.from(rf.logWeights));
  });
});

describe("logUnitBallVolume", () => {
  it("matches the unit-ball volumes 2, π, 4π/3, π²/2, 8π²/15", () => {
    // Analytic V_d = π^{d/2}/Γ(d/2 + 1); rounding only, tolerance 1e-13.
    const v = [2, Math.PI, (4 * Math.PI) / 3, Math.PI ** 2 / 2, (8 * Math.PI ** 2) / 15];
    for (let d = 1; d <= 5; d++) expectAbs(logUnitBallVolume(d), Math.log(v[d - 1]), 1e-13, `d = ${d}`);
  });
});
