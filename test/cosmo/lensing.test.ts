import { describe, expect, it } from "vitest";
import { FlatLambdaCDM } from "../../src/cosmo/distances.js";
import { integrate } from "../../src/cosmo/quadrature.js";
import {
  einsteinMassMsun,
  lensDistances,
  nfwFromM200,
  pointMassDeflectionRad,
  pointMassThetaEArcsec,
  sisThetaEArcsec,
  sisVelocityDispersionKms,
} from "../../src/cosmo/lensing.js";
import { M_SUN_KG, R_SUN_M, RAD_TO_ARCSEC, MPC_M } from "../../src/units.js";
import { expectRel } from "../helpers.js";

// REFERENCES.md §1 and §2 rows: z_l, z_s, Σ_crit [kg/m²], Σ_crit [M_sun/arcsec²], M(<1″),
// θ_E SIS (250 km/s), θ_E point (1e12 M_sun), M(<θ_E) of that SIS.
const ROWS: [number, number, number, number, number, number, number, number][] = [
  [0.3, 1.0, 5.920004, 5.624417e10, 1.766963e11, 1.150858, 2.378955, 2.34029e11],
  [0.5, 2.0, 4.3409, 7.745221e10, 2.433233e11, 1.145288, 2.027254, 3.19163e11],
  [0.8, 3.0, 3.994313, 1.078263e11, 3.387463e11, 1.011901, 1.718156, 3.46857e11],
  [0.2, 4.0, 5.758378, 3.00215e10, 9.431532e10, 1.597184, 3.256184, 2.40598e11],
];

describe("lensDistances and lensing masses", () => {
  it("Σ_crit and M(<1″) match REFERENCES.md §1", () => {
    // astropy-computed table with the same CODATA 2018 / IAU 2015 constants as src/units.ts;
    // 7 significant digits printed → rtol 1e-6 (REFERENCES.md tolerance).
    for (const [zl, zs, sk, sm, m1] of ROWS) {
      const d = lensDistances({ lens: zl, source: zs });
      expectRel(d.sigmaCritKgPerM2, sk, 1e-6, `Σ_crit kg/m² ${zl}/${zs}`);
      expectRel(d.sigmaCritMsunPerArcsec2, sm, 1e-6, `Σ_crit M_sun/arcsec² ${zl}/${zs}`);
      expectRel(einsteinMassMsun(1, d), m1, 1e-6, `M(<1″) ${zl}/${zs}`);
    }
  });

  it("SIS and point-mass Einstein radii match REFERENCES.md §2", () => {
    // REFERENCES.md §2, 7 digits → rtol 1e-6; M(<θ_E) printed to 6 digits → rtol 5e-6.
    for (const [zl, zs, , , , tSis, tPt, mSis] of ROWS) {
      const d = lensDistances({ lens: zl, source: zs });
      expectRel(sisThetaEArcsec(250, d), tSis, 1e-6, `θ_E SIS ${zl}/${zs}`);
      expectRel(pointMassThetaEArcsec(1e12, d), tPt, 1e-6, `θ_E point ${zl}/${zs}`);
      expectRel(einsteinMassMsun(tSis, d), mSis, 5e-6, `M(<θ_E) SIS ${zl}/${zs}`);
      // consistency (REFERENCES.md §2): Σ_crit π (D_l θ_E)² with the point-mass θ_E returns
      // the mass; both sides use the same constants → rtol 1e-12.
      expectRel(einsteinMassMsun(pointMassThetaEArcsec(1e12, d), d), 1e12, 1e-12);
      // SIS σ_v inverts θ_E(σ_v): analytic round trip
      expectRel(sisVelocityDispersionKms(tSis, d), 250, 1e-6);
    }
  });

  it("σ_v = 250 km/s with D_ls/D_s = 1 gives θ_E = 1.8024931″ (REFERENCES.md §2)", () => {
    // Using a pair with D_ls = D_s is impossible physically, so evaluate the formula's
    // distance ratio out: θ_E(σ)·D_s/D_ls. 8 digits → rtol 1e-7.
    const d = lensDistances({ lens: 0.3, source: 1 });
    expectRel((sisThetaEArcsec(250, d) * d.dSMpc) / d.dLsMpc, 1.8024931, 1e-7);
  });

  it("θ_E ∝ sqrt(M): the point-mass θ_E(4M)/θ_E(M) = 2 and SIS θ_E ∝ σ_v² (REFERENCES.md §8)", () => {
    // Exact scalings (REFERENCES.md §8) → round-off tolerance.
    const d = lensDistances({ lens: 0.5, source: 2 });
    expectRel(pointMassThetaEArcsec(4e11, d) / pointMassThetaEArcsec(1e11, d), 2, 1e-14);
    expectRel(sisThetaEArcsec(300, d) / sisThetaEArcsec(150, d), 4, 1e-14);
  });

  it("solar-limb deflection is 1.751190″ in GR, twice the Newtonian 0.875595″ (REFERENCES.md §8)", () => {
    // REFERENCES.md §8 (computed with R_sun = 6.957e8 m), 7 digits → rtol 1e-6.
    const gr = pointMassDeflectionRad(M_SUN_KG, R_SUN_M) * RAD_TO_ARCSEC;
    expectRel(gr, 1.75119, 1e-6);
    expectRel(gr / 2, 0.875595, 1e-6);
  });

  it("nfwFromM200 puts exactly M200 inside r200 = (3M/(800πρ_crit))^(1/3)", () => {
    // NFW definition (Navarro, Frenk & White 1997): ∫0^r200 4πr² ρ_s/((r/r_s)(1+r/r_s)²) dr = M200,
    // integrated here numerically from κ_s (ρ_s = κ_s Σ_crit / r_s) → rtol 1e-10 (quadrature 1e-13).
    const cosmo = new FlatLambdaCDM();
    const d = lensDistances({ lens: 0.5, source: 2 }, cosmo);
    const m200 = 2e13;
    const c200 = 6;
    const p = nfwFromM200(m200, c200, d, cosmo);
    const rsM = (p.rSArcsec / RAD_TO_ARCSEC) * d.dLMpc * MPC_M;
    const rhoS = (p.kappaS * d.sigmaCritKgPerM2) / rsM;
    const r200M = p.r200Mpc * MPC_M;
    expectRel(r200M / rsM, c200, 1e-12);
    const massKg = integrate((r) => (4 * Math.PI * r * r * rhoS) / ((r / rsM) * (1 + r / rsM) ** 2), 0, r200M, 1e-13);
    expectRel(massKg / M_SUN_KG, m200, 1e-10);
    // and the mean density inside r200 is 200 ρ_crit(z_l) (definition, DESIGN.md)
    const meanRho = massKg / ((4 / 3) * Math.PI * r200M ** 3);
    expectRel(meanRho, 200 * cosmo.criticalDensityKgPerM3(0.5), 1e-10);
  });

  it("rejects a source redshift below the lens with one line naming both", () => {
    expect(() => lensDistances({ lens: 0.5, source: 0.3 })).toThrow(
      "redshift.source: 0.3 must be a number larger than the lens redshift 0.5",
    );
  });
});
