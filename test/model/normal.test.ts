/**
 * erfc, Φ and Φ⁻¹ against tabulated values. Reference digits: Abramowitz & Stegun (1964)
 * Tables 7.1 and 26.1/26.5 for the values they list; all digits below were recomputed with
 * mpmath 1.3.0 at 30 significant digits (`mpmath.erfc`, `mpmath.ncdf`,
 * `sqrt(2)*erfinv(2p-1)`), an arbitrary-precision library independent of this code.
 */
import { describe, expect, it } from "vitest";
import { erfc, normalCdf, normalQuantile } from "../../src/model/normal.js";
import { expectRel } from "../helpers.js";

describe("erfc", () => {
  // [x, erfc(x)] from mpmath 1.3.0 (30 digits). The series/continued-fraction switch sits at
  // x = 1, so 0.99 and 1 probe both sides. Tolerance 5e-15 relative: a few ulp of the
  // ~1e-15 accuracy claimed in normal.ts.
  const table: [number, number][] = [
    [0.1, 0.8875370839817151016],
    [0.5, 0.47950012218695346232], // A&S Table 7.1: erf(0.5) = 0.5204998778
    [0.99, 0.16149193044463020018],
    [1, 0.15729920705028513066], // A&S Table 7.1: erf(1) = 0.8427007929
    [2, 0.0046777349810472658379],
    [3, 0.000022090496998585441373],
    [5, 1.5374597944280348502e-12],
    [10, 2.088487583762544757e-45],
    [26, 5.6631924088561428465e-296],
  ];
  for (const [x, want] of table) {
    it(`erfc(${x}) matches mpmath to 5e-15 relative`, () => expectRel(erfc(x), want, 5e-15, `erfc(${x})`));
  }
  it("erfc(−x) = 2 − erfc(x) (analytic symmetry)", () => {
    expectRel(erfc(-1), 2 - 0.15729920705028513066, 1e-15);
  });
  it("erfc is 0 beyond the smallest double, and NaN for NaN", () => {
    expect(erfc(40)).toBe(0);
    expect(Number.isNaN(erfc(NaN))).toBe(true);
  });
});

describe("normalCdf", () => {
  // mpmath.ncdf; A&S 26.2 tables give Φ(1) = 0.8413447461. Lower-tail values keep relative
  // accuracy (the tail is computed from erfc directly), so 1e-14 relative.
  it("matches mpmath in the body and the far lower tail", () => {
    expectRel(normalCdf(1), 0.84134474606854294859, 1e-15, "Φ(1)");
    expectRel(normalCdf(-5), 2.8665157187919391167e-7, 1e-14, "Φ(−5)");
    expectRel(normalCdf(-10), 7.619853024160526066e-24, 1e-14, "Φ(−10)");
    // At z = −37 the condition number |d ln Φ/d ln z| ≈ z² ≈ 1370 turns the 1e-16 rounding of
    // z/√2 into ~1.5e-13 relative, so this point gets 1e-12.
    expectRel(normalCdf(-37), 5.7255712225245768227e-300, 1e-12, "Φ(−37)");
  });
});

describe("normalQuantile", () => {
  // Φ⁻¹(0.975) = 1.959963984540054 is the standard two-sided 95% point (A&S 26.2 tables);
  // the brief asks for 1e-9; the Halley-refined inverse reaches ~1e-15, so we test 1e-14.
  it("Φ⁻¹(0.975) = 1.959963984540054 (A&S 26.2 / mpmath) to 1e-14", () => {
    expectRel(normalQuantile(0.975), 1.9599639845400542355, 1e-14);
  });
  const table: [number, number][] = [
    [0.995, 2.575829303548900761],
    [0.9, 1.281551565544600467],
    [0.3, -0.52440051270804078404],
    [0.025, -1.9599639845400542355],
    [1e-10, -6.3613409024040562047],
    [1e-300, -37.047096299361199237], // mpmath root of ln Φ(z) = ln 1e-300
  ];
  for (const [p, want] of table) {
    it(`Φ⁻¹(${p}) matches mpmath to 1e-14 relative`, () => expectRel(normalQuantile(p), want, 1e-14));
  }
  it("upper tail: Φ⁻¹(1 − 1e-12) = 7.0344838253 (mpmath); 1 − 1e-12 carries a 1e-4 relative error in its tail mass, so the quantile is good to ~1e-6", () => {
    // d z / d ln q ≈ 1/z: a relative error 1.1e-4 in q = 1 − p moves z by 1.1e-4/7 ≈ 1.6e-5 absolute.
    expect(Math.abs(normalQuantile(1 - 1e-12) - 7.0344838253011319298)).toBeLessThan(3e-5);
  });
  it("is the inverse of normalCdf on a grid of p (round trip to 1e-14 relative in the lower half)", () => {
    for (let k = 1; k <= 500; k++) {
      const p = k / 1001;
      const z = normalQuantile(p);
      expectRel(normalCdf(z), p, 1e-14, `Φ(Φ⁻¹(${p}))`);
    }
  });
  it("gives ±∞ at 0 and 1 and NaN outside [0, 1]", () => {
    expect(normalQuantile(0)).toBe(-Infinity);
    expect(normalQuantile(1)).toBe(Infinity);
    expect(Number.isNaN(normalQuantile(1.5))).toBe(true);
    expect(Number.isNaN(normalQuantile(NaN))).toBe(true);
  });
});
