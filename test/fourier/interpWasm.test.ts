import { describe, expect, it } from "vitest";
import { esKernel, esKernelForWidth } from "../../src/fourier/kernel.js";
import { fitEsKernelPoly, makeKernelEvaluator } from "../../src/fourier/kernelPoly.js";
import { pointLoopWasmRange } from "../../src/fourier/interpWasm.js";
import { PlanMemory, type WasmPointLayout } from "../../src/fourier/planMemory.js";
import { fillKernelBlock, interpolate, spread } from "../../src/fourier/spreadInterp.js";
import { Rng } from "../../src/random.js";

const NFX = 64;
const NFY = 32;
const M = 3000;

/**
 * A plan memory filled with a random fine grid and M random points (start cells anywhere, so
 * that some patches wrap across both grid edges) for one kernel width.
 */
function setup(width: number, seed: number) {
  const { beta } = esKernelForWidth(width);
  const kernel = fitEsKernelPoly(width, beta);
  const mem = new PlanMemory(NFX, NFY, false, kernel);
  mem.allocate(M, false, true);
  expect(mem.layout, "this engine should support WebAssembly SIMD (Node ≥ 16.4)").not.toBeNull();
  const rng = new Rng(seed);
  for (let i = 0; i < mem.grid.length; i++) mem.grid[i] = rng.normal();
  for (let k = 0; k < M; k++) {
    mem.cell[k] = Math.floor(rng.uniform() * NFX * NFY);
    mem.fracX[k] = rng.uniform();
    mem.fracY[k] = rng.uniform();
  }
  return { kernel, beta, mem, layout: mem.layout as WasmPointLayout };
}

/** Kernel weights of all points by the scalar evaluator (spreadInterp.ts layout). */
function scalarTable(width: number, mem: PlanMemory): Float64Array {
  const { beta } = esKernelForWidth(width);
  const tab = new Float64Array(M * 2 * width);
  fillKernelBlock(makeKernelEvaluator(fitEsKernelPoly(width, beta)), width, mem.fracX, mem.fracY, 0, 0, M, tab);
  return tab;
}

describe("SIMD point loops (interpWasm.ts)", () => {
  for (const width of [2, 7, 13]) {
    it(`interpolation at width ${width} equals the scalar loop to the last bit, wrapped patches included`, () => {
      // Reference: spreadInterp.interpolate with the scalar Horner weights. The SIMD code does
      // the same IEEE operations in the same order per lane (no fused multiply-add), so the
      // results must be identical (exact comparison).
      const { mem, layout } = setup(width, 30 + width);
      pointLoopWasmRange(mem.interpolate!, layout, layout.grid, NFX, NFY, 0, M);
      const re = new Float64Array(M);
      const im = new Float64Array(M);
      interpolate(mem.grid, NFX, NFY, width, mem.cell, new Uint32Array(M), scalarTable(width, mem), 0, 0, M, re, im, false);
      let wrapped = 0;
      for (let k = 0; k < M; k++) {
        if ((mem.cell[k] & (NFX - 1)) + width > NFX) wrapped++;
        expect(mem.sortedRe[k], `Re at point ${k}`).toBe(re[k]);
        expect(mem.sortedIm[k], `Im at point ${k}`).toBe(im[k]);
      }
      expect(wrapped, "some patches should wrap across the x edge").toBeGreaterThan(0);
    });
  }

  it("interpolation agrees with a brute-force sum using the exact ES kernel, within the fit error", () => {
    // Reference: Σ_dy Σ_dx φ(z_x) φ(z_y) g with φ(z) = exp(β(√(1−z²)−1)) (Barnett et al. 2019
    // eq. 1.8, REFERENCES.md §9), z_m = 1 − (s + m)/(w/2) (kernelPoly.ts). Each fitted weight is
    // within maxError of φ and every weight is ≤ 1, so the patch sum is off by at most
    // 2·w²·maxError·max|g| (analytic bound).
    const width = 7;
    const { kernel, beta, mem, layout } = setup(width, 5);
    pointLoopWasmRange(mem.interpolate!, layout, layout.grid, NFX, NFY, 0, M);
    let gMax = 0;
    for (const g of mem.grid) gMax = Math.max(gMax, Math.abs(g));
    const bound = 2 * width * width * kernel.maxError * gMax;
    let worst = 0;
    for (let k = 0; k < M; k++) {
      const i0 = mem.cell[k] & (NFX - 1);
      const j0 = mem.cell[k] >>> Math.log2(NFX);
      let re = 0;
      let im = 0;
      for (let dy = 0; dy < width; dy++) {
        const ky = esKernel(1 - (mem.fracY[k] + dy) / (width / 2), beta);
        for (let dx = 0; dx < width; dx++) {
          const kx = esKernel(1 - (mem.fracX[k] + dx) / (width / 2), beta);
          const g = 2 * (((j0 + dy) % NFY) * NFX + ((i0 + dx) % NFX));
          re += kx * ky * mem.grid[g];
          im += kx * ky * mem.grid[g + 1];
        }
      }
      worst = Math.max(worst, Math.abs(mem.sortedRe[k] - re), Math.abs(mem.sortedIm[k] - im));
    }
    expect(worst, `max error ${worst}, bound ${bound}`).toBeLessThan(bound);
  });

  it("spreading equals the scalar loop to the last bit and is the transpose of interpolation", () => {
    // Bitwise reference: spreadInterp.spread, same operations in the same order (as above).
    // Transpose: ⟨interp(G), c⟩ = ⟨G, spread(c)⟩ under Σ Re(a*b) is an identity (analytic);
    // sums of ~10⁴ terms of size ~1 → rtol 1e-12 for round-off.
    const width = 7;
    const { mem, layout } = setup(width, 8);
    const rng = new Rng(81);
    const G = Float64Array.from(mem.grid);
    for (let k = 0; k < M; k++) {
      mem.sortedRe[k] = rng.normal();
      mem.sortedIm[k] = rng.normal();
    }
    const cRe = Float64Array.from(mem.sortedRe);
    const cIm = Float64Array.from(mem.sortedIm);
    mem.grid.fill(0);
    pointLoopWasmRange(mem.spread!, layout, layout.grid, NFX, NFY, 0, M);
    const S = Float64Array.from(mem.grid);
    const ref = new Float64Array(S.length);
    spread(ref, NFX, NFY, width, mem.cell, new Uint32Array(M), scalarTable(width, mem), 0, 0, M, cRe, cIm, false);
    for (let i = 0; i < S.length; i++) expect(S[i], `grid value ${i}`).toBe(ref[i]);

    mem.grid.set(G);
    pointLoopWasmRange(mem.interpolate!, layout, layout.grid, NFX, NFY, 0, M);
    let lhs = 0;
    for (let k = 0; k < M; k++) lhs += mem.sortedRe[k] * cRe[k] + mem.sortedIm[k] * cIm[k];
    let rhs = 0;
    for (let i = 0; i < G.length; i++) rhs += G[i] * S[i];
    expect(Math.abs(lhs - rhs) / Math.abs(rhs), `⟨interp G, c⟩ = ${lhs}, ⟨G, spread c⟩ = ${rhs}`).toBeLessThan(1e-12);
  });
});
