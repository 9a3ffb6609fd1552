/** summariseVisibilities: resolution and scale rules of REFERENCES.md §5 and §7. */
import { describe, expect, it } from "vitest";
import { expectRel } from "../helpers.js";
import { summariseVisibilities } from "../../src/vis/index.js";
import type { ReadReport } from "../../src/vis/types.js";
import { allocate } from "../../src/vis/uvfits.js";
import { Rng } from "../../src/random.js";
import { C_M_PER_S } from "../../src/units.js";

const report: ReadReport = { format: "csv", entriesInFile: 0, kept: 0, droppedFlagged: 0, droppedNonFinite: 0, droppedAuto: 0, notes: [] };

describe("summariseVisibilities", () => {
  it("beam λ/B_max, largest scale 0.6 λ/B_min and primary beam 1.13 λ/D at 230 GHz (REFERENCES.md §7)", () => {
    // Two baselines at 230 GHz: 1 km and 15 m; dish 12 m. REFERENCES.md §7 table:
    // λ/(1 km) = 0.26885″, 0.6 λ/(15 m) = 10.7542″, 1.13 λ/D = 25.3172″ (tolerance 1e-4 there).
    const nu = 230e9;
    const lam = C_M_PER_S / nu;
    const v = allocate(2, new Float64Array([nu]), 1e9, 2451544.5);
    v.uLambda[0] = 600 / lam; v.vLambda[0] = 800 / lam; // |B| = 1000 m
    v.uLambda[1] = 0; v.vLambda[1] = 15 / lam;
    v.weight.fill(1); v.antenna1.set([1, 1]); v.antenna2.set([2, 3]); v.correlation.fill(1);
    v.timeS.set([0, 3600]);
    v.dishDiameterM = 12;
    const s = summariseVisibilities(v, { ...report, entriesInFile: 2, kept: 2 });
    expectRel(s.synthesizedBeamArcsec.lambdaOverBmax, 0.26885, 1e-4, "λ/B_max");
    expectRel(s.largestAngularScaleArcsec, 10.7542, 1e-4, "0.6 λ/B_min");
    expectRel(s.primaryBeamFwhmArcsec!, 25.3172, 1e-4, "1.13 λ/D");
    expectRel(s.baselineLengthM.max!, 1000, 1e-12, "B_max [m]");
    expectRel(s.baselineLengthM.min!, 15, 1e-12, "B_min [m]");
    expect(s.antennas).toBe(3);
    expect(s.baselines).toBe(2);
    // JD 2451544.5 = 2000-01-01T00:00Z (J2000.0 is JD 2451545.0 at noon, from memory).
    expect(s.time.start).toBe("2000-01-01T00:00:00.000Z");
    expect(s.time.end).toBe("2000-01-01T01:00:00.000Z");
    expect(JSON.parse(JSON.stringify(s))).toEqual(s); // plain JSON-able object
  });

  it("natural-weighted beam of a filled uv disc: 2·sqrt(2 ln 2)/(π R), 6 % above the true 0.70508/R", () => {
    // Uniform disc of radius R: ⟨u²⟩ = R²/4 along any axis (analytic), so the curvature-matched
    // Gaussian has FWHM = sqrt(2 ln 2)/(π·R/2) = 0.749561/R rad. 10⁵ random points → the second
    // moment has relative error ≈ 0.3 % → 1 % tolerance; round beam, so major ≈ minor.
    const rng = new Rng(1);
    const n = 100000;
    const R = 1e6;
    const v = allocate(n, new Float64Array([1e11]), 1e6, 2451544.5);
    for (let k = 0; k < n; k++) {
      const r = R * Math.sqrt(rng.uniform());
      const a = 2 * Math.PI * rng.uniform();
      v.uLambda[k] = r * Math.cos(a); v.vLambda[k] = r * Math.sin(a); v.weight[k] = 1; v.correlation[k] = 1;
    }
    const s = summariseVisibilities(v, report);
    const expected = ((2 * Math.sqrt(2 * Math.LN2)) / (Math.PI * R)) * (180 * 3600 / Math.PI);
    expectRel(s.synthesizedBeamArcsec.naturalMajor, expected, 0.01, "major");
    expectRel(s.synthesizedBeamArcsec.naturalMinor, expected, 0.01, "minor");
    // REFERENCES.md §5: the true FWHM of a uniformly weighted filled disc is 0.70508 λ/B_max.
    expectRel(s.synthesizedBeamArcsec.naturalMajor, 0.70508 / R * (180 * 3600 / Math.PI), 0.07, "vs exact disc beam");
  });

  it("orients the natural beam's major axis across the longest baselines (pa from North through East)", () => {
    // Baselines only along u (East–West): the beam is narrow in x and long along North, pa = 0°.
    const v = allocate(200, new Float64Array([1e11]), 1e6, 0);
    for (let k = 0; k < 200; k++) { v.uLambda[k] = (k - 100) * 1e3 + 1; v.vLambda[k] = ((k % 7) - 3) * 10; v.weight[k] = 1; v.correlation[k] = 1; }
    const s = summariseVisibilities(v, report);
    expect(Math.min(s.synthesizedBeamArcsec.naturalPaDeg, 180 - s.synthesizedBeamArcsec.naturalPaDeg)).toBeLessThan(0.1);
    expect(s.synthesizedBeamArcsec.naturalMajor).toBeGreaterThan(10 * s.synthesizedBeamArcsec.naturalMinor);
  });
});
