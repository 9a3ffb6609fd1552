/**
 * `arcfringe simulate`: the written visibilities against closed forms (REFERENCES.md §2, §5–7)
 * for each way the sky is computed, the noise weights against the radiometer equation, and the
 * position of a simulated source in a dirty image made by `image` from each file format.
 */
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { expectAbs, expectRel } from "../helpers.js";
import { cleanScratch, expectOk, fitsPeak, readCsvColumns, runCli, scratch, smallObservation, writeJson } from "./cliHelpers.js";

const C = 299_792_458; // m/s (exact, SI)
const K_B = 1.380649e-23; // J/K (exact, SI 2019)
const ARCSEC = Math.PI / 180 / 3600;

/** Gaussian primary beam of FWHM 1.13 λ/D (REFERENCES.md §7, common practice) at offset r [arcsec]. */
function beam(rArcsec: number, freqHz: number, dishM: number): number {
  const fwhm = (1.13 * C) / freqHz / dishM;
  const r = rArcsec * ARCSEC;
  return Math.exp((-4 * Math.LN2 * r * r) / (fwhm * fwhm));
}

/** Largest |model − data| over a table, for a model V(u, v, ν) = (re, im). */
function maxError(cols: Record<string, number[]>, model: (u: number, v: number, f: number) => [number, number]): number {
  let worst = 0;
  for (let k = 0; k < cols.u_lambda.length; k++) {
    const [re, im] = model(cols.u_lambda[k], cols.v_lambda[k], cols.freq_hz[k]);
    worst = Math.max(worst, Math.hypot(cols.re_jy[k] - re, cols.im_jy[k] - im));
  }
  return worst;
}

afterAll(cleanScratch);

