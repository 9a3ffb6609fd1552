import { describe, expect, it } from "vitest";
import { pointFractions, pointFractionsByOriginal, sortPointsByBin } from "../../src/fourier/spreadInterp.js";
import { Rng } from "../../src/random.js";

describe("pointFractionsByOriginal", () => {
  it("gives exactly the start cells and fractions of pointFractions, and fractions in [0, 1)", () => {
    // Reference: pointFractions in sorted order (the same expressions evaluated per point, so
    // the comparison is exact), and the definition s = ⌈X − w/2⌉ − (X − w/2) ∈ [0, 1) (analytic).
    const m = 5000;
    const nf = 64;
    const width = 7;
    const cellRad = 1e-7;
    const rng = new Rng(90);
    // Up to 3× beyond the grid's Nyquist range, so start cells wrap.
    const u = Float64Array.from({ length: m }, () => (rng.uniform() - 0.5) * 3 / cellRad);
    const v = Float64Array.from({ length: m }, () => (rng.uniform() - 0.5) * 3 / cellRad);
    const scale = cellRad * nf;
    const perm = new Uint32Array(m);
    const cellA = new Int32Array(m);
    sortPointsByBin(u, v, scale, scale, nf, nf, width, perm, cellA);
    const inv = new Uint32Array(m);
    for (let k = 0; k < m; k++) inv[perm[k]] = k;
    const cellB = new Int32Array(m);
    const fxA = new Float64Array(m);
    const fyA = new Float64Array(m);
    const fxB = new Float64Array(m);
    const fyB = new Float64Array(m);
    pointFractions(perm, u, v, scale, scale, nf, nf, width, 0, m, fxA, fyA, 0, cellA);
    pointFractionsByOriginal(inv, u, v, scale, scale, nf, nf, width, fxB, fyB, cellB);
    expect(Array.from(cellB)).toEqual(Array.from(cellA));
    expect(Array.from(fxB)).toEqual(Array.from(fxA));
    expect(Array.from(fyB)).toEqual(Array.from(fyA));
    for (let k = 0; k < m; k++) {
      expect(fxB[k] >= 0 && fxB[k] < 1 && fyB[k] >= 0 && fyB[k] < 1, `fractions of point ${k}: ${fxB[k]}, ${fyB[k]}`).toBe(true);
      expect(cellB[k] >= 0 && cellB[k] < nf * nf).toBe(true);
    }
  });
});
