import { describe, expect, it } from "vitest";
import { directForward } from "../../src/fourier/direct.js";
import { NufftPlan } from "../../src/fourier/nufft.js";
import { Rng } from "../../src/random.js";
import { relL2 } from "../helpers.js";

const CELL = 2e-7; // rad
const N = 32;

function points(rng: Rng, m: number) {
  const u = Float64Array.from({ length: m }, () => (rng.uniform() - 0.5) / CELL);
  const v = Float64Array.from({ length: m }, () => (rng.uniform() - 0.5) / CELL);
  return { u, v };
}

function interleave(re: Float64Array, im: Float64Array): Float64Array {
  const out = new Float64Array(2 * re.length);
  for (let k = 0; k < re.length; k++) {
    out[2 * k] = re[k];
    out[2 * k + 1] = im[k];
  }
  return out;
}

describe("NufftPlan storage and engines (planMemory.ts)", () => {
  it("setPoints with growing, then shrinking point counts still matches the direct sum", () => {
    // Each setPoints may move the grid and point arrays to a new WebAssembly memory; stale
    // views would give wrong values. Reference: the direct sum (direct.ts), bound 3ε as in
    // nufft.test.ts (Barnett et al. 2019 error at w = ⌈log10 1/ε⌉ + 1, REFERENCES.md §9).
    const rng = new Rng(40);
    const image = Float64Array.from({ length: N * N }, () => rng.normal());
    const plan = new NufftPlan({ nx: N, cellRad: CELL, tolerance: 1e-8, threads: 1 });
    for (const m of [50, 40_000, 300]) {
      const { u, v } = points(rng, m);
      plan.setPoints(u, v);
      const re = new Float64Array(m);
      const im = new Float64Array(m);
      plan.execute(image, re, im);
      // The direct sum over the first (at most 2000) points keeps the test fast.
      const n = Math.min(m, 2000);
      const re0 = new Float64Array(n);
      const im0 = new Float64Array(n);
      directForward({ nx: N, ny: N, cellRad: CELL }, image, u.subarray(0, n), v.subarray(0, n), re0, im0);
      const err = relL2(interleave(re.subarray(0, n), im.subarray(0, n)), interleave(re0, im0));
      expect(err, `m = ${m}: relative error ${err}`).toBeLessThan(3e-8);
    }
    plan.dispose();
  });

  it("the SIMD engine and the JavaScript engine (kernel per block) agree to round-off", () => {
    // Same kernel polynomials and the same interpolation/spreading arithmetic; only the FFTs
    // (radix-2 SIMD with the real-data symmetries vs the fft.js radix-4 on full grids) differ
    // in their order of operations, at ε·log n relative (brute-force comparison, common
    // practice) → rtol 1e-13.
    const rng = new Rng(41);
    const m = 2000;
    const { u, v } = points(rng, m);
    const image = Float64Array.from({ length: N * N }, () => rng.normal());
    const cRe = Float64Array.from({ length: m }, () => rng.normal());
    const cIm = Float64Array.from({ length: m }, () => rng.normal());
    const results = [true, false].map((precomputeKernel) => {
      const plan = new NufftPlan({ nx: N, cellRad: CELL, tolerance: 1e-6, threads: 1, precomputeKernel });
      plan.setPoints(u, v);
      const re = new Float64Array(m);
      const im = new Float64Array(m);
      plan.execute(image, re, im);
      const aRe = new Float64Array(N * N);
      const aIm = new Float64Array(N * N);
      plan.executeAdjointComplex(cRe, cIm, aRe, aIm);
      // The real-only adjoint takes its own route (half the FFTs on the SIMD engine).
      const real = new Float64Array(N * N);
      plan.executeAdjoint(cRe, cIm, real);
      plan.dispose();
      return { t2: interleave(re, im), t1: interleave(aRe, aIm), real };
    });
    expect(relL2(results[0].t2, results[1].t2)).toBeLessThan(1e-13);
    expect(relL2(results[0].t1, results[1].t1)).toBeLessThan(1e-13);
    expect(relL2(results[0].real, results[1].real)).toBeLessThan(1e-13);
  });
});

describe("NufftPlan with the JavaScript engine forced (simd: false)", () => {
  it("matches the direct sum (3ε) and the SIMD engine (round-off), with 1 and 2 threads", () => {
    // Reference: the direct sums (direct.ts), bound 3ε as in nufft.test.ts (REFERENCES.md §9);
    // engine agreement to round-off as above (rtol 1e-13). 60 000 points wake the second thread
    // (needs dist/ for the worker, as threads.test.ts).
    const rng = new Rng(42);
    const m = 60_000;
    const { u, v } = points(rng, m);
    const image = Float64Array.from({ length: N * N }, () => rng.normal());
    const cRe = Float64Array.from({ length: m }, () => rng.normal());
    const cIm = Float64Array.from({ length: m }, () => rng.normal());
    const n = 1500;
    const re0 = new Float64Array(n);
    const im0 = new Float64Array(n);
    directForward({ nx: N, ny: N, cellRad: CELL }, image, u.subarray(0, n), v.subarray(0, n), re0, im0);
    const run = (simd: boolean, threads: number) => {
      const plan = new NufftPlan({ nx: N, cellRad: CELL, tolerance: 1e-7, threads, simd });
      plan.setPoints(u, v);
      const re = new Float64Array(m);
      const im = new Float64Array(m);
      plan.execute(image, re, im);
      const a = new Float64Array(N * N);
      plan.executeAdjoint(cRe, cIm, a);
      plan.dispose();
      return { t2: interleave(re, im), a, first: interleave(re.subarray(0, n), im.subarray(0, n)) };
    };
    const simdRef = run(true, 1);
    for (const threads of [1, 2]) {
      const js = run(false, threads);
      const err = relL2(js.first, interleave(re0, im0));
      expect(err, `threads = ${threads}: type 2 error ${err}`).toBeLessThan(3e-7);
      expect(relL2(js.t2, simdRef.t2)).toBeLessThan(1e-13);
      expect(relL2(js.a, simdRef.a)).toBeLessThan(1e-13);
    }
  });
});
