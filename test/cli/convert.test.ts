/**
 * `arcfringe convert`: the sign convention survives each format (the reference point source of
 * shared/data/reference, 1.0″ East and 0.5″ North, made outside the project), and the counts of
 * what is kept.
 */
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { SHARED_DIR, expectAbs } from "../helpers.js";
import { cleanScratch, expectOk, fitsPeak, readCsvColumns, runCli, scratch } from "./cliHelpers.js";

const REFERENCE = join(SHARED_DIR, "data", "reference", "point_1E_0p5N.uvfits");
const ARCSEC = Math.PI / 180 / 3600;

/**
 * Weighted mean of d·e^{+2πi(u x0 + v y0)}: for a point source of flux F at (x0, y0) in the
 * internal convention V = F e^{−2πi(u x0 + v y0)} (CONVENTIONS.md, REFERENCES.md §5) this is F
 * (real); noise per part 1/sqrt(Σw) (analytic).
 */
function phaseRotatedMean(cols: Record<string, number[]>, x0Arcsec: number, y0Arcsec: number): { re: number; im: number; sigma: number } {
  let sw = 0, sr = 0, si = 0;
  for (let k = 0; k < cols.u_lambda.length; k++) {
    const ph = 2 * Math.PI * (cols.u_lambda[k] * x0Arcsec + cols.v_lambda[k] * y0Arcsec) * ARCSEC;
    const c = Math.cos(ph), s = Math.sin(ph), w = cols.weight[k];
    sr += w * (cols.re_jy[k] * c - cols.im_jy[k] * s);
    si += w * (cols.re_jy[k] * s + cols.im_jy[k] * c);
    sw += w;
  }
  return { re: sr / sw, im: si / sw, sigma: 1 / Math.sqrt(sw) };
}

afterAll(cleanScratch);

describe("arcfringe convert", () => {
  let dir = "";
  beforeAll(() => {
    dir = scratch("convert");
  });

  it("UVFITS → CSV --stokes-i: 8010 Stokes I rows in the internal convention, source at (+1.0″, +0.5″)", () => {
    const csv = join(dir, "ref-I.csv");
    const r = runCli(["convert", REFERENCE, csv, "--stokes-i", "--json"]);
    expectOk(r);
    const j = JSON.parse(r.stdout);
    // README of the reference file: 16020 entries (XX, YY), 8010 Stokes I visibilities.
    expect(j.entriesInFile).toBe(16020);
    expect(j.written).toBe(8010);
    expect(j.stokesI.pairs).toBe(8010);
    const cols = readCsvColumns(csv);
    expect(cols.u_lambda.length).toBe(8010);
    // Phase-rotated to the true position the data add up to 20 mJy (README), within 5σ; rotated
    // to the mirror position (the wrong sign) they do not.
    const at = phaseRotatedMean(cols, 1.0, 0.5);
    expectAbs(at.re, 0.020, 5 * at.sigma, "Re at (+1.0″, +0.5″) [Jy]");
    expectAbs(at.im, 0, 5 * at.sigma, "Im at (+1.0″, +0.5″) [Jy]");
    const mirror = phaseRotatedMean(cols, -1.0, -0.5);
    expect(Math.hypot(mirror.re, mirror.im)).toBeLessThan(0.1 * 0.020);
  });

  it("UVFITS → HDF5 → CSV → UVFITS keeps every correlation and the source position", () => {
    const h5 = join(dir, "ref.h5");
    const csv = join(dir, "ref.csv");
    const back = join(dir, "ref-back.uvfits");
    expectOk(runCli(["convert", REFERENCE, h5]));
    expectOk(runCli(["convert", h5, csv]));
    const r = runCli(["convert", csv, back]);
    expectOk(r);
    expect(r.stdout).toMatch(/wrote .*ref-back\.uvfits \(uvfits\): 16020 visibilities/);
    const cols = readCsvColumns(csv);
    expect(cols.u_lambda.length).toBe(16020); // XX and YY kept (README: 2 × 8010)
    expect(new Set(cols.correlation)).toEqual(new Set([-5, -6])); // AIPS codes of XX, YY (AIPS Memo 117)
    const at = phaseRotatedMean(cols, 1.0, 0.5);
    expectAbs(at.re, 0.020, 5 * at.sigma, "Re at the source after UVFITS → HDF5 → CSV");
    // The UVFITS written back (data conjugated again by the writer) still images the source there.
    const img = join(dir, "img-back");
    expectOk(runCli(["image", back, "--out", img, "--size", "128", "--cell", "0.05"]));
    const p = fitsPeak(join(img, "dirty.fits"));
    expectAbs(p.xArcsec, 1.0, 0.025, "peak x after the round trip (half a pixel)");
    expectAbs(p.yArcsec, 0.5, 0.025, "peak y after the round trip (half a pixel)");
  });
});
