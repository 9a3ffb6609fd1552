import { describe, expect, it } from "vitest";
import { AutocorrPlan, checkConvergence, integratedTime, integratedTime1d } from "../../src/fit/autocorr.js";
import { Rng } from "../../src/random.js";
import { expectAbs } from "../helpers.js";

/** AR(1) series x_t = ρ x_{t−1} + ε_t started in its stationary distribution. */
function ar1(rho: number, n: number, rng: Rng): Float64Array {
  const x = new Float64Array(n);
  x[0] = rng.normal() / Math.sqrt(1 - rho * rho);
  for (let t = 1; t < n; t++) x[t] = rho * x[t - 1] + rng.normal();
  return x;
}

describe("integratedTime1d on AR(1) series", () => {
  it("ρ = 0.9, n = 2·10⁵: |τ̂ − 19| < 2", () => {
    // τ = (1 + ρ)/(1 − ρ) = 19 exactly (analytic); REFERENCES.md §10: with c = 5 and n = 2·10⁵ the
    // estimate has sd 0.61 over seeds, so 2 is about 3 sd.
    const r = integratedTime1d(ar1(0.9, 200_000, new Rng(90)));
    expectAbs(r.tau, 19, 2, "τ(ρ = 0.9)");
    expect(r.reliable).toBe(true); // 2·10⁵ > 50·19
    // the window obeys its definition M ≥ 5 τ̂(M) (Sokal 1997), and is the smallest such M, so
    // it cannot exceed 5τ̂ by much more than one lag's change
    expect(r.window).toBeGreaterThanOrEqual(5 * r.tau);
    expect(r.window).toBeLessThan(5 * r.tau + 10);
  });

  it("ρ = 0.5: τ̂ ≈ 3", () => {
    // τ = 3 (analytic); REFERENCES.md §10 measured 2.995. Sokal's variance 2(2M + 1)τ²/n with
    // M ≈ 15 gives sd ≈ 0.05 at n = 2·10⁵; tolerance 0.25 (5 sd).
    const r = integratedTime1d(ar1(0.5, 200_000, new Rng(50)));
    expectAbs(r.tau, 3, 0.25, "τ(ρ = 0.5)");
  });

  it("white noise: τ̂ ≈ 1", () => {
    // ρ(t) = 0 for t ≥ 1, τ = 1 (analytic); sd ≈ sqrt(2·11/10⁴) = 0.047; tolerance 0.2 (4 sd).
    const rng = new Rng(1);
    const x = new Float64Array(10_000);
    for (let t = 0; t < x.length; t++) x[t] = rng.normal();
    expectAbs(integratedTime1d(x).tau, 1, 0.2, "τ(white noise)");
  });
});

describe("integratedTime on an ensemble chain (steps × walkers × dim)", () => {
  it("averages the autocorrelation over walkers and keeps parameters apart", () => {
    // 20 walkers × 10⁴ steps of independent AR(1) series: parameter 0 with ρ = 0.9 (τ = 19),
    // parameter 1 with ρ = 0.5 (τ = 3), analytic. Total length 2·10⁵ as above, so the same
    // tolerances (2 and 0.25); a short per-walker mean adds a bias of order −2Mτ/n ≈ −0.4.
    const nSteps = 10_000;
    const nWalkers = 20;
    const chain = new Float64Array(nSteps * nWalkers * 2);
    const rng = new Rng(77);
    for (let w = 0; w < nWalkers; w++) {
      const a = ar1(0.9, nSteps, rng);
      const b = ar1(0.5, nSteps, rng);
      for (let t = 0; t < nSteps; t++) {
        chain[(t * nWalkers + w) * 2] = a[t];
        chain[(t * nWalkers + w) * 2 + 1] = b[t];
      }
    }
    const r = integratedTime(chain, nSteps, nWalkers, 2);
    expectAbs(r.tau[0], 19, 2, "τ[0]");
    expectAbs(r.tau[1], 3, 0.25, "τ[1]");
  });

  it("flags a chain shorter than 50 τ as unreliable", () => {
    // AR(1) with ρ = 0.99 (τ = 199, analytic) over 2000 steps: 2000 < 50·199, and any estimate
    // ≥ 40 also fails 2000 > 50 τ̂; REFERENCES.md §10 warns this regime is biased low.
    const r = integratedTime1d(ar1(0.99, 2000, new Rng(9)));
    expect(r.tau).toBeGreaterThan(40);
    expect(r.reliable).toBe(false);
  });
});

describe("AutocorrPlan.accumulate", () => {
  it("equals the brute-force normalised autocorrelation Σ (x_t − x̄)(x_{t+k} − x̄)/Σ (x_t − x̄)²", () => {
    // Direct O(n²) sum as the reference; both are exact up to rounding, tolerance 1e-12.
    const rng = new Rng(4);
    const n = 37; // not a power of two, to exercise the padding
    const x = new Float64Array(n);
    for (let t = 0; t < n; t++) x[t] = Math.sin(0.3 * t) + rng.normal();
    const acc = new Float64Array(n);
    new AutocorrPlan(n).accumulate(x, 0, 1, acc);
    let mean = 0;
    for (const v of x) mean += v / n;
    let c0 = 0;
    for (let t = 0; t < n; t++) c0 += (x[t] - mean) ** 2;
    for (let k = 0; k < n; k++) {
      let ck = 0;
      for (let t = 0; t + k < n; t++) ck += (x[t] - mean) * (x[t + k] - mean);
      expectAbs(acc[k], ck / c0, 1e-12, `ρ(${k})`);
    }
  });
});

describe("AutocorrPlan.accumulatePair", () => {
  it("gives both series' autocorrelations, equal to two separate accumulate calls", () => {
    // Reference: the single-series path (itself checked against the direct sum above);
    // the packing is exact algebra, so agreement to rounding, tolerance 1e-12.
    const rng = new Rng(8);
    const n = 50;
    const x = new Float64Array(2 * n); // two interleaved series, stride 2
    for (let t = 0; t < n; t++) {
      x[2 * t] = Math.cos(0.2 * t) + rng.normal();
      x[2 * t + 1] = 3 + 0.1 * t + rng.normal();
    }
    const plan = new AutocorrPlan(n);
    const pair = new Float64Array(n);
    expect(plan.accumulatePair(x, 0, 1, 2, pair)).toBe(2);
    const single = new Float64Array(n);
    plan.accumulate(x, 0, 2, single);
    plan.accumulate(x, 1, 2, single);
    for (let t = 0; t < n; t++) expectAbs(pair[t], single[t], 1e-12, `ρa + ρb at lag ${t}`);
  });
});

describe("checkConvergence", () => {
  it("needs length > 50 τ and a stable τ", () => {
    // Criteria of REFERENCES.md §10 (trust τ only for chains longer than 50 τ); the 1% stability
    // rule is common practice, no source.
    const tau = new Float64Array([20, 30]);
    expect(checkConvergence(1400, tau, new Float64Array([20, 30])).converged).toBe(false); // 1400 < 50·30
    expect(checkConvergence(1400, tau, new Float64Array([20, 30])).reason).toMatch(/not longer than 50·τ = 1500/);
    expect(checkConvergence(2000, tau).converged).toBe(false); // no earlier estimate
    expect(checkConvergence(2000, tau, new Float64Array([20, 28])).converged).toBe(false); // 6.7% change
    expect(checkConvergence(2000, tau, new Float64Array([20.1, 30.1])).converged).toBe(true);
  });
});
