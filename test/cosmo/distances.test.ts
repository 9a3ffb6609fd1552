import { describe, expect, it } from "vitest";
import { FlatLambdaCDM } from "../../src/cosmo/distances.js";
import { gaussLegendre, integrate } from "../../src/cosmo/quadrature.js";
import { expectAbs, expectRel } from "../helpers.js";

describe("quadrature", () => {
  it("gaussLegendre(n) integrates polynomials of degree 2n − 1 exactly", () => {
    // Analytic: ∫_{-1}^{1} x^k dx = 2/(k+1) for even k. A 10-point rule is exact to degree 19;
    // tolerance 1e-14 is round-off on O(1) sums.
    const { nodes, weights } = gaussLegendre(10);
    for (const k of [0, 2, 8, 18]) {
      let s = 0;
      for (let i = 0; i < 10; i++) s += weights[i] * nodes[i] ** k;
      expectAbs(s, 2 / (k + 1), 1e-14, `∫x^${k}`);
    }
  });

  it("integrate reaches 1e-13 on a smooth and on a peaked integrand", () => {
    // Analytic: ∫0^π sin = 2; ∫_{-1}^{1} dx/(1 + 100x²) = (2/10)·atan(10).
    expectRel(integrate(Math.sin, 0, Math.PI), 2, 1e-13);
    expectRel(integrate((x) => 1 / (1 + 100 * x * x), -1, 1), 0.2 * Math.atan(10), 1e-12);
  });
});

describe("FlatLambdaCDM", () => {
  const cosmo = new FlatLambdaCDM({ H0: 70, Om0: 0.3 });

  it("angular-diameter distances match REFERENCES.md §1 (astropy 5.2.1 FlatLambdaCDM, Tcmb0 = 0)", () => {
    // REFERENCES.md §1 table; the integral is exact to 1e-13, the table has 9–10 digits → rtol 1e-6
    // (the tolerance REFERENCES.md gives).
    const rows: [number, number, number, number, number][] = [
      [0.3, 1.0, 918.766823, 1651.914403, 1054.715968],
      [0.5, 2.0, 1259.083597, 1726.620691, 1097.078893],
      [0.8, 3.0, 1548.70552, 1588.921359, 892.003875],
      [0.2, 4.0, 680.602699, 1434.073283, 1270.728635],
    ];
    for (const [zl, zs, dl, ds, dls] of rows) {
      expectRel(cosmo.angularDiameterDistanceMpc(zl), dl, 1e-6, `D_l(${zl})`);
      expectRel(cosmo.angularDiameterDistanceMpc(zs), ds, 1e-6, `D_s(${zs})`);
      expectRel(cosmo.angularDiameterDistanceBetweenMpc(zl, zs), dls, 1e-6, `D_ls(${zl}, ${zs})`);
    }
  });

  it("D_A peaks at z = 1.605 with 1747.57 Mpc (REFERENCES.md §1)", () => {
    // REFERENCES.md §1, printed to 6 digits → rtol 5e-6 on the value; the peak is flat, so
    // values at z = 1.6 and 1.61 must both be below the z = 1.605 value.
    const peak = cosmo.angularDiameterDistanceMpc(1.605);
    expectRel(peak, 1747.57, 5e-6);
    expect(cosmo.angularDiameterDistanceMpc(1.59)).toBeLessThan(peak);
    expect(cosmo.angularDiameterDistanceMpc(1.62)).toBeLessThan(peak);
  });

  it("matches the R package lira example D_A(z = 1) = 0.3857135 D_H (REFERENCES.md §1)", () => {
    // lira distance.LCDM documentation example, 7 digits → rtol 3e-7.
    expectRel(cosmo.angularDiameterDistanceMpc(1) / cosmo.hubbleDistanceMpc, 0.3857135, 3e-7);
  });

  it("matches the R package CRAC example: Ωm = 0.272, h = 0.704, z = 0.3 → 647.1089 h⁻¹ Mpc", () => {
    // REFERENCES.md §1 (CRAC distance.angular example), 7 digits → rtol 2e-7.
    const c = new FlatLambdaCDM({ H0: 70.4, Om0: 0.272 });
    expectRel(c.angularDiameterDistanceMpc(0.3) * 0.704, 647.1089, 2e-7);
  });

  it("equals the Einstein–de Sitter closed form D_A = 2 D_H (1 − 1/sqrt(1+z))/(1+z) for Ωm = 1", () => {
    // Hogg (1999) Ω_Λ = 0 closed form (REFERENCES.md §1): 0.29289322 D_H at z = 1, 0.25 D_H at
    // z = 3. The integrator targets 1e-13 → rtol 1e-12.
    const eds = new FlatLambdaCDM({ H0: 70, Om0: 1 });
    for (const z of [0.1, 1, 3, 7.5]) {
      const exact = (2 * eds.hubbleDistanceMpc * (1 - 1 / Math.sqrt(1 + z))) / (1 + z);
      expectRel(eds.angularDiameterDistanceMpc(z), exact, 1e-12, `EdS z=${z}`);
    }
    expectRel(eds.angularDiameterDistanceMpc(3) / eds.hubbleDistanceMpc, 0.25, 1e-12);
  });

  it("critical density today is 3H0²/(8πG) = 9.204e-27 kg/m³ for H0 = 70", () => {
    // Analytic; 9.204e-27 kg/m³ for h = 0.7 (from memory: ρ_c = 1.878e-26 h² kg/m³) → rtol 1e-3.
    expectRel(cosmo.criticalDensityKgPerM3(0), 1.87847e-26 * 0.49, 1e-3);
    // ρ_crit(z) ∝ E(z)²: analytic
    expectRel(cosmo.criticalDensityKgPerM3(1) / cosmo.criticalDensityKgPerM3(0), 0.3 * 8 + 0.7, 1e-14);
  });

  it("rejects a negative H0 with one clear line", () => {
    expect(() => new FlatLambdaCDM({ H0: -70, Om0: 0.3 }, "model.json: cosmology")).toThrow(
      /^model\.json: cosmology\.H0: -70 is not a positive number/,
    );
  });
});
