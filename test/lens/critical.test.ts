import { describe, expect, it } from "vitest";
import { lensDistances, sisVelocityDispersionKms } from "../../src/cosmo/lensing.js";
import { buildLens } from "../../src/lens/build.js";
import { caustics, criticalCurves, einsteinRadiusFromCurves, magnificationMap, polygonArea } from "../../src/lens/critical.js";
import { lensSummary, summaryToJson } from "../../src/lens/summary.js";
import { expectAbs, expectRel } from "../helpers.js";

describe("critical curves", () => {
  it("the SIE's tangential critical curve encloses π θ_E², so the Einstein radius is θ_E", () => {
    // CONVENTIONS.md: the SIE critical curve is the ellipse ξ = θ_E, area π θ_E². Vertices are
    // refined onto the curve, so the only error is the inscribed polygon's chord deficit,
    // relative area ≈ ℓ²/(6R²): chords ℓ ≲ 0.02″·√2 on R ≥ θ_E√q = 1.0″ → < 1.4e-4 in area,
    // 7e-5 in radius → rtol 1e-4 on θ_E with a 256² grid of 0.02″.
    const lens = buildLens([{ type: "sie", theta_E: 1.2, q: 0.7, pa: 30, x: 0, y: 0 }]);
    const curves = criticalCurves(lens, { n: 256, cellArcsec: 0.02 });
    expect(curves.tangential.length).toBe(1);
    expect(curves.tangential[0].closed).toBe(true);
    expect(curves.radial.length).toBe(0); // singular isothermal: λ_r = 1 everywhere
    expectRel(einsteinRadiusFromCurves(curves)!, 1.2, 1e-4);
    // every vertex lies on ξ = θ_E (CONVENTIONS.md ξ) to the refinement accuracy
    const s = Math.sin(Math.PI / 6);
    const c = Math.cos(Math.PI / 6);
    const t = curves.tangential[0];
    for (let k = 0; k < t.xArcsec.length; k += 37) {
      const xp = t.xArcsec[k] * s + t.yArcsec[k] * c;
      const yp = -t.xArcsec[k] * c + t.yArcsec[k] * s;
      expectAbs(Math.sqrt(0.7 * xp * xp + (yp * yp) / 0.7), 1.2, 1e-9);
    }
  });

  it("the point mass's critical circle has radius θ_E and maps to the central caustic point", () => {
    // Schneider et al. (1992) §8.1.1: critical circle |θ| = θ_E, caustic degenerate at β = 0.
    // Chord deficit with 0.025″ cells on R = 1.5″ → rtol 1e-4; caustic points at 0 to 1e-8″.
    const lens = buildLens([{ type: "point", theta_E: 1.5, x: 0, y: 0 }]);
    const curves = criticalCurves(lens, { n: 160, cellArcsec: 0.025 });
    expectRel(einsteinRadiusFromCurves(curves)!, 1.5, 1e-4);
    const ca = caustics(lens, curves);
    for (let k = 0; k < ca.tangential[0].xArcsec.length; k += 11) {
      expectAbs(Math.hypot(ca.tangential[0].xArcsec[k], ca.tangential[0].yArcsec[k]), 0, 1e-8);
    }
  });

  it("a cored SIS has a radial critical curve inside the tangential one, with the radial caustic outside", () => {
    // Cored isothermal sphere κ = θ_E/(2 sqrt(r² + s²)) (circular case of Keeton 2001):
    // α(r) = θ_E (sqrt(r² + s²) − s)/r. Tangential curve: α/r = 1 → r_t = sqrt(θ_E² − 2θ_E s)
    // (solving θ_E(sqrt(r² + s²) − s) = r²). Radial curve: dα/dr = 1. Analytic; chord deficit
    // → rtol 2e-4. The radial caustic (a circle) lies outside the radial critical curve
    // (Schneider et al. 1992 §8.1.4, from memory).
    const thetaE = 1;
    const s = 0.1;
    const lens = buildLens([{ type: "sie", theta_E: thetaE, q: 1, pa: 0, x: 0, y: 0, core: s }]);
    const curves = criticalCurves(lens, { n: 200, cellArcsec: 0.015 });
    expectRel(einsteinRadiusFromCurves(curves)!, Math.sqrt(thetaE * thetaE - 2 * thetaE * s), 2e-4);
    expect(curves.radial.length).toBe(1);
    const rr = Math.sqrt(polygonArea(curves.radial[0]) / Math.PI);
    // dα/dr = θ_E [r²/(sqrt(r²+s²)) − (sqrt(r²+s²) − s)]/r² = 1, solved by bisection here
    const dadr = (r: number) => {
      const q = Math.sqrt(r * r + s * s);
      return (thetaE * ((r * r) / q - (q - s))) / (r * r);
    };
    let lo = 1e-6;
    let hi = 0.5;
    for (let it = 0; it < 100; it++) {
      const mid = 0.5 * (lo + hi);
      if (dadr(mid) > 1) lo = mid;
      else hi = mid;
    }
    expectRel(rr, 0.5 * (lo + hi), 2e-3);
    const ca = caustics(lens, curves);
    expect(Math.sqrt(polygonArea(ca.radial[0]) / Math.PI)).toBeGreaterThan(rr);
  });

  it("magnificationMap gives the SIS μ = |θ|/(|θ| − θ_E) (REFERENCES.md §2)", () => {
    // REFERENCES.md §2: SIS μ = |θ|/(|θ| − θ_E); at θ = 1.5θ_E μ = 3 → exact, round-off tolerance.
    const lens = buildLens([{ type: "sie", theta_E: 1, q: 1, pa: 0, x: 0, y: 0 }]);
    const mu = magnificationMap(lens, { n: 8, cellArcsec: 0.5 });
    // node (i = 1, j = 4): x = 1.5, y = 0
    expectRel(mu[4 * 8 + 1], 3, 1e-13);
    // node (i = 4, j = 5): x = 0, y = 0.5 → μ = 0.5/(0.5 − 1) = −1
    expectRel(mu[5 * 8 + 4], -1, 1e-13);
  });
});

