import { describe, expect, it } from "vitest";
import { esKernelForWidth } from "../../src/fourier/kernel.js";
import { fitEsKernelPoly } from "../../src/fourier/kernelPoly.js";
import { PlanMemory } from "../../src/fourier/planMemory.js";
import { adjointRealImage, forwardRealImage } from "../../src/fourier/realImageFft.js";
import { Rng } from "../../src/random.js";
import { relL2 } from "../helpers.js";

describe("forwardRealImage (real-data symmetries of the fine-grid FFT)", () => {
  it("equals the direct 2D DFT of the placed, corrected image", () => {
    // Reference: the definition G[ky][kx] = Σ_{r,l} g[r][l] e^{−2πi(l·kx/nfx + r·ky/nfy)}
    // evaluated directly, with g the image times corrX·corrY at NufftPlan's placement
    // (column (nx/2 − i) mod nfx, row (j − ny/2) mod nfy). Round-off of the radix-2 FFT and
    // of the direct sum is ~1e-15 relative; 1e-13 catches any wrong symmetry (O(1) errors).
    const nx = 10;
    const ny = 6;
    const nfx = 32;
    const nfy = 16;
    const rng = new Rng(12);
    const image = Float64Array.from({ length: nx * ny }, () => rng.normal());
    const corrX = Float64Array.from({ length: nx }, () => 0.5 + rng.uniform());
    const corrY = Float64Array.from({ length: ny }, () => 0.5 + rng.uniform());
    const fineColOfI = Int32Array.from({ length: nx }, (_, i) => (nx / 2 - i) & (nfx - 1));
    const fineRowOfJ = Int32Array.from({ length: ny }, (_, j) => (j - ny / 2) & (nfy - 1));
    const { beta } = esKernelForWidth(4);
    const mem = new PlanMemory(nfx, nfy, false, fitEsKernelPoly(4, beta));
    expect(mem.simd, "this engine should support WebAssembly SIMD (Node ≥ 16.4)").toBe(true);
    // Garbage everywhere first: the function must clear what it does not write.
    for (let i = 0; i < mem.grid.length; i++) mem.grid[i] = rng.normal();
    forwardRealImage(mem, { nx, ny, fineColOfI, fineRowOfJ, corrX, corrY }, image, nfx, nfy);
    const ref = new Float64Array(2 * nfx * nfy);
    for (let ky = 0; ky < nfy; ky++) {
      for (let kx = 0; kx < nfx; kx++) {
        let re = 0;
        let im = 0;
        for (let j = 0; j < ny; j++) {
          for (let i = 0; i < nx; i++) {
            const g = image[j * nx + i] * corrX[i] * corrY[j];
            // Integer phase numerator reduced exactly before the trigonometry.
            const turns = ((fineColOfI[i] * kx) % nfx) / nfx + ((fineRowOfJ[j] * ky) % nfy) / nfy;
            re += g * Math.cos(2 * Math.PI * turns);
            im -= g * Math.sin(2 * Math.PI * turns);
          }
        }
        ref[2 * (ky * nfx + kx)] = re;
        ref[2 * (ky * nfx + kx) + 1] = im;
      }
    }
    const err = relL2(mem.grid, ref);
    expect(err, `relative error ${err}`).toBeLessThan(1e-13);
  });

  it("adjointRealImage equals the real part of the direct backward 2D DFT at the image pixels", () => {
    // Reference: out[j][i] = corrX[i]·corrY[j]·Re Σ_{ky,kx} G[ky][kx] e^{+2πi(l·kx/nfx + r·ky/nfy)}
    // by its definition, for a random complex (non-Hermitian) G, at NufftPlan's placement
    // (l = (nx/2 − i) mod nfx, r = (j − ny/2) mod nfy). Round-off as above → 1e-13.
    const nx = 10;
    const ny = 6;
    const nfx = 32;
    const nfy = 16;
    const rng = new Rng(13);
    const corrX = Float64Array.from({ length: nx }, () => 0.5 + rng.uniform());
    const corrY = Float64Array.from({ length: ny }, () => 0.5 + rng.uniform());
    const fineColOfI = Int32Array.from({ length: nx }, (_, i) => (nx / 2 - i) & (nfx - 1));
    const fineRowOfJ = Int32Array.from({ length: ny }, (_, j) => (j - ny / 2) & (nfy - 1));
    const { beta } = esKernelForWidth(4);
    const mem = new PlanMemory(nfx, nfy, false, fitEsKernelPoly(4, beta));
    const G = Float64Array.from({ length: 2 * nfx * nfy }, () => rng.normal());
    mem.grid.set(G);
    const out = new Float64Array(nx * ny);
    adjointRealImage(mem, { nx, ny, fineColOfI, fineRowOfJ, corrX, corrY }, out, nfx, nfy);
    const ref = new Float64Array(nx * ny);
    for (let j = 0; j < ny; j++) {
      for (let i = 0; i < nx; i++) {
        let re = 0;
        for (let ky = 0; ky < nfy; ky++) {
          for (let kx = 0; kx < nfx; kx++) {
            const turns = ((fineColOfI[i] * kx) % nfx) / nfx + ((fineRowOfJ[j] * ky) % nfy) / nfy;
            const g = 2 * (ky * nfx + kx);
            re += G[g] * Math.cos(2 * Math.PI * turns) - G[g + 1] * Math.sin(2 * Math.PI * turns);
          }
        }
        ref[j * nx + i] = re * corrX[i] * corrY[j];
      }
    }
    const err = relL2(out, ref);
    expect(err, `relative error ${err}`).toBeLessThan(1e-13);
  });
});
