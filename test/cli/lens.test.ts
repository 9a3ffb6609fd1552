/**
 * `arcfringe lens`: Einstein radius, distances, Σ_crit, Einstein mass and velocity dispersion
 * against REFERENCES.md §1–2 (astropy 5.2.1 FlatLambdaCDM, H0 = 70, Ωm = 0.3), and the maps
 * written by --out against closed forms and the FITS orientation convention.
 *
 * Grid tolerance: the Einstein radius is sqrt(area/π) of the tangential critical curve traced
 * on the grid; an inscribed polygon with chords ℓ ≤ √2·cell on a circle of radius R loses a
 * relative area ≈ ℓ²/(6R²), so θ_E is short by ≈ ℓ²/(12R²) (analytic): 1.3e-5 for cell 0.01″
 * at R ≈ 1.15″, 1.4e-5 for cell 0.02″ at R ≈ 2.38″. Checks on θ_E-derived values use 1e-4;
 * distances and Σ_crit (no grid involved) use REFERENCES.md's 1e-6.
 */
import { readFileSync } from "node:fs";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { readFitsImage } from "../../src/io/fits.js";
import { headerNumber, headerString } from "../../src/io/fitsHeader.js";
import { expectAbs, expectRel } from "../helpers.js";
import { cleanScratch, expectOk, fitsPeak, runCli, scratch, writeJson } from "./cliHelpers.js";

function lensJson(model: string, extra: string[]): any {
  const r = runCli(["lens", model, "--json", ...extra]);
  expectOk(r);
  return JSON.parse(r.stdout);
}

afterAll(cleanScratch);

describe("arcfringe lens --json against REFERENCES.md §1–2", () => {
  let dir = "";
  beforeAll(() => {
    dir = scratch("lens");
  });

  it("SIS with θ_E = 1.150858″ at z 0.3 → 1.0 has σ_v = 250 km/s; distances and Σ_crit of the table", () => {
    const model = writeJson(join(dir, "sis.json"), {
      lens: [{ type: "sie", theta_E: { init: 1.150858, min: 0.5, max: 2 }, q: 1, pa: 0, x: 0, y: 0 }],
      source: [{ type: "gaussian", flux: 0.01, sigma: 0.05, q: 0.8, pa: 20, x: 0.2, y: 0.1 }],
      redshift: { lens: 0.3, source: 1.0 },
    });
    const j = lensJson(model, ["--size", "3", "--cell", "0.01"]);
    // REFERENCES.md §1 table, row z 0.3/1.0 (rtol 1e-6 as stated there).
    expectRel(j.D_l_mpc, 918.766823, 1e-6, "D_l");
    expectRel(j.D_s_mpc, 1651.914403, 1e-6, "D_s");
    expectRel(j.D_ls_mpc, 1054.715968, 1e-6, "D_ls");
    expectRel(j.sigma_crit_msun_per_arcsec2, 5.624417e10, 1e-6, "Σ_crit");
    // REFERENCES.md §2: the free θ_E is taken at its init; grid tolerance in the module comment.
    expectRel(j.einstein_radius_arcsec, 1.150858, 1e-4, "θ_E");
    expectRel(j.velocity_dispersion_kms, 250, 1e-4, "σ_v");
    // REFERENCES.md §2 table: M(<θ_E) of that SIS = 2.34029e11 M_sun (6 digits → 1e-4 with the grid).
    expectRel(j.einstein_mass_msun, 2.34029e11, 1e-4, "M(<θ_E)");
    expect(j.critical_curves.tangential.length).toBe(1);
  });

  it("θ_E = 1″ at z 0.3 → 1.0 encloses 1.766963e11 M_sun; an SIE's θ_E is its parameter", () => {
    // An SIE's critical curve is ξ = θ_E (CONVENTIONS.md), of area πθ_E², for any q.
    const model = writeJson(join(dir, "sie.json"), {
      lens: [{ type: "sie", theta_E: 1.0, q: 0.7, pa: 30, x: 0.1, y: -0.2 }],
      source: [{ type: "point_source", flux: 0.01, x: 0.1, y: -0.2 }],
      redshift: { lens: 0.3, source: 1.0 },
    });
    const j = lensJson(model, ["--size", "3", "--cell", "0.01"]);
    expectRel(j.einstein_radius_arcsec, 1.0, 1e-4, "θ_E");
    expectRel(j.einstein_mass_msun, 1.766963e11, 1e-4, "M(<1″), REFERENCES.md §1");
  });

  it("a point mass of 1e12 M_sun at z 0.5 → 2.0 has θ_E = 2.027254″", () => {
    const model = writeJson(join(dir, "pm.json"), {
      lens: [{ type: "point", mass: 1e12, x: 0, y: 0 }],
      source: [{ type: "point_source", flux: 0.01, x: 0.3, y: 0 }],
      redshift: { lens: 0.5, source: 2.0 },
    });
    const j = lensJson(model, ["--size", "5", "--cell", "0.02"]);
    // REFERENCES.md §2 table (θ_E point mass, 1e12 M_sun, z 0.5/2.0); §1 Σ_crit row 0.5/2.0.
    expectRel(j.einstein_radius_arcsec, 2.027254, 1e-4, "θ_E");
    expectRel(j.sigma_crit_msun_per_arcsec2, 7.745221e10, 1e-6, "Σ_crit");
    // Σ_crit·π(D_l θ_E)² returns the mass (REFERENCES.md §2 consistency test); 2·1e-4 from θ_E².
    expectRel(j.einstein_mass_msun, 1e12, 2e-4, "M(<θ_E)");
  });

  it("without redshifts the masses are null and θ_E is still given", () => {
    const model = writeJson(join(dir, "noz.json"), {
      lens: [{ type: "sie", theta_E: 0.8, q: 0.9, pa: 0, x: 0, y: 0 }],
      source: [{ type: "point_source", flux: 0.01, x: 0, y: 0 }],
    });
    const j = lensJson(model, []);
    expect(j.einstein_mass_msun).toBeNull();
    expect(j.velocity_dispersion_kms).toBeNull();
    expect(j.D_l_mpc).toBeNull();
    // Default grid (2.5 Einstein diameters over 256 nodes: cell 0.0156″) → ℓ²/(12R²) ≈ 8e-5.
    expectRel(j.einstein_radius_arcsec, 0.8, 2e-4, "θ_E on the default grid");
  });
});

