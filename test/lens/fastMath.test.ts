import { describe, expect, it } from "vitest";
import { fastAtanhRatio, fastAtanRatio, fastExp } from "../../src/lens/fastMath.js";
import { Rng } from "../../src/random.js";
import { expectRel } from "../helpers.js";

// The references are V8's Math.exp / Math.atan2 / Math.atanh (fdlibm ports, < 1 ulp).
// fastExp, fastAtanRatio and fastAtanhRatio claim 2 ulp; the checks allow 1e-15 relative
// (≈ 4.5 ulp), so that the reference's own error fits beside ours (common practice, no source).
const RTOL = 1e-15;

/** Largest relative difference of f against g over the given arguments. */
function worstRelative(f: (x: number) => number, g: (x: number) => number, xs: Float64Array): [number, number] {
  let worst = 0;
  let at = NaN;
  for (const x of xs) {
    const ref = g(x);
    const err = Math.abs(f(x) - ref) / Math.abs(ref);
    if (!(err <= worst)) {
      worst = err;
      at = x;
    }
  }
  return [worst, at];
}

describe("fastExp", () => {
  it("agrees with Math.exp to 1e-15 relative over its whole fast range [−708, 709]", () => {
    // Random arguments over the range, plus every table boundary (x = (m + ½)·ln2/256, where
    // the rounding of x·256/ln2 switches table entries) near 0 and at both ends.
    const rng = new Rng(11);
    const xs = new Float64Array(200_000 + 3 * 2 * 512);
    let k = 0;
    for (let i = 0; i < 200_000; i++) xs[k++] = -708 + 1417 * rng.uniform();
    for (const centre of [0, -700, 700]) {
      const m0 = Math.round((centre * 256) / Math.LN2);
      for (let m = m0 - 256; m < m0 + 256; m++) {
        const x = ((m + 0.5) * Math.LN2) / 256;
        xs[k++] = x * (1 - 1e-16);
        xs[k++] = x * (1 + 1e-16);
      }
    }
    const [worst, at] = worstRelative(fastExp, Math.exp, xs.subarray(0, k));
    expect(worst <= RTOL, `fastExp off by ${worst} (relative) at x = ${at}; tolerance ${RTOL}`).toBe(true);
  });

  it("covers the arguments the Sérsic loop makes: −b_n·(R/R_e)^(1/n) for n in [0.2, 10] and small positive ones", () => {
    // The Sérsic brightness evaluates exp(−b w) with b up to ~20 and w = (R/R_e)^(1/n) up to
    // ~1e3, and exp(h ln u) with h ln u in about [−60, 60]; sample [−745, 60] logarithmically.
    const rng = new Rng(12);
    const xs = new Float64Array(100_000);
    for (let i = 0; i < xs.length; i++) {
      const mag = Math.pow(10, -12 + 14.87 * rng.uniform());
      xs[i] = i % 5 === 0 ? Math.min(mag, 60) : -mag;
    }
    const normal = xs.filter((x) => Math.exp(x) >= 2.2250738585072014e-308);
    const [worst, at] = worstRelative(fastExp, Math.exp, normal);
    expect(worst <= RTOL, `fastExp off by ${worst} (relative) at x = ${at}; tolerance ${RTOL}`).toBe(true);
  });

  it("returns Math.exp's values outside the fast range and for special arguments", () => {
    // By construction (the fallback calls Math.exp): compared with Object.is, so −0/NaN count.
    for (const x of [-708.5, -745.1, -746, -1e300, 709.5, 709.78, 710, Infinity, -Infinity, NaN]) {
      expect(Object.is(fastExp(x), Math.exp(x)), `fastExp(${x})`).toBe(true);
    }
    // exact values inside the range (analytic): e^0 = 1 and e^(k ln 2) within rounding of 2^k
    expect(fastExp(0)).toBe(1);
    expect(fastExp(-0)).toBe(1);
    for (const kk of [-1000, -1, 1, 1000]) expectRel(fastExp(kk * Math.LN2), Math.pow(2, kk), 2e-13, `2^${kk}`);
  });
});

