import { describe, expect, it } from "vitest";
import { bitReverseTable } from "../../src/fourier/fftWasm.js";
import { esKernelForWidth } from "../../src/fourier/kernel.js";
import { fitEsKernelPoly } from "../../src/fourier/kernelPoly.js";
import { PlanMemory } from "../../src/fourier/planMemory.js";
import { Rng } from "../../src/random.js";
import { relL2 } from "../helpers.js";

/**
 * The DFT by its definition, X_k = Σ_l x_l e^{∓2πi lk/n} (− forward), on interleaved complex
 * data; the angle uses (l·k mod n) so that it is exact before the cosine.
 */
function directDft(x: ArrayLike<number>, n: number, inverse: boolean): Float64Array {
  const out = new Float64Array(2 * n);
  const sign = inverse ? 1 : -1;
  for (let k = 0; k < n; k++) {
    let re = 0;
    let im = 0;
    for (let l = 0; l < n; l++) {
      const a = (sign * 2 * Math.PI * ((l * k) % n)) / n;
      const c = Math.cos(a);
      const s = Math.sin(a);
      re += x[2 * l] * c - x[2 * l + 1] * s;
      im += x[2 * l] * s + x[2 * l + 1] * c;
    }
    out[2 * k] = re;
    out[2 * k + 1] = im;
  }
  return out;
}

/** A plan memory with the SIMD FFTs for an nfx × nfy grid (kernel width 4: any polynomial one). */
function simdMemory(nfx: number, nfy: number): PlanMemory {
  const { beta } = esKernelForWidth(4);
  const mem = new PlanMemory(nfx, nfy, false, fitEsKernelPoly(4, beta));
  expect(mem.simd, "this engine should support WebAssembly SIMD (Node ≥ 16.4)").toBe(true);
  return mem;
}

// Round-off of a radix-2 FFT grows like ε·log2 n in ℓ2 (Van Loan 1992 §1.4); the direct sum
// adds ε·√n. 1e-13 relative leaves a wide margin at n ≤ 512 while catching any wrong twiddle
// or permutation (those give O(1) errors).
const FFT_RTOL = 1e-13;

describe("SIMD FFT (fftWasm.ts) against the definition of the DFT", () => {
  it("bitReverseTable reverses the bits of each index", () => {
    // Analytic: for n = 8, 1 = 001 → 100 = 4, 3 = 011 → 110 = 6, 6 = 110 → 011 = 3.
    const rev = new Int32Array(8);
    bitReverseTable(8, rev);
    expect(Array.from(rev)).toEqual([0, 4, 2, 6, 1, 5, 3, 7]);
  });

  for (const n of [2, 4, 16, 128, 512]) {
    it(`rows of length ${n}, forward and backward, equal the direct DFT`, () => {
      const nfy = 4;
      const mem = simdMemory(n, nfy);
      const rng = new Rng(100 + n);
      for (const inverse of [false, true]) {
        const data = Float64Array.from({ length: 2 * n * nfy }, () => rng.normal());
        mem.grid.set(data);
        // Rows 1 and 2 only: rows 0 and 3 must stay as they were.
        mem.fftRows(1, 3, inverse);
        for (let r = 0; r < nfy; r++) {
          const row = data.subarray(2 * n * r, 2 * n * (r + 1));
          const got = mem.grid.subarray(2 * n * r, 2 * n * (r + 1));
          if (r === 1 || r === 2) {
            const err = relL2(got, directDft(row, n, inverse));
            expect(err, `row ${r}, n = ${n}, inverse = ${inverse}: relative error ${err}`).toBeLessThan(FFT_RTOL);
          } else {
            expect(Array.from(got)).toEqual(Array.from(row));
          }
        }
      }
    });
  }

  it("columns (blocks of adjacent columns at a row stride) equal the direct DFT of each column", () => {
    // 40 columns so that a partial block is included; columns 3 … 36 transformed, the others
    // must be untouched.
    const nfx = 64;
    const nfy = 256;
    const mem = simdMemory(nfx, nfy);
    const rng = new Rng(7);
    for (const inverse of [false, true]) {
      const data = Float64Array.from({ length: 2 * nfx * nfy }, () => rng.normal());
      mem.grid.set(data);
      mem.fftColumns(3, 37, inverse);
      const col = new Float64Array(2 * nfy);
      const got = new Float64Array(2 * nfy);
      for (let c = 0; c < nfx; c++) {
        for (let r = 0; r < nfy; r++) {
          col[2 * r] = data[2 * (r * nfx + c)];
          col[2 * r + 1] = data[2 * (r * nfx + c) + 1];
          got[2 * r] = mem.grid[2 * (r * nfx + c)];
          got[2 * r + 1] = mem.grid[2 * (r * nfx + c) + 1];
        }
        if (c >= 3 && c < 37) {
          const err = relL2(got, directDft(col, nfy, inverse));
          expect(err, `column ${c}, inverse = ${inverse}: relative error ${err}`).toBeLessThan(FFT_RTOL);
        } else {
          expect(relL2(got, col), `column ${c} should be untouched`).toBe(0);
        }
      }
    }
  });

  it("forward then backward returns n·x (unscaled inverse)", () => {
    // Analytic: Σ_k e^{+2πi jk/n} Σ_l x_l e^{−2πi lk/n} = n·x_j. Round-off as above.
    const n = 1024;
    const mem = simdMemory(n, 2);
    const rng = new Rng(9);
    const data = Float64Array.from({ length: 4 * n }, () => rng.normal());
    mem.grid.set(data);
    mem.fftRows(0, 2, false);
    mem.fftRows(0, 2, true);
    const scaled = data.map((x) => n * x);
    expect(relL2(mem.grid, scaled)).toBeLessThan(FFT_RTOL);
  });
});
