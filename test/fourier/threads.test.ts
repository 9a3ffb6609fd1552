import { describe, expect, it } from "vitest";
import { NufftPlan } from "../../src/fourier/nufft.js";
import { Rng } from "../../src/random.js";
import { relL2 } from "../helpers.js";

// Needs dist/ (workers load compiled JavaScript; `npm test` builds first).
describe("NufftPlan with worker threads", () => {
  it("gives the same type 2 and type 1 results with 1 and 2 threads", () => {
    // Each point's interpolation is the same arithmetic on any thread; spreading sums the
    // workers' private grids in a fixed order, so only the order of additions differs:
    // agreement to round-off → rtol 1e-12 (brute-force comparison, common practice).
    const rng = new Rng(21);
    const n = 64;
    const cell = 1e-7;
    const m = 60_000; // enough points to wake the second thread
    const u = Float64Array.from({ length: m }, () => (rng.uniform() - 0.5) / cell);
    const v = Float64Array.from({ length: m }, () => (rng.uniform() - 0.5) / cell);
    const img = Float64Array.from({ length: n * n }, () => rng.normal());
    const cRe = Float64Array.from({ length: m }, () => rng.normal());
    const cIm = Float64Array.from({ length: m }, () => rng.normal());
    const results = [1, 2].map((threads) => {
      const plan = new NufftPlan({ nx: n, cellRad: cell, tolerance: 1e-9, threads });
      plan.setPoints(u, v);
      const re = new Float64Array(m);
      const im = new Float64Array(m);
      plan.execute(img, re, im);
      const a = new Float64Array(n * n);
      plan.executeAdjoint(cRe, cIm, a);
      // A second round checks that the workers' grids are reset between calls.
      const a2 = new Float64Array(n * n);
      plan.executeAdjoint(cRe, cIm, a2);
      plan.dispose();
      return { re, im, a, a2 };
    });
    const [one, two] = results;
    expect(relL2(two.re, one.re)).toBeLessThan(1e-12);
    expect(relL2(two.im, one.im)).toBeLessThan(1e-12);
    expect(relL2(two.a, one.a)).toBeLessThan(1e-12);
    expect(relL2(two.a2, one.a)).toBeLessThan(1e-12);
    expect(Math.max(...one.re.map(Math.abs))).toBeGreaterThan(0);
  });
});