describe("lensSummary", () => {
  it("reports θ_E, M_E, Σ_crit, distances and σ_v for an SIE at z = 0.3 → 1 (REFERENCES.md §1–2)", () => {
    // θ_E from the critical curve (rtol 1e-4 as above); distances and Σ_crit from REFERENCES.md
    // §1 (rtol 1e-6); M_E = Σ_crit π θ_E² with θ_E = 1.150858″ equals 2.34029e11 M_sun, the SIS
    // of σ_v = 250 km/s (REFERENCES.md §2) → rtol 2e-4 (twice the θ_E tolerance).
    const s = lensSummary({
      lens: [{ type: "sie", theta_E: 1.150858, q: 0.8, pa: 20, x: 0, y: 0 }],
      redshift: { lens: 0.3, source: 1 },
      field: { size_arcsec: 3.2, pixel_arcsec: 0.0125 },
    });
    expectRel(s.einstein_radius_arcsec!, 1.150858, 1e-4);
    expectRel(s.D_l_mpc!, 918.766823, 1e-6);
    expectRel(s.D_s_mpc!, 1651.914403, 1e-6);
    expectRel(s.D_ls_mpc!, 1054.715968, 1e-6);
    expectRel(s.sigma_crit_msun_per_arcsec2!, 5.624417e10, 1e-6);
    expectRel(s.einstein_mass_msun!, 2.34029e11, 2e-4);
    expectRel(s.velocity_dispersion_kms!, 250, 1e-4);
    expectRel(sisVelocityDispersionKms(1.150858, lensDistances({ lens: 0.3, source: 1 })), 250, 1e-6);
    expect(s.grid.n).toBe(256);
    expect(s.maps.convergence.length).toBe(256 * 256);
    const json = JSON.parse(JSON.stringify(summaryToJson(s)));
    expect(json.maps).toBeUndefined();
    expect(json.critical_curves.tangential[0].points.length).toBeGreaterThan(100);
  });

  it("without redshifts returns null physical quantities and the source magnification", () => {
    // SIS + point source at β = 0.25θ_E: μ_total = 2θ_E/β = 8 (REFERENCES.md §2) → rtol 1e-8.
    const s = lensSummary({
      lens: [{ type: "sie", theta_E: 1, q: 1, pa: 0, x: 0, y: 0 }],
      source: [{ type: "point_source", flux: 0.001, x: 0.25, y: 0 }],
      field: { size_arcsec: 4, pixel_arcsec: 0.05 },
    });
    expect(s.einstein_mass_msun).toBeNull();
    expect(s.D_l_mpc).toBeNull();
    expect(s.velocity_dispersion_kms).toBeNull();
    expectRel(s.source_magnification!, 8, 1e-8);
  });
});
