import { describe, it } from "vitest";
import { imageSigmaJyPerBeam, sefdJy, stokesISigmaJy, visibilitySigmaJy } from "../../src/sim/index.js";
import { expectAbs, expectRel } from "../helpers.js";

// Worked example of REFERENCES.md §6 (computed there with astropy's k_B, CODATA 2018, the same
// constant as src/units.ts): T_sys = 100 K, D = 12 m, η_a = 0.7; Δν = 7.5 GHz; N = 50; t = 1 h;
// n_pol = 2. The table values are rounded to the digits printed, so each check allows half a
// unit in the last printed digit (the rounding of the table), nothing more.
const TSYS_K = 100;
const DISH_M = 12;
const ETA_A = 0.7;
const BW_HZ = 7.5e9;

describe("radiometer equation (REFERENCES.md §6)", () => {
  it("sefdJy(100 K, 12 m, 0.7) is 3487.8907 Jy", () => {
    // REFERENCES.md §6: SEFD = 3487.8907 Jy, printed to 1e-4 Jy → half a unit is 5e-5 Jy.
    expectAbs(sefdJy(TSYS_K, DISH_M, ETA_A), 3487.8907, 5e-5, "SEFD");
  });

  it("visibilitySigmaJy matches the per-baseline table for η = 1 and 0.88, τ = 1 s and 6 s", () => {
    const sefd = sefdJy(TSYS_K, DISH_M, ETA_A);
    // REFERENCES.md §6 table, σ per Re/Im, one baseline, one pol, 7.5 GHz, printed to 1e-4 mJy
    // → half a unit is 5e-8 Jy.
    expectAbs(visibilitySigmaJy(sefd, BW_HZ, 1, 1), 28.4785e-3, 5e-8, "σ η=1 τ=1s");
    expectAbs(visibilitySigmaJy(sefd, BW_HZ, 1, 0.88), 32.3619e-3, 5e-8, "σ η=0.88 τ=1s");
    expectAbs(visibilitySigmaJy(sefd, BW_HZ, 6, 1), 11.6263e-3, 5e-8, "σ η=1 τ=6s");
    expectAbs(visibilitySigmaJy(sefd, BW_HZ, 6, 0.88), 13.2117e-3, 5e-8, "σ η=0.88 τ=6s");
  });

  it("imageSigmaJyPerBeam gives 9.5892 and 10.8968 μJy/beam for N = 50, 1 h, n_pol = 2", () => {
    const sefd = sefdJy(TSYS_K, DISH_M, ETA_A);
    // REFERENCES.md §6 table, printed to 1e-4 μJy → half a unit is 5e-11 Jy.
    expectAbs(imageSigmaJyPerBeam(sefd, 1, 50, BW_HZ, 3600, 2), 9.5892e-6, 5e-11, "σ_im η=1");
    expectAbs(imageSigmaJyPerBeam(sefd, 0.88, 50, BW_HZ, 3600, 2), 10.8968e-6, 5e-11, "σ_im η=0.88");
  });

  it("σ_vis(τ = 6 s)/sqrt(N(N−1)/2 · t/τ · n_pol) equals σ_image (REFERENCES.md §6 consistency test)", () => {
    // Analytic identity of the two radiometer forms; REFERENCES.md §6 asks for 1e-9.
    const sefd = sefdJy(TSYS_K, DISH_M, ETA_A);
    for (const eta of [1, 0.88]) {
      const sigmaVis = visibilitySigmaJy(sefd, BW_HZ, 6, eta);
      const nVis = ((50 * 49) / 2) * (3600 / 6) * 2;
      expectRel(sigmaVis / Math.sqrt(nVis), imageSigmaJyPerBeam(sefd, eta, 50, BW_HZ, 3600, 2), 1e-9, `η=${eta}`);
    }
  });

  it("stokesISigmaJy of two hands is σ/√2; of one hand, σ", () => {
    // CONVENTIONS.md "Stokes I": variance of the mean of two independent hands (analytic).
    expectRel(stokesISigmaJy(0.02, 2), 0.02 / Math.SQRT2, 1e-15, "two hands");
    expectRel(stokesISigmaJy(0.02, 1), 0.02, 1e-15, "one hand");
  });
});
