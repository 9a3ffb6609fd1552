import { describe, expect, it } from "vitest";
import { esKernelForWidth } from "../../src/fourier/kernel.js";
import { fitEsKernelPoly, makeKernelEvaluator } from "../../src/fourier/kernelPoly.js";
import { makeInterpolateFused } from "../../src/fourier/interpGen.js";
import { fillKernelBlock, interpolate } from "../../src/fourier/spreadInterp.js";
import { Rng } from "../../src/random.js";

describe("makeInterpolateFused (generated scalar type-2 loop)", () => {
  it("equals spreadInterp.interpolate with the Horner weights to the last bit, wrapped patches included", () => {
    // Reference: the plain loop over a kernel table (spreadInterp.ts). Same operations in the
    // same order (interpGen.ts module comment), so the comparison is exact.
    const nfx = 32;
    const nfy = 16;
    const m = 2000;
    const width = 9;
    const { beta } = esKernelForWidth(width);
    const kernel = fitEsKernelPoly(width, beta);
    const rng = new Rng(61);
    const grid = Float64Array.from({ length: 2 * nfx * nfy }, () => rng.normal());
    const cell = Int32Array.from({ length: m }, () => Math.floor(rng.uniform() * nfx * nfy));
    const fracX = Float64Array.from({ length: m }, () => rng.uniform());
    const fracY = Float64Array.from({ length: m }, () => rng.uniform());
    const perm = Uint32Array.from({ length: m }, (_, k) => (k * 7919) % m);
    const re = new Float64Array(m);
    const im = new Float64Array(m);
    makeInterpolateFused(kernel)(grid, nfx, nfy, cell, perm, fracX, fracY, 0, m, re, im, true);
    const tab = new Float64Array(m * 2 * width);
    fillKernelBlock(makeKernelEvaluator(kernel), width, fracX, fracY, 0, 0, m, tab);
    const re0 = new Float64Array(m);
    const im0 = new Float64Array(m);
    interpolate(grid, nfx, nfy, width, cell, perm, tab, 0, 0, m, re0, im0, true);
    expect(Array.from(re)).toEqual(Array.from(re0));
    expect(Array.from(im)).toEqual(Array.from(im0));
  });
});
