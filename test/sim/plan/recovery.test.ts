import { describe, it } from "vitest";
import { highPass } from "../../../src/sim/plan/index.js";
import { ARCSEC_TO_RAD } from "../../../src/units.js";
import { expectRel } from "../../helpers.js";

/** Circular Gaussian of total flux 1 on an N×N model grid (Jy/pixel, point-sampled). */
function gaussianImage(n: number, cellArcsec: number, sigmaArcsec: number): Float64Array {
  const img = new Float64Array(n * n);
  const norm = (cellArcsec * cellArcsec) / (2 * Math.PI * sigmaArcsec * sigmaArcsec);
  for (let j = 0; j < n; j++) {
    for (let i = 0; i < n; i++) {
      const x = (n / 2 - i) * cellArcsec, y = (j - n / 2) * cellArcsec;
      img[j * n + i] = norm * Math.exp(-(x * x + y * y) / (2 * sigmaArcsec * sigmaArcsec));
    }
  }
  return img;
}

describe("highPass (the recovered-flux filter)", () => {
  it("highPass removes exp(−2π²σ²u_c²)'s complement from a Gaussian's centre", () => {
    // Analytic: the part of a Gaussian of σ inside |u| < u_c is
    //   J_low(0) = ∫_{|u|<u_c} e^{−2π²σ²|u|²} d²u = (1 − e^{−2π²σ²u_c²})/(2πσ²),
    // so J_high(0)/J(0) = e^{−2π²σ²u_c²}. On the padded FFT grid the disc |u| < u_c is a set of
    // lattice bins (radius ~25 bins here): the lattice count differs from the disc area by a few
    // × 1e-3 (Gauss circle problem), weighted by the spectrum at the edge → 1e-2 on the ratio.
    const n = 256, cell = 0.05, sigma = 0.3;
    const img = gaussianImage(n, cell, sigma);
    const du = 1 / (512 * cell * ARCSEC_TO_RAD);
    const uc = 25.3 * du;
    const hp = highPass(img, n, cell, uc);
    const s = sigma * ARCSEC_TO_RAD;
    const c = (n / 2) * n + n / 2;
    expectRel(hp[c] / img[c], Math.exp(-2 * Math.PI ** 2 * s * s * uc * uc), 1e-2, "J_high(0)/J(0)");
    // A point source (one pixel of F) loses only the pedestal of the hole: J_low = F·π u_c² Δ²
    // per pixel (the hole's area times the pixel area, analytic), so J_high/J = 1 − π(25.3/512)².
    // The lattice count of a 25-bin disc differs from its area by ~1 % of the removed 0.8 % → 1e-3.
    const point = new Float64Array(n * n);
    point[c] = 0.002;
    const hpPoint = highPass(point, n, cell, uc);
    expectRel(hpPoint[c] / 0.002, 1 - Math.PI * (25.3 / 512) ** 2, 1e-3, "point source");
  });
});
