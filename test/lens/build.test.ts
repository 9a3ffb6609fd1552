import { describe, expect, it } from "vitest";
import { lensDistances, pointMassThetaEArcsec } from "../../src/cosmo/lensing.js";
import { buildLens } from "../../src/lens/build.js";
import { expectAbs, expectRel } from "../helpers.js";

describe("buildLens", () => {
  it("sums components: SIE + shear deflection is the sum of the parts", () => {
    // Superposition (the lens equation is linear in ψ) → round-off tolerance.
    const both = buildLens([
      { type: "sie", theta_E: 1.2, q: 0.7, pa: 30, x: 0, y: 0 },
      { type: "shear", gamma: 0.05, pa: 20 },
    ]);
    const sie = buildLens([{ type: "sie", theta_E: 1.2, q: 0.7, pa: 30, x: 0, y: 0 }]);
    const sh = buildLens([{ type: "shear", gamma: 0.05, pa: 20 }]);
    const x = Float64Array.of(0.5, -1);
    const y = Float64Array.of(0.3, 0.7);
    const a = [new Float64Array(2), new Float64Array(2)];
    const b = [new Float64Array(2), new Float64Array(2)];
    const c = [new Float64Array(2), new Float64Array(2)];
    both.deflect(x, y, a[0], a[1]);
    sie.deflect(x, y, b[0], b[1]);
    sh.deflect(x, y, c[0], c[1]);
    for (let i = 0; i < 2; i++) {
      expectAbs(a[0][i], b[0][i] + c[0][i], 1e-15);
      expectAbs(a[1][i], b[1][i] + c[1][i], 1e-15);
    }
    // SIE part checked against REFERENCES.md §3 (0.5, 0.3): α = (1.054638084, 0.485805154)
    expectAbs(b[0][0], 1.054638084, 1e-8);
    expectAbs(b[1][0], 0.485805154, 1e-8);
  });

  it("converts point mass and nfw m200 with redshifts (REFERENCES.md §2 point-mass θ_E)", () => {
    // 1e12 M_sun at z = 0.3 → 1.0: θ_E = 2.378955″ (REFERENCES.md §2, rtol 1e-6).
    const lens = buildLens([{ type: "point", mass: 1e12, x: 0, y: 0 }], { redshift: { lens: 0.3, source: 1 } });
    const ax = new Float64Array(1);
    const ay = new Float64Array(1);
    lens.deflect(Float64Array.of(2.378955), Float64Array.of(0), ax, ay);
    expectRel(ax[0], 2.378955, 2e-6); // α = θ_E²/θ = θ_E at θ = θ_E
    const d = lensDistances({ lens: 0.3, source: 1 });
    expectRel(pointMassThetaEArcsec(1e12, d), 2.378955, 1e-6);
    const nfw = buildLens([{ type: "nfw", m200: 1e13, c200: 5, q: 1, pa: 0, x: 0, y: 0 }], { redshift: { lens: 0.3, source: 1 } });
    expect(nfw.components[0].type).toBe("nfw");
  });

  it("rejects bad values with one line naming the component and parameter", () => {
    expect(() =>
      buildLens([
        { type: "shear", gamma: 0.05, pa: 20 },
        { type: "sie", theta_E: 1, q: 1.3, pa: 0, x: 0, y: 0 },
      ]),
    ).toThrow("lens[1].q: 1.3 is outside (0, 1]");
    expect(() => buildLens([{ type: "sis", theta_E: 1 }])).toThrow(/^lens\[0\]\.type: "sis" is not a lens type; use one of sie, epl/);
    expect(() => buildLens([{ type: "epl", theta_E: 1, slope: 3, q: 0.8, pa: 0, x: 0, y: 0 }])).toThrow(
      /^lens\[0\]\.slope: 3 is outside \(1\.2, 2\.8\)/,
    );
    expect(() => buildLens([{ type: "multipole", order: 5, strength: 0.01, pa: 0, x: 0, y: 0 }])).toThrow(
      "lens[0].order: 5 is not allowed; use 3 or 4",
    );
    expect(() => buildLens([{ type: "point", mass: 1e11, x: 0, y: 0 }])).toThrow(/lens\[0\]\.mass: needs redshift/);
    expect(() => buildLens([{ type: "sie", theta_E: "1", q: 0.5, pa: 0, x: 0, y: 0 }])).toThrow(
      'lens[0].theta_E: expected a finite number, got "1"',
    );
    expect(() => buildLens([{ type: "pseudo_jaffe", theta_E: 1, x: 0, y: 0 }])).toThrow(
      "lens[0].r_trunc: missing; a pseudo_jaffe component needs r_trunc",
    );
  });
});
