import { describe, it } from "vitest";
import { integrate } from "../../src/cosmo/quadrature.js";
import { gamma, lnGamma, regularizedGammaP } from "../../src/source/gammaFunctions.js";
import { SersicProfile, sersicBn, sersicFluxOverIeRe2 } from "../../src/source/sersic.js";
import { expectAbs, expectRel } from "../helpers.js";

describe("gamma functions", () => {
  it("lnGamma and gamma match exact values Γ(½) = √π, Γ(n) = (n−1)!, Γ(3/2) = √π/2", () => {
    // Analytic values; Stirling series truncated at B12 after shifting to ≥ 15 → rtol 1e-14.
    expectRel(gamma(0.5), Math.sqrt(Math.PI), 1e-14);
    expectRel(gamma(1.5), Math.sqrt(Math.PI) / 2, 1e-14);
    expectRel(gamma(5), 24, 1e-14);
    expectRel(gamma(16), 1307674368000, 1e-14);
    expectRel(lnGamma(100), 359.1342053695754, 1e-14); // ln 99!, from memory (= Σ ln k)
    let s = 0;
    for (let k = 2; k < 100; k++) s += Math.log(k);
    expectRel(lnGamma(100), s, 1e-14);
  });

  it("regularizedGammaP matches P(1, x) = 1 − e^−x and P(½, x) = erf(√x) (series and fraction)", () => {
    // Analytic: P(1, x) = 1 − e^−x. P(½, x) = erf(√x); erf(1) = 0.8427007929497149 (A&S 7.1,
    // from memory). x on both sides of a + 1 exercises both branches → atol 1e-14.
    for (const x of [0.01, 0.5, 1.9, 2.1, 7, 30]) expectAbs(regularizedGammaP(1, x), 1 - Math.exp(-x), 1e-14, `P(1, ${x})`);
    expectAbs(regularizedGammaP(0.5, 1), 0.8427007929497149, 1e-14);
    // P(a, x) + Q(a, x) = 1 continuity across the branch switch x = a + 1
    expectAbs(regularizedGammaP(4, 5 - 1e-12), regularizedGammaP(4, 5 + 1e-12), 1e-12);
  });
});

// REFERENCES.md §4: n, exact b_n, CB99 series, F/(I_e R_e²), e^{b_n}
const TABLE: [number, number, number, number, number][] = [
  [0.5, 0.69314718056, 0.693399788214, 9.0647202837, 2.0],
  [1, 1.678346990017, 1.678388654922, 11.9484947415, 5.35669398],
  [2, 3.672060748851, 3.672065445918, 16.3108804818, 39.332877583],
  [4, 7.669249442501, 7.66924998467, 22.6652337236, 2141.4735429],
  [8, 15.667929544317, 15.667929609654, 31.7745238581, 6.3752225e6],
];

/** Ciotti & Bertin (1999) series as printed in REFERENCES.md §4. */
function cb99(n: number): number {
  return 2 * n - 1 / 3 + 4 / (405 * n) + 46 / (25515 * n * n) + 131 / (1148175 * n ** 3) - 2194697 / (30690717750 * n ** 4);
}

describe("sersicBn", () => {
  it("equals the exact root of Γ(2n) = 2γ(2n, b) (REFERENCES.md §4, scipy gammaincinv)", () => {
    // REFERENCES.md §4 (scipy, brentq and mpmath agree to 1e-12); 12 decimals → atol 1e-10.
    for (const [n, b] of TABLE) expectAbs(sersicBn(n), b, 1e-10, `b_${n}`);
    expectAbs(sersicBn(0.5), Math.LN2, 1e-13, "b_0.5 = ln 2 (Gaussian)");
  });

  it("differs from the CB99 series by the tabulated amounts (REFERENCES.md §4)", () => {
    // REFERENCES.md §4 tolerances: series vs exact within 5e-5 for n ≥ 1 and 3e-4 at n = 0.5;
    // the differences themselves are tabulated (2.53e-4, 4.17e-5, 4.70e-6, 5.42e-7, 6.53e-8).
    const diffs = [2.53e-4, 4.17e-5, 4.7e-6, 5.42e-7, 6.53e-8];
    TABLE.forEach(([n, , series], i) => {
      expectAbs(cb99(n), series, 1e-11, `series(${n})`);
      expectRel(cb99(n) - sersicBn(n), diffs[i], 0.01, `series − exact at n = ${n}`);
      expectAbs(cb99(n), sersicBn(n), n >= 1 ? 5e-5 : 3e-4);
    });
  });

  it("F/(I_e R_e²) and e^{b_n} match REFERENCES.md §4", () => {
    // 11 significant digits printed → rtol 1e-10.
    for (const [n, , , ratio, ebn] of TABLE) {
      expectRel(sersicFluxOverIeRe2(n), ratio, 1e-10, `F/(I_e R_e²) n=${n}`);
      expectRel(Math.exp(sersicBn(n)), ebn, 1e-8, `e^b n=${n}`);
    }
  });

  it("gives I_e = 0.33477020 (n = 1) and 0.17648175 (n = 4) Jy/arcsec² for F = 1 Jy, R_e = 0.5″", () => {
    // REFERENCES.md §4 worked example, printed to 8 decimals → atol 5e-9 (half a unit in the
    // last printed digit).
    for (const [n, ie] of [[1, 0.3347702], [4, 0.17648175]]) {
      const s = new SersicProfile(0.5, n, 1, 0, 0, 0);
      const out = new Float64Array(1);
      // on the ellipse ξ = R_e the brightness is I_e
      s.addBrightness(Float64Array.of(0), Float64Array.of(0.5), out, 1, 1);
      expectAbs(out[0], ie, 5e-9, `I_e n=${n}`);
    }
  });

  it("half the light lies inside ξ = R_e and the total is the flux (quadrature of 2πR·I(R))", () => {
    // Definition of R_e and of the normalisation; quadrature to 1e-13 (split at R_e, tail to
    // 200 R_e where e^{-b(200^{1/n})} is negligible for n ≤ 4) → rtol 1e-9.
    for (const n of [0.5, 1, 2.5, 4]) {
      const s = new SersicProfile(0.3, n, 0.6, 20, 0, 0);
      const out = new Float64Array(1);
      const xArr = new Float64Array(1);
      const yArr = new Float64Array(1);
      const phi = (20 * Math.PI) / 180;
      // brightness on the major axis at ξ = R: x' = R/√q
      const I = (R: number) => {
        out[0] = 0;
        xArr[0] = (R / Math.sqrt(0.6)) * Math.sin(phi);
        yArr[0] = (R / Math.sqrt(0.6)) * Math.cos(phi);
        s.addBrightness(xArr, yArr, out, 1, 1);
        return 2 * Math.PI * R * out[0];
      };
      const inner = integrate(I, 0, 0.3, 1e-13);
      let outer = 0;
      for (let k = 0; k < 8; k++) outer += integrate(I, 0.3 * 2 ** k, 0.3 * 2 ** (k + 1), 1e-13);
      expectRel(inner, 0.5, 1e-9, `half light n=${n}`);
      expectRel(inner + outer, 1, n === 4 ? 1e-6 : 1e-9, `total n=${n}`);
    }
  });
});
