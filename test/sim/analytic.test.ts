import { describe, expect, it } from "vitest";
import { analyticSkyVisibilities, type AnalyticComponent } from "../../src/sim/index.js";
import { ARCSEC_TO_RAD } from "../../src/units.js";
import { expectAbs, expectRel } from "../helpers.js";

// REFERENCES.md §5: the three (u, v) points [λ] of its table.
const U = Float64Array.of(1e5, 0, 3e5);
const V = Float64Array.of(0, 2e5, 4e5);

describe("analyticSkyVisibilities (REFERENCES.md §5)", () => {
  it("point source (0.3″, −0.2″), F = 1: the tabulated values to 1e-12 (sign test)", () => {
    // REFERENCES.md §5 table, computed with numpy; tolerance 1e-12 as stated there.
    const { re, im } = analyticSkyVisibilities([{ type: "point_source", flux: 1, x: 0.3, y: -0.2 }])(U, V, 345e9);
    const expected = [[0.610699829882, -0.791862183579], [0.345082466694, 0.938572368643], [0.953961768986, -0.299928230271]];
    for (let k = 0; k < 3; k++) {
      expectAbs(re[k], expected[k][0], 1e-12, `re at point ${k}`);
      expectAbs(im[k], expected[k][1], 1e-12, `im at point ${k}`);
    }
    // A source moved East gives a negative phase at positive u (CONVENTIONS.md).
    expect(im[0]).toBeLessThan(0);
  });

  it("circular Gaussian σ = 0.1″ and elliptical Gaussian q = 0.5, pa = 30°: the tabulated values to 1e-12", () => {
    const circ = analyticSkyVisibilities([{ type: "gaussian", flux: 1, sigma: 0.1, q: 1, pa: 0, x: 0, y: 0 }])(U, V, 345e9);
    const ell = analyticSkyVisibilities([{ type: "gaussian", flux: 1, sigma: 0.1, q: 0.5, pa: 30, x: 0, y: 0 }])(U, V, 345e9);
    const circExpected = [0.954663949070, 0.830619438685, 0.313518422880];
    const ellExpected = [0.960216594746, 0.739653637032, 0.100771375650];
    for (let k = 0; k < 3; k++) {
      expectAbs(circ.re[k], circExpected[k], 1e-12, `circular at point ${k}`);
      expectAbs(circ.im[k], 0, 1e-15, "centred → real");
      expectAbs(ell.re[k], ellExpected[k], 1e-12, `elliptical at point ${k}`);
      expectAbs(ell.im[k], 0, 1e-15, "centred → real");
    }
  });

  it("an offset Gaussian is the centred one times the point-source phase (shift theorem)", () => {
    // Fourier shift theorem (analytic): V_shifted = V_centred · e^{−2πi(u x0 + v y0)}.
    const g = { type: "gaussian", flux: 2.5, sigma: 0.2, q: 0.6, pa: 110, x: 0, y: 0 } as const;
    const centred = analyticSkyVisibilities([g])(U, V, 230e9);
    const shifted = analyticSkyVisibilities([{ ...g, x: -0.7, y: 0.3 }])(U, V, 230e9);
    for (let k = 0; k < 3; k++) {
      const ph = -2 * Math.PI * (U[k] * -0.7 + V[k] * 0.3) * ARCSEC_TO_RAD;
      expectAbs(shifted.re[k], centred.re[k] * Math.cos(ph), 1e-12, "re");
      expectAbs(shifted.im[k], centred.re[k] * Math.sin(ph), 1e-12, "im");
    }
  });

  it("components add, and a spectral index scales the flux as (ν/ν_ref)^α", () => {
    const comps: AnalyticComponent[] = [
      { type: "point_source", flux: 1, x: 0, y: 0, spectral_index: 3, ref_freq_ghz: 345 },
      { type: "point_source", flux: 0.5, x: 0, y: 0 },
    ];
    // At 2·ν_ref: 1·2³ + 0.5 = 8.5 Jy (analytic).
    const { re } = analyticSkyVisibilities(comps)(U, V, 690e9);
    expectRel(re[0], 8.5, 1e-14, "flux at 690 GHz");
  });

  it("rejects invalid parameters with a one-line message", () => {
    expect(() => analyticSkyVisibilities([{ type: "gaussian", flux: 1, sigma: 0.1, q: 0, pa: 0, x: 0, y: 0 }], "sky.json: source"))
      .toThrow("sky.json: source[0].q: expected a number in (0, 1]; got 0");
    expect(() => analyticSkyVisibilities([{ type: "point_source", flux: 1, x: 0, y: 0, spectral_index: 2 }]))
      .toThrow("source[0].ref_freq_ghz: expected a positive number in GHz (needed with spectral_index); got nothing");
    expect(() => analyticSkyVisibilities([{ type: "sersic", flux: 1 } as unknown as AnalyticComponent]))
      .toThrow('source[0].type: expected "point_source" or "gaussian" for an analytic sky; got "sersic"');
  });
});
