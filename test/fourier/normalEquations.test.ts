import { describe, expect, it } from "vitest";
import { directForward } from "../../src/fourier/direct.js";
import { GriddedStats } from "../../src/fourier/gridded.js";
import { Rng } from "../../src/random.js";
import { expectRel } from "../helpers.js";

// The normal equations of a linear model Σ f_k J_k must reproduce, for any f, the χ² that the
// direct per-visibility sum gives (analytic: χ² is a quadratic form in f; DESIGN.md
// "Two exact ideas"). The direct transform (m = M/h) is the independent reference.
describe("GriddedStats.normalEquations", () => {
  it("gives χ²(f) = Σw|d|² − 2fᵀb + fᵀAf equal to the direct per-visibility χ² (1e-8 relative)", () => {
    const n = 16;
    const cellRad = 2e-7;
    const geom = { nx: n, ny: n, cellRad };
    const rng = new Rng(11);
    const m = 900;
    const u = new Float64Array(m);
    const v = new Float64Array(m);
    const re = new Float64Array(m);
    const im = new Float64Array(m);
    const w = new Float64Array(m);
    for (let k = 0; k < m; k++) {
      u[k] = (rng.uniform() - 0.5) * 0.9 / cellRad;
      v[k] = (rng.uniform() - 0.5) * 0.9 / cellRad;
      re[k] = rng.normal();
      im[k] = rng.normal();
      w[k] = 0.5 + rng.uniform();
    }
    const K = 3;
    const images: Float64Array[] = [];
    for (let a = 0; a < K; a++) {
      const img = new Float64Array(n * n);
      for (let p = 0; p < n * n; p++) img[p] = rng.uniform() < 0.3 ? rng.uniform() : 0;
      images.push(img);
    }
    const stats = new GriddedStats({ uLambda: u, vLambda: v, reJy: re, imJy: im, weight: w }, { n, cellRad });
    const A = new Float64Array(K * K);
    const b = new Float64Array(K);
    stats.normalEquations(images, 0, A, b);
    expect(A[1]).toBe(A[K]); // symmetric by construction

    const f = [0.7, -0.3, 1.9];
    const combined = new Float64Array(n * n);
    for (let a = 0; a < K; a++) for (let p = 0; p < n * n; p++) combined[p] += f[a] * images[a][p];
    const mr = new Float64Array(m);
    const mi = new Float64Array(m);
    directForward(geom, combined, u, v, mr, mi, true);
    let direct = 0;
    for (let k = 0; k < m; k++) direct += w[k] * ((re[k] - mr[k]) ** 2 + (im[k] - mi[k]) ** 2);

    let quad = stats.sumWeightedDataSq(0);
    for (let a = 0; a < K; a++) {
      quad -= 2 * f[a] * b[a];
      for (let c = 0; c < K; c++) quad += f[a] * f[c] * A[a * K + c];
    }
    expectRel(quad, direct, 1e-8, "χ² from normal equations");
    // The diagonal equals the single-image quadratic form.
    expectRel(A[K + 1], stats.quadratic(images[1], 0), 1e-12, "A_11 vs quadratic()");
  });
});
