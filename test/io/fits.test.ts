import { describe, it, expect } from "vitest";
import { execFileSync } from "node:child_process";
import { mkdtempSync, readFileSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { writeFitsImage, readFitsImage, axisWcs, headerBeam, sinOffsetToSkyDeg, decodeFitsImage } from "../../src/io/fits.js";
import { formatCard, formatReal, headerValue } from "../../src/io/fitsHeader.js";
import { ARCSEC_TO_RAD } from "../../src/units.js";
import { expectAbs } from "../helpers.js";

/**
 * The Python that has astropy: $ARCFRINGE_PYTHON, then `python3` on PATH, then Debian's
 * /usr/bin/python3 (a pyenv shim on PATH may hide the system package). Fails (does not skip) with
 * an install hint when none has astropy.
 */
function astropyPython(): string {
  const candidates = [process.env.ARCFRINGE_PYTHON, "python3", "/usr/bin/python3"].filter((c): c is string => !!c);
  for (const py of candidates) {
    try {
      execFileSync(py, ["-c", "import astropy"], { stdio: "pipe" });
      return py;
    } catch {
      // try the next interpreter
    }
  }
  throw new Error("python3 with astropy is required for this test: install it with `apt-get install -y python3-astropy`");
}

function runAstropy(script: string, args: string[]): string {
  return execFileSync(astropyPython(), ["-c", script, ...args], { encoding: "utf8" });
}

const N = 64;
const CELL = 0.05; // arcsec
const RA0 = 150.1;
const DEC0 = -30.5; // far from the equator so the cos(Dec) factor matters
// Bright pixel 0.7″ East, 0.3″ North: column i = N/2 − x/Δ = 18, row j = N/2 + y/Δ = 38.
const I_BRIGHT = N / 2 - 14;
const J_BRIGHT = N / 2 + 6;

function brightImage(): Float64Array {
  const data = new Float64Array(N * N);
  data[J_BRIGHT * N + I_BRIGHT] = 2.5;
  return data;
}

describe("FITS images", () => {
  const dir = mkdtempSync(join(tmpdir(), "arcfringe-fits-"));

  it("formatCard writes 80-character fixed-format cards (FITS Standard 4.0 §4.2)", () => {
    const c = formatCard({ keyword: "CDELT1", value: -1.3888888888888889e-5, comment: "x" });
    expect(c.length).toBe(80);
    expect(c.slice(0, 10)).toBe("CDELT1  = ");
    // Fixed format: the value is right-justified ending in column 30 (Standard §4.2.4).
    // A value whose exact round trip needs more than 20 characters uses the free format (§4.2.4).
    expect(Number(c.slice(10).split("/")[0])).toBe(-1.3888888888888889e-5); // exact round trip
    const d = formatCard({ keyword: "CRPIX1", value: 33 });
    expect(d.slice(10, 30)).toBe("                33.0"); // fixed format: right-justified to column 30
    const s = formatCard({ keyword: "BUNIT", value: "Jy" });
    // Strings: quote in column 11, padded to at least 8 characters (Standard §4.2.1).
    expect(s.slice(10, 20)).toBe("'Jy      '");
    expect(formatReal(1e-7, "K")).toBe("1.0E-07");
  });

  it("writeFitsImage → readFitsImage round-trips data, WCS and beam (our reader)", () => {
    const path = join(dir, "point.fits");
    writeFitsImage(path, {
      data: brightImage(), nx: N, ny: N, cellArcsec: CELL,
      celestial: { kind: "sky", raDeg: RA0, decDeg: DEC0 }, bunit: "Jy/beam",
      beam: { bmajArcsec: 0.2, bminArcsec: 0.1, bpaDeg: 35 }, objectName: "test field",
      history: ["written by the fits test"], bitpix: -64, date: new Date("2024-01-02T03:04:05Z"),
    });
    const bytes = readFileSync(path);
    expect(bytes.length % 2880).toBe(0); // FITS Standard §3.1: whole 2880-byte blocks
    const img = readFitsImage(path);
    expect(img.shape).toEqual([N, N]);
    let argmax = 0;
    for (let p = 0; p < img.data.length; p++) if (img.data[p] > img.data[argmax]) argmax = p;
    expect(argmax).toBe(J_BRIGHT * N + I_BRIGHT);
    expect(img.data[argmax]).toBe(2.5); // float64 is exact
    const ax1 = axisWcs(img.header, 1, path);
    const ax2 = axisWcs(img.header, 2, path);
    expect(ax1.ctype).toBe("RA---SIN");
    expect(ax2.ctype).toBe("DEC--SIN");
    expect(ax1.cdelt).toBeLessThan(0);
    expect(ax1.crpix).toBe(N / 2 + 1);
    // Intermediate coordinate of FITS pixel p1 = i + 1: (p1 − CRPIX1)·CDELT1 must equal the model-grid
    // x = (N/2 − i)Δ (CONVENTIONS.md model grid). Exact arithmetic up to the double round trip.
    expectAbs((I_BRIGHT + 1 - ax1.crpix) * ax1.cdelt * 3600, 0.7, 1e-12, "x of bright pixel [arcsec]");
    expectAbs((J_BRIGHT + 1 - ax2.crpix) * ax2.cdelt * 3600, 0.3, 1e-12, "y of bright pixel [arcsec]");
    const beam = headerBeam(img.header)!;
    expectAbs(beam.bmajArcsec, 0.2, 1e-12, "BMAJ");
    expect(headerValue(img.header, "ORIGIN")).toBe("arcfringe");
    expect(headerValue(img.header, "OBJECT")).toBe("test field");
    expect(img.header.history[0]).toBe("written by the fits test");
  });

  it("astropy reads our image: CDELT1 < 0 and pixel_to_world of the bright pixel is the exact SIN position", () => {
    const path = join(dir, "point32.fits");
    writeFitsImage(path, {
      data: brightImage(), nx: N, ny: N, cellArcsec: CELL,
      celestial: { kind: "sky", raDeg: RA0, decDeg: DEC0, radesys: "FK5" }, bunit: "Jy/beam",
    });
    const out = runAstropy(
      [
        "import sys, json, warnings, numpy as np",
        "from astropy.io import fits",
        "from astropy.wcs import WCS",
        "warnings.simplefilter('error'); warnings.simplefilter('ignore', ResourceWarning)", // any FITS/WCS warning about our header fails the test
        "h = fits.open(sys.argv[1])",
        "h.verify('exception')",
        "d = h[0].data; w = WCS(h[0].header)",
        "j, i = np.unravel_index(np.argmax(d), d.shape)",
        "c = w.pixel_to_world(i, j)",
        "print(json.dumps({'i': int(i), 'j': int(j), 'cdelt1': h[0].header['CDELT1'], 'ra': c.ra.deg, 'dec': c.dec.deg, 'frame': c.frame.name}))",
      ].join("\n"),
      [path],
    );
    const r = JSON.parse(out) as { i: number; j: number; cdelt1: number; ra: number; dec: number; frame: string };
    expect(r.i).toBe(I_BRIGHT);
    expect(r.j).toBe(J_BRIGHT);
    expect(r.cdelt1).toBeLessThan(0);
    expect(r.frame).toBe("fk5");
    // Expected: exact inverse SIN projection of (l, m) = (0.7″, 0.3″) (Calabretta & Greisen 2002 §5.1.5).
    const [raExp, decExp] = sinOffsetToSkyDeg(0.7 * ARCSEC_TO_RAD, 0.3 * ARCSEC_TO_RAD, RA0, DEC0);
    // Sanity of the expected value itself: small-offset form RA = RA0 + x/cos(Dec0) to ~1e-10 deg
    // (the SIN terms beyond first order are ~x·y·tan(Dec0) ~ 1e-12 rad here).
    expectAbs(raExp, RA0 + 0.7 / 3600 / Math.cos((DEC0 * Math.PI) / 180), 1e-9, "RA small-offset form");
    // astropy (wcslib) and our formula are both exact: agree to 1e-10 deg (0.36 µas), far below a pixel.
    expectAbs(r.ra, raExp, 1e-10, "RA from astropy [deg]");
    expectAbs(r.dec, decExp, 1e-10, "Dec from astropy [deg]");
  });

  it("cube with a FREQ axis: astropy reads the spectral WCS and our reader the channel planes", () => {
    const path = join(dir, "cube.fits");
    const nz = 5, nx = 8, ny = 8;
    const data = new Float32Array(nx * ny * nz);
    for (let k = 0; k < nz; k++) data[k * nx * ny + 3 * nx + 2] = k + 1; // pixel (2, 3) ramps with channel
    writeFitsImage(path, {
      data, nx, ny, nChannels: nz, cellArcsec: 0.1,
      celestial: { kind: "sky", raDeg: 10, decDeg: 20 }, bunit: "Jy/beam",
      spectral: { type: "FREQ", refValue: 230.538e9, delta: 2e6, refChannel: 1, specsys: "LSRK", restFreqHz: 230.538e9 },
    });
    const img = readFitsImage(path);
    expect(img.shape).toEqual([nx, ny, nz]);
    for (let k = 0; k < nz; k++) expect(img.data[k * nx * ny + 3 * nx + 2]).toBe(k + 1);
    const out = runAstropy(
      [
        "import sys, json, warnings",
        "from astropy.io import fits",
        "from astropy.wcs import WCS",
        "warnings.simplefilter('error'); warnings.simplefilter('ignore', ResourceWarning)",
        "h = fits.open(sys.argv[1]); w = WCS(h[0].header)",
        "s = w.sub(['spectral'])",
        "f = s.pixel_to_world(4)",
        "print(json.dumps({'shape': list(h[0].data.shape), 'v': float(h[0].data[2, 3, 2]), 'freq': f.to_value('Hz'), 'specsys': h[0].header['SPECSYS'], 'naxis': w.naxis}))",
      ].join("\n"),
      [path],
    );
    const r = JSON.parse(out) as { shape: number[]; v: number; freq: number; specsys: string; naxis: number };
    expect(r.shape).toEqual([nz, ny, nx]); // numpy order is reversed (FITS axis 1 fastest)
    expect(r.v).toBe(3);
    expect(r.naxis).toBe(3);
    expect(r.specsys).toBe("LSRK");
    // Channel index 4 (0-based) = CRVAL3 + 4·CDELT3 (linear FREQ axis, Greisen et al. 2006). Exact.
    expectAbs(r.freq, 230.538e9 + 4 * 2e6, 1e-3, "frequency of channel 4 [Hz]");
  });

  it("source-plane images use linear XOFFSET/YOFFSET axes in arcsec that astropy accepts", () => {
    const path = join(dir, "source.fits");
    const data = new Float64Array(16 * 16);
    data[5 * 16 + 4] = 1; // x = (8 − 4)·0.02 = 0.08″, y = (5 − 8)·0.02 = −0.06″
    writeFitsImage(path, { data, nx: 16, ny: 16, cellArcsec: 0.02, celestial: { kind: "offset" }, bunit: "Jy/arcsec2" });
    const out = runAstropy(
      [
        "import sys, json, warnings",
        "from astropy.io import fits",
        "from astropy.wcs import WCS",
        "warnings.simplefilter('error'); warnings.simplefilter('ignore', ResourceWarning)",
        "h = fits.open(sys.argv[1]); w = WCS(h[0].header)",
        "x, y = w.wcs_pix2world([[4, 5]], 0)[0]",
        "print(json.dumps({'x': x, 'y': y, 'u': [str(u) for u in w.wcs.cunit]}))",
      ].join("\n"),
      [path],
    );
    const r = JSON.parse(out) as { x: number; y: number; u: string[] };
    // Linear axes: value = (p − CRPIX)·CDELT in arcsec (WCS paper I, eq. 1-3). Exact to rounding.
    expectAbs(r.x, 0.08, 1e-12, "source-plane x [arcsec]");
    expectAbs(r.y, -0.06, 1e-12, "source-plane y [arcsec]");
    expect(r.u).toEqual(["arcsec", "arcsec"]);
  });

  it("reads a FITS image written by astropy (BITPIX 16 with BSCALE/BZERO, BLANK)", () => {
    const path = join(dir, "astropy_int.fits");
    runAstropy(
      [
        "import sys, numpy as np",
        "from astropy.io import fits",
        "d = np.arange(12, dtype=np.int16).reshape(3, 4); d[1, 2] = -32768",
        "h = fits.PrimaryHDU(d); h.header['BSCALE'] = 0.5; h.header['BZERO'] = 10.0; h.header['BLANK'] = -32768",
        "h.writeto(sys.argv[1], overwrite=True, output_verify='exception')",
      ].join("\n"),
      [path],
    );
    const img = readFitsImage(path);
    expect(img.shape).toEqual([4, 3]);
    expect(img.data[1]).toBe(10.5); // BZERO + BSCALE·raw (FITS Standard §5.3) with raw = 1
    expect(Number.isNaN(img.data[1 * 4 + 2])).toBe(true);
  });

  it("rejects a truncated file with one clear line", () => {
    const bytes = readFileSync(join(dir, "point.fits"));
    expect(() => decodeFitsImage(bytes.subarray(0, 2880 * 2), "cut.fits")).toThrow(/cut.fits: header declares .* the file is truncated/);
    expect(() => decodeFitsImage(new Uint8Array(3000), "junk.bin")).toThrow(/junk.bin: not a FITS file/);
  });

  it("cleans up", () => {
    rmSync(dir, { recursive: true, force: true });
  });
});