describe("fastAtanRatio", () => {
  it("agrees with Math.atan2(num, den) to 1e-15 relative for den > 0 and ratios over 30 decades", () => {
    // Reference: Math.atan2 (exact quadrant handling, < 1 ulp). Ratios from 1e-15 to 1e15 of
    // both signs, and every table boundary (ratio (j + ½)/32 and its reciprocal).
    const rng = new Rng(13);
    const num: number[] = [];
    const den: number[] = [];
    for (let i = 0; i < 100_000; i++) {
      const d = 0.1 + 3 * rng.uniform();
      const ratio = Math.pow(10, -15 + 30 * rng.uniform()) * (rng.uniform() < 0.5 ? -1 : 1);
      num.push(ratio * d);
      den.push(d);
    }
    for (let j = 0; j < 32; j++) {
      for (const z of [(j + 0.5) / 32, 32 / (j + 0.5)]) {
        for (const s of [1 - 2e-16, 1 + 2e-16]) {
          num.push(z * s * 1.7);
          den.push(1.7);
          num.push(-z * s * 0.3);
          den.push(0.3);
        }
      }
    }
    let worst = 0;
    let at = "";
    for (let i = 0; i < num.length; i++) {
      const ref = Math.atan2(num[i], den[i]);
      const err = Math.abs(fastAtanRatio(num[i], den[i]) - ref) / Math.abs(ref);
      if (!(err <= worst)) {
        worst = err;
        at = `${num[i]}/${den[i]}`;
      }
    }
    expect(worst <= RTOL, `fastAtanRatio off by ${worst} (relative) at ${at}; tolerance ${RTOL}`).toBe(true);
  });

  it("gives the exact limits: 0, ±π/4, ±π/2 for num = 0, ±den, ±∞, and NaN for NaN", () => {
    // Analytic values, rounded to the nearest double (Math.PI/4, Math.PI/2 are those).
    expect(fastAtanRatio(0, 2)).toBe(0);
    expect(fastAtanRatio(2.5, 2.5)).toBe(Math.PI / 4);
    expect(fastAtanRatio(-2.5, 2.5)).toBe(-Math.PI / 4);
    expect(fastAtanRatio(Infinity, 1)).toBe(Math.PI / 2);
    expect(fastAtanRatio(-Infinity, 1)).toBe(-Math.PI / 2);
    expect(fastAtanRatio(1e300, 1e-300)).toBe(Math.PI / 2);
    expect(Number.isNaN(fastAtanRatio(NaN, 1))).toBe(true);
    expect(Number.isNaN(fastAtanRatio(1, NaN))).toBe(true);
  });
});

describe("fastAtanhRatio", () => {
  it("agrees with Math.atanh to 1e-15 relative on [−1, 1], table and log1p branches alike", () => {
    // Reference: Math.atanh (fdlibm, < 1 ulp). den is a power of two so num/den is exact and
    // both sides see the same argument. Arguments: uniform in (−1, 1), logarithmic towards 0
    // and towards ±1, and every table boundary (j + ½)/128 up to the 0.9 switch.
    const rng = new Rng(14);
    const zs: number[] = [];
    for (let i = 0; i < 60_000; i++) zs.push(2 * rng.uniform() - 1);
    for (let i = 0; i < 20_000; i++) zs.push(Math.pow(10, -15 * rng.uniform()) * (i % 2 ? 1 : -1));
    for (let i = 0; i < 20_000; i++) zs.push((1 - Math.pow(10, -15 * rng.uniform())) * (i % 2 ? 1 : -1));
    for (let j = 0; j < 116; j++) for (const s of [1 - 2e-16, 1 + 2e-16]) zs.push(((j + 0.5) / 128) * s);
    zs.push(0.9, 0.9 * (1 + 2e-16), -0.9);
    let worst = 0;
    let at = NaN;
    for (const [k, z] of zs.entries()) {
      const den = [1, 0.5, 4][k % 3];
      const ref = Math.atanh(z);
      const err = Math.abs(fastAtanhRatio(z * den, den) - ref) / Math.abs(ref);
      if (!(err <= worst)) {
        worst = err;
        at = z;
      }
    }
    expect(worst <= RTOL, `fastAtanhRatio off by ${worst} (relative) at z = ${at}; tolerance ${RTOL}`).toBe(true);
  });

  it("gives 0 at 0, ±∞ at |num| = den, and NaN beyond or for NaN (the limits of atanh)", () => {
    // Analytic: atanh 0 = 0, atanh(±1) = ±∞, atanh undefined for |z| > 1.
    expect(fastAtanhRatio(0, 3)).toBe(0);
    expect(fastAtanhRatio(3, 3)).toBe(Infinity);
    expect(fastAtanhRatio(-3, 3)).toBe(-Infinity);
    expect(Number.isNaN(fastAtanhRatio(3.5, 3))).toBe(true);
    expect(Number.isNaN(fastAtanhRatio(NaN, 3))).toBe(true);
  });
});