describe("arcfringe lens --out", () => {
  let dir = "";
  const thetaE = 1.2;
  const x0 = 0.5;
  beforeAll(() => {
    dir = scratch("lens-out");
    // An SIS 0.5″ East of the origin: the maps must show it East, i.e. to the left.
    const model = writeJson(join(dir, "sis-east.json"), {
      lens: [{ type: "sie", theta_E: thetaE, q: 1, pa: 0, x: x0, y: 0 }],
      source: [{ type: "sersic", flux: 0.01, r_eff: 0.1, n: 1, q: 0.7, pa: 45, x: 0.55, y: 0.05 }],
    });
    const r = runCli(["lens", model, "--out", join(dir, "maps"), "--size", "4", "--cell", "0.05"]);
    expectOk(r);
  });

  it("writes the five maps", () => {
    for (const f of ["convergence.png", "magnification.png", "source_plane.png"]) {
      expect([...readFileSync(join(dir, "maps", f)).subarray(0, 8)]).toEqual([137, 80, 78, 71, 13, 10, 26, 10]);
    }
    for (const f of ["convergence.fits", "magnification.fits"]) {
      expect(readFileSync(join(dir, "maps", f)).subarray(0, 6).toString("latin1")).toBe("SIMPLE");
    }
  });

  it("convergence.fits holds κ = θ_E/(2r) with East to the left (CDELT1 < 0)", () => {
    const path = join(dir, "maps", "convergence.fits");
    const img = readFitsImage(path);
    expect(headerNumber(img.header, "CDELT1", path)).toBeLessThan(0);
    // The singular centre is a grid node (0.5/0.05 = 10 cells): the brightest pixel is there.
    const p = fitsPeak(path);
    expectAbs(p.xArcsec, x0, 1e-9, "κ peak x (East)");
    expectAbs(p.yArcsec, 0, 1e-9, "κ peak y");
    // Elsewhere κ = θ_E/(2r) (CONVENTIONS.md SIE with q = 1; analytic), stored as float64.
    const n = img.shape[0];
    const crpix1 = headerNumber(img.header, "CRPIX1", path);
    const crpix2 = headerNumber(img.header, "CRPIX2", path);
    const cdelt1 = headerNumber(img.header, "CDELT1", path);
    const cdelt2 = headerNumber(img.header, "CDELT2", path);
    let checked = 0;
    for (const [p1, p2] of [[30, 50], [61, 12], [5, 77], [44, 40]]) {
      const x = (p1 - crpix1) * cdelt1;
      const y = (p2 - crpix2) * cdelt2;
      const kappa = thetaE / (2 * Math.hypot(x - x0, y));
      expectRel(img.data[(p2 - 1) * n + (p1 - 1)], kappa, 1e-12, `κ at FITS pixel (${p1}, ${p2})`);
      checked++;
    }
    expect(checked).toBe(4);
    expect(headerString(img.header, "CTYPE1")).toBe("XOFFSET");
  });

  it("magnification.fits holds the SIS μ = r/(r − θ_E) (REFERENCES.md §2)", () => {
    const path = join(dir, "maps", "magnification.fits");
    const img = readFitsImage(path);
    const n = img.shape[0];
    const crpix1 = headerNumber(img.header, "CRPIX1", path);
    const cdelt1 = headerNumber(img.header, "CDELT1", path);
    const crpix2 = headerNumber(img.header, "CRPIX2", path);
    const cdelt2 = headerNumber(img.header, "CDELT2", path);
    for (const [p1, p2] of [[30, 50], [61, 12], [5, 77], [44, 40]]) {
      const r = Math.hypot((p1 - crpix1) * cdelt1 - x0, (p2 - crpix2) * cdelt2);
      // SIS: μ(θ) = |θ|/(|θ| − θ_E), signed (negative inside θ_E); closed-form lens → 1e-9.
      expectRel(img.data[(p2 - 1) * n + (p1 - 1)], r / (r - thetaE), 1e-9, `μ at (${p1}, ${p2})`);
    }
  });
});
