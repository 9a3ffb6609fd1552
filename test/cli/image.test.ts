/**
 * `arcfringe image`: sign and orientation pinned by a file made outside the project, and the
 * FITS/PNG products.
 */
import { existsSync, readFileSync } from "node:fs";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { headerNumber, headerString } from "../../src/io/fitsHeader.js";
import { readFitsImage } from "../../src/io/fits.js";
import { SHARED_DIR, expectAbs } from "../helpers.js";
import { cleanScratch, expectOk, fitsPeak, runCli, scratch } from "./cliHelpers.js";

const REFERENCE = join(SHARED_DIR, "data", "reference", "point_1E_0p5N.uvfits");
const CELL = 0.05;

afterAll(cleanScratch);

describe("arcfringe image on the reference point source", () => {
  let dir = "";
  let report: { peak: { valueJyPerBeam: number; xArcsec: number; yArcsec: number }; thermalNoiseJyPerBeam: number; beam: { bmajArcsec: number } };
  beforeAll(() => {
    dir = scratch("image-ref");
    const r = runCli(["image", REFERENCE, "--out", dir, "--size", "128", "--cell", String(CELL), "--json"]);
    expectOk(r);
    report = JSON.parse(r.stdout);
  });

  it("writes dirty.fits, psf.fits and dirty.png", () => {
    for (const f of ["dirty.fits", "psf.fits"]) expect(readFileSync(join(dir, f)).subarray(0, 6).toString("latin1")).toBe("SIMPLE");
    // PNG signature (PNG Specification §5.2).
    expect([...readFileSync(join(dir, "dirty.png")).subarray(0, 8)]).toEqual([137, 80, 78, 71, 13, 10, 26, 10]);
  });

  it("puts the peak 1.0″ East, 0.5″ North in the FITS WCS, East to the left", () => {
    // Truth: 1.0″ East, 0.5″ North (shared/data/reference/README.md, checked there with wsclean).
    // Tolerance: half a pixel, the precision of a brightest-pixel position.
    const p = fitsPeak(join(dir, "dirty.fits"));
    expect(p.cellXArcsec).toBeLessThan(0); // CDELT1 < 0: East left (CONVENTIONS.md, Greisen & Calabretta 2002)
    expect(p.cellYArcsec).toBeGreaterThan(0);
    expectAbs(Math.abs(p.cellXArcsec), CELL, 1e-9, "|CDELT1| [arcsec]");
    expectAbs(p.xArcsec, 1.0, CELL / 2, "peak x (East) [arcsec]");
    expectAbs(p.yArcsec, 0.5, CELL / 2, "peak y (North) [arcsec]");
    // The source sits exactly on a pixel centre (1.0/0.05 = 20 cells), so the peak pixel holds the
    // full flux: 20 mJy (README) within 5σ of the thermal noise the weights imply.
    expectAbs(p.value, 0.020, 5 * report.thermalNoiseJyPerBeam, "peak [Jy/beam]");
    // The printed sub-pixel peak agrees with the truth to a tenth of a pixel (no noise bias at S/N ≈ 450).
    expectAbs(report.peak.xArcsec, 1.0, CELL / 10, "reported peak x");
    expectAbs(report.peak.yArcsec, 0.5, CELL / 10, "reported peak y");
  });

  it("writes the phase centre, SIN projection, Jy/beam and the beam into the headers", () => {
    const img = readFitsImage(join(dir, "dirty.fits"));
    const where = "dirty.fits";
    expect(headerString(img.header, "CTYPE1")).toBe("RA---SIN");
    expect(headerString(img.header, "CTYPE2")).toBe("DEC--SIN");
    expect(headerString(img.header, "BUNIT")).toBe("Jy/beam");
    // Phase centre RA 210°, Dec −45° (README of the reference file).
    expectAbs(headerNumber(img.header, "CRVAL1", where), 210, 1e-9, "CRVAL1");
    expectAbs(headerNumber(img.header, "CRVAL2", where), -45, 1e-9, "CRVAL2");
    expect(headerNumber(img.header, "CRPIX1", where)).toBe(65); // N/2 + 1 (CONVENTIONS.md model grid)
    const bmaj = headerNumber(img.header, "BMAJ", where) * 3600;
    const bmin = headerNumber(img.header, "BMIN", where) * 3600;
    expect(bmaj).toBeGreaterThanOrEqual(bmin);
    expect(bmin).toBeGreaterThan(0);
    expectAbs(bmaj, report.beam.bmajArcsec, 1e-6, "BMAJ = printed beam [arcsec]");
  });

  it("psf.fits peaks at 1 on the phase-centre pixel (normalised dirty beam)", () => {
    // The dirty beam of any weighting is 1 at zero lag by definition (Σ w'cos 0 / Σ w'; analytic).
    const p = fitsPeak(join(dir, "psf.fits"));
    expectAbs(p.xArcsec, 0, 1e-12, "PSF peak x");
    expectAbs(p.yArcsec, 0, 1e-12, "PSF peak y");
    expectAbs(p.value, 1, 1e-6, "PSF peak (float32 storage)");
  });

  it("--stokes-i gives the same natural-weighted image for paired XX/YY of equal weight", () => {
    // w_I (V1+V2)/2 with w_I = 4w²/2w = 2w equals w V1 + w V2 (CONVENTIONS.md Stokes I; analytic).
    const dir2 = scratch("image-ref-I");
    expectOk(runCli(["image", REFERENCE, "--out", dir2, "--size", "128", "--cell", String(CELL), "--stokes-i"]));
    const a = readFitsImage(join(dir, "dirty.fits")).data;
    const b = readFitsImage(join(dir2, "dirty.fits")).data;
    let maxDiff = 0;
    for (let k = 0; k < a.length; k++) maxDiff = Math.max(maxDiff, Math.abs(a[k] - b[k]));
    // float32 storage of a 20 mJy peak: a few ulp ≈ 1e-9 Jy; allow 1e-8.
    expect(maxDiff).toBeLessThan(1e-8);
    expect(existsSync(join(dir2, "dirty.png"))).toBe(true);
  });
});