describe("arcfringe simulate", () => {
  let dir = "";
  let obs = "";
  beforeAll(() => {
    dir = scratch("simulate");
    obs = smallObservation(dir);
  });

  it("a point source without a lens: V = F·A(r)·exp(−2πi(u·x0 + v·y0)), weights from the radiometer equation", () => {
    const sky = writeJson(join(dir, "point.json"), { lens: [], source: [{ type: "point_source", flux: 0.01, x: -0.7, y: 0.3 }] });
    const out = join(dir, "point-clean.csv");
    expectOk(runCli(["simulate", "--sky", sky, "--config", obs, "--out", out, "--no-noise"]));
    const cols = readCsvColumns(out);
    expect(cols.u_lambda.length).toBeGreaterThan(500);
    // REFERENCES.md §5 (point source, internal sign). Visibilities are stored as float32 (as
    // UVFITS stores them): each part is off by ≤ 2^-24·|V| from rounding (IEEE 754), the modulus
    // by ≤ √2·2^-23·F allowing one ulp per part; 1e-12 Jy covers the double-precision phases (≤ 15
    // rad). A sign or position error would be ~F = 0.01 Jy.
    const err = maxError(cols, (u, v, f) => {
      const a = 0.01 * beam(Math.hypot(0.7, 0.3), f, 12);
      const ph = -2 * Math.PI * (u * -0.7 * ARCSEC + v * 0.3 * ARCSEC);
      return [a * Math.cos(ph), a * Math.sin(ph)];
    });
    expect(err, `max |ΔV| = ${err} Jy`).toBeLessThan(Math.SQRT2 * 2 ** -23 * 0.01 + 1e-12);
    // Radiometer equation (REFERENCES.md §6): SEFD = 2kT/(η_a πD²/4), σ = SEFD/(η_c sqrt(2 Δν τ))
    // per correlation and part, Stokes I σ/√2 (CONVENTIONS.md); η_c = 0.88 by default (DESIGN.md).
    const sefd = (2 * K_B * 80) / (0.7 * Math.PI * 36) / 1e-26;
    const sigmaI = sefd / (0.88 * Math.sqrt(2 * 1e9 * 300)) / Math.SQRT2;
    for (const w of [cols.weight[0], cols.weight[cols.weight.length - 1]]) expectRel(w, 1 / sigmaI ** 2, 1e-12, "weight = 1/σ_I²");
  });

  it("a Sérsic n = 0.5 source without a lens (ray-traced grid + NUFFT) equals the closed-form Gaussian", () => {
    // Sérsic n = 0.5 has b_n = ln 2 (REFERENCES.md §4), so I ∝ exp(−ln2·ξ²/R_e²): a Gaussian of
    // circularised σ = R_e/sqrt(2 ln 2) with the same q and pa, whose visibility is
    // F exp(−2π²σ²(u'²/q + q v'²)) e^{−2πi(u x0 + v y0)} (REFERENCES.md §5), times the beam at the centre.
    const src = { type: "sersic", flux: 0.01, r_eff: 0.1, n: 0.5, q: 0.7, pa: 30, x: 0.2, y: -0.1 };
    const sky = writeJson(join(dir, "sersic.json"), { lens: [], source: [src] });
    const out = join(dir, "sersic.csv");
    expectOk(runCli(["simulate", "--sky", sky, "--config", obs, "--out", out, "--no-noise"]));
    const cols = readCsvColumns(out);
    const sigma = (src.r_eff / Math.sqrt(2 * Math.LN2)) * ARCSEC;
    const phi = (src.pa * Math.PI) / 180;
    const err = maxError(cols, (u, v, f) => {
      const up = u * Math.sin(phi) + v * Math.cos(phi);
      const vp = -u * Math.cos(phi) + v * Math.sin(phi);
      const a = src.flux * beam(Math.hypot(src.x, src.y), f, 12) * Math.exp(-2 * Math.PI ** 2 * sigma ** 2 * (up * up / src.q + src.q * vp * vp));
      const ph = -2 * Math.PI * (u * src.x + v * src.y) * ARCSEC;
      return [a * Math.cos(ph), a * Math.sin(ph)];
    });
    // Error budget (analytic): s×s sub-rays average a pixel with the window
    // sin(πuΔ)/(s·sin(πuΔ/s)) per axis, not the sinc(uΔ) that is divided out; the ratio is
    // πuh/sin(πuh) ≈ 1 + (πuh)²/6 with h = Δ/s. The bright pixels of this compact source are
    // refined to 16×16 sub-rays (h ≈ 0.005″, u ≤ 4.6e5 λ): ≤ 2e-4 per axis; the faint unrefined
    // ones (h ≈ 0.02″, 3e-3) carry a few per cent of the flux. The beam's variation across the
    // source adds 1e-4 (module comment of simulate.ts). Bound 5e-4·F; measured 1.1e-4·F.
    expect(err, `max |ΔV| = ${err} Jy`).toBeLessThan(5e-4 * src.flux);
  });

  it("a point source behind an SIS: two images at β ± θ_E with μ = 3 and −1 (REFERENCES.md §2)", () => {
    // SIS θ_E = 1″, β = 0.5″ East: images at +1.5″ (μ = 3) and −0.5″ (μ = −1), REFERENCES.md §2
    // table (β/θ_E = 0.5). Images found by Newton to 1e-10″ → phase errors ≤ 2π·u·1e-10″ ≈ 1e-9
    // (≤ 4e-10 Jy on the 0.04 Jy total); float32 storage adds ≤ √2·2^-23·|V| (one ulp per part).
    const sky = writeJson(join(dir, "sis-point.json"), {
      lens: [{ type: "sie", theta_E: 1.0, q: 1, pa: 0, x: 0, y: 0 }],
      source: [{ type: "point_source", flux: 0.01, x: 0.5, y: 0 }],
    });
    const out = join(dir, "sis-point.csv");
    expectOk(runCli(["simulate", "--sky", sky, "--config", obs, "--out", out, "--no-noise"]));
    const cols = readCsvColumns(out);
    const images: Array<[number, number]> = [[1.5, 3], [-0.5, 1]];
    const err = maxError(cols, (u, _v, f) => {
      let re = 0, im = 0;
      for (const [x, mu] of images) {
        const a = 0.01 * mu * beam(Math.abs(x), f, 12);
        const ph = -2 * Math.PI * u * x * ARCSEC;
        re += a * Math.cos(ph);
        im += a * Math.sin(ph);
      }
      return [re, im];
    });
    expect(err, `max |ΔV| = ${err} Jy`).toBeLessThan(Math.SQRT2 * 2 ** -23 * 0.04 + 4e-10);
  });

  describe("a point source at (−0.7″, +0.3″) written as .uvfits, .h5 and .csv", () => {
    for (const ext of ["uvfits", "h5", "csv"]) {
      it(`image puts the peak of the .${ext} file at 0.7″ West, 0.3″ North`, () => {
        const sky = writeJson(join(dir, `pt-${ext}.json`), { lens: [], source: [{ type: "point_source", flux: 0.01, x: -0.7, y: 0.3 }] });
        const file = join(dir, `point.${ext}`);
        const sim = runCli(["simulate", "--sky", sky, "--config", obs, "--out", file, "--seed", "7"]);
        expectOk(sim);
        expect(sim.stdout).toMatch(/σ per visibility/);
        const img = join(dir, `img-${ext}`);
        expectOk(runCli(["image", file, "--out", img, "--size", "128", "--cell", "0.05"]));
        // Truth from the sky file; half a pixel is the precision of a brightest pixel (S/N ≈ 120).
        const p = fitsPeak(join(img, "dirty.fits"));
        expectAbs(p.xArcsec, -0.7, 0.025, `peak x of .${ext}`);
        expectAbs(p.yArcsec, 0.3, 0.025, `peak y of .${ext}`);
      });
    }
  });
});
