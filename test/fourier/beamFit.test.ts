import { describe, it, expect } from "vitest";
import { fitBeam } from "../../src/fourier/beamFit.js";
import { dirtyImage } from "../../src/fourier/dirty.js";
import { RAD_TO_ARCSEC, DEG_TO_RAD } from "../../src/units.js";
import { expectAbs, expectRel } from "../helpers.js";

const FWHM_PER_SIGMA = 2 * Math.sqrt(2 * Math.LN2); // Gaussian FWHM = 2√(2 ln 2) σ (analytic)

/** Elliptical Gaussian on the model grid: major axis along pa (North through East), peak 1 at (N/2, N/2). */
function gaussianImage(n: number, cell: number, fwhmMaj: number, fwhmMin: number, paDeg: number): Float64Array {
  const img = new Float64Array(n * n);
  const sMaj = fwhmMaj / FWHM_PER_SIGMA, sMin = fwhmMin / FWHM_PER_SIGMA;
  const sp = Math.sin(paDeg * DEG_TO_RAD), cp = Math.cos(paDeg * DEG_TO_RAD);
  for (let j = 0; j < n; j++) {
    for (let i = 0; i < n; i++) {
      const x = (n / 2 - i) * cell, y = (j - n / 2) * cell; // CONVENTIONS.md model grid
      const a = x * sp + y * cp; // along the major axis (CONVENTIONS.md rotation)
      const b = -x * cp + y * sp;
      img[j * n + i] = Math.exp(-0.5 * ((a / sMaj) ** 2 + (b / sMin) ** 2));
    }
  }
  return img;
}

describe("fitBeam", () => {
  it("recovers BMAJ, BMIN, BPA of an exact elliptical Gaussian (analytic), for PAs in every quadrant", () => {
    for (const pa of [0, 30, 75, 120, 165]) {
      const fit = fitBeam(gaussianImage(64, 0.05, 0.6, 0.3, pa), 64, 0.05);
      // The model is exact, so only round-off limits the fit: 1e-6 relative / 1e-4 degree.
      expectRel(fit.bmajArcsec, 0.6, 1e-6, `BMAJ at pa ${pa}`);
      expectRel(fit.bminArcsec, 0.3, 1e-6, `BMIN at pa ${pa}`);
      expectAbs(fit.bpaDeg, pa, 1e-4, `BPA at pa ${pa}`);
    }
  });

  it("a beam stretched toward North-East (pa 45°) is reported at 45°, not 135° (East = left on the grid)", () => {
    const fit = fitBeam(gaussianImage(64, 0.05, 0.8, 0.2, 45), 64, 0.05);
    expectAbs(fit.bpaDeg, 45, 1e-4, "BPA");
  });

  it("Gaussian uv taper → analytic Gaussian beam: σ_x = 1/(2π σ_u) (Fourier pair, REFERENCES.md §5)", () => {
    // Regular uv lattice with natural weights w = exp(−u'²/(2σa²) − v'²/(2σb²)), rotated by paUv.
    // The PSF is the Fourier transform: a Gaussian with σ = 1/(2π σ_uv) along each axis, the beam's
    // major axis along the uv minor axis (perpendicular to paUv).
    const sa = 1.5e5, sb = 0.75e5, paUv = 20; // λ; pa of the uv major axis [deg]
    const step = 6e3; // λ: lattice spacing → PSF period 1/step = 34″, far beyond the 6.4″ field
    const us: number[] = [], vs: number[] = [], ws: number[] = [];
    const sp = Math.sin(paUv * DEG_TO_RAD), cp = Math.cos(paUv * DEG_TO_RAD);
    // Half plane only (v > 0, or v = 0 and u > 0): the conjugates are added by dirtyImage. The origin is left out.
    for (let jv = 0; jv <= 100; jv++) {
      for (let iu = -100; iu <= 100; iu++) {
        if (jv === 0 && iu <= 0) continue;
        const u = iu * step, v = jv * step;
        const a = u * sp + v * cp, b = -u * cp + v * sp;
        const w = Math.exp(-0.5 * ((a / sa) ** 2 + (b / sb) ** 2));
        if (w < 1e-14) continue;
        us.push(u); vs.push(v); ws.push(w);
      }
    }
    const m = us.length;
    const vis = { uLambda: Float64Array.from(us), vLambda: Float64Array.from(vs), reJy: new Float64Array(m).fill(1), imJy: new Float64Array(m), weight: Float64Array.from(ws) };
    const cell = 0.05, n = 128;
    const res = dirtyImage(vis, { size: n, cellArcsec: cell, tolerance: 1e-9 });
    const fit = fitBeam(res.psf, n, cell);
    const bmajExp = (FWHM_PER_SIGMA / (2 * Math.PI * sb)) * RAD_TO_ARCSEC; // narrow uv axis → wide beam
    const bminExp = (FWHM_PER_SIGMA / (2 * Math.PI * sa)) * RAD_TO_ARCSEC;
    // Lattice sum vs integral: the missing origin (weight 1 of Σw ≈ 2π sa sb / step² · … ≈ 2000) shifts
    // the PSF by ≈ 5e-4; aliasing is exp(−2π² σ_x² step⁻²…) ≈ 0 → tolerance 0.3% on widths.
    expectRel(fit.bmajArcsec, bmajExp, 3e-3, "BMAJ of the tapered beam");
    expectRel(fit.bminArcsec, bminExp, 3e-3, "BMIN of the tapered beam");
    expectAbs(fit.bpaDeg, paUv + 90, 0.2, "BPA ⟂ uv major axis");
  });

  it("refuses a main lobe of too few pixels with a hint", () => {
    expect(() => fitBeam(gaussianImage(32, 1, 0.6, 0.3, 0), 32, 1)).toThrow(/covers only \d+ pixels; use a smaller cell/);
  });
});
