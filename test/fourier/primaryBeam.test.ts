import { describe, expect, it } from "vitest";
import { applyBeam, besselJ1, primaryBeamFwhmRad, primaryBeamImage, primaryBeamResponse } from "../../src/fourier/primaryBeam.js";
import { ARCSEC_TO_RAD, C_M_PER_S } from "../../src/units.js";
import { expectAbs, expectRel } from "../helpers.js";

describe("besselJ1", () => {
  it("matches tabulated values and its first zero", () => {
    // Abramowitz & Stegun 1964, Table 9.1 (J1(1), J1(2), J1(5), from memory, 10 digits) and
    // Table 9.5 (first zero j_{1,1} = 3.8317059702). The trapezoid rule is exact to ~1e-15,
    // so the tolerance is the tables' last digit.
    expectAbs(besselJ1(1), 0.4400505857, 1e-10, "J1(1)");
    expectAbs(besselJ1(2), 0.5767248078, 1e-10, "J1(2)");
    expectAbs(besselJ1(5), -0.3275791376, 1e-10, "J1(5)");
    expectAbs(besselJ1(3.8317059702), 0, 1e-10, "J1(j11)");
    // Small-argument series J1(x) ≈ x/2 − x³/16 (analytic).
    expectRel(besselJ1(1e-3), 5e-4 - 1e-9 / 16, 1e-12, "J1(1e-3)");
  });
});

describe("primary beam", () => {
  const nu = 345e9;
  const dish = { dishDiameterM: 12 };

  it("Gaussian FWHM is 1.13 λ/D = 16.8781″ at 345 GHz for a 12 m dish", () => {
    // REFERENCES.md §7 table (computed; rtol 1e-4 as stated there).
    const fwhm = primaryBeamFwhmRad(nu, dish);
    expectRel(fwhm / ARCSEC_TO_RAD, 16.8781, 1e-4, "FWHM″");
    // Half power at FWHM/2 from the centre (definition of FWHM; exact for a Gaussian).
    expectRel(primaryBeamResponse(fwhm / 2, nu, dish), 0.5, 1e-12, "A(FWHM/2)");
    expectRel(primaryBeamResponse(0, nu, dish), 1, 1e-15, "A(0)");
  });

  it("Airy pattern: first null at 1.21967 λ/D and FWHM 1.02899 λ/D", () => {
    // First null at j_{1,1}/π = 1.21967 λ/D (analytic Airy); intensity FWHM 1.02899 λ/D
    // (REFERENCES.md §5, computed). The 6-digit constants set the tolerances.
    const airy = { dishDiameterM: 12, shape: "airy" as const };
    const lambdaOverD = C_M_PER_S / nu / 12;
    expectAbs(primaryBeamResponse(1.21967 * lambdaOverD, nu, airy), 0, 1e-10, "A(null)");
    expect(primaryBeamResponse(1.1 * lambdaOverD, nu, airy)).toBeGreaterThan(1e-4);
    expectAbs(primaryBeamResponse((1.02899 / 2) * lambdaOverD, nu, airy), 0.5, 2e-5, "A(FWHM/2)");
  });

  it("is centred on the pointing offset on the model grid (x East = column index decreasing)", () => {
    // Pointing 2 cells East, 1 cell North of the phase centre → peak at column N/2 − 2, row N/2 + 1
    // (CONVENTIONS.md model grid).
    const n = 16;
    const cellRad = 1 * ARCSEC_TO_RAD;
    const beam = primaryBeamImage({ nx: n, ny: n, cellRad }, nu, [2 * cellRad, 1 * cellRad], dish);
    let best = 0;
    for (let p = 1; p < beam.length; p++) if (beam[p] > beam[best]) best = p;
    expect(best).toBe((n / 2 + 1) * n + (n / 2 - 2));
    expectRel(beam[best], 1, 1e-15, "peak");
    const out = new Float64Array(n * n);
    const img = new Float64Array(n * n).fill(2);
    applyBeam(img, beam, out);
    expectRel(out[5], 2 * beam[5], 1e-15, "applyBeam");
    expect(() => applyBeam(img, new Float64Array(3), out)).toThrow(/applyBeam: image has 256 pixels, beam 3/);
    expect(() => primaryBeamResponse(0, nu, { dishDiameterM: -1 })).toThrow(/dish diameter -1 m/);
  });
});
