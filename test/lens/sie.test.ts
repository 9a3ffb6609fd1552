import { describe, expect, it } from "vitest";
import { Sie } from "../../src/lens/sie.js";
import { expectAbs, expectRel } from "../helpers.js";
import {
  alphaAt,
  alphaDerivatives,
  ellipseFlux,
  hessianAt,
  homoeoidDeflection,
  kappaAt,
  psiGradient,
} from "./reference.js";
import { SIE_TABLE } from "./tables.js";

const sie = new Sie({ thetaEArcsec: 1.2, q: 0.7, paDeg: 30, xArcsec: 0, yArcsec: 0 });

describe("Sie (singular)", () => {
  it("κ and α match REFERENCES.md §3 at every tabulated point", () => {
    // Closed form vs 9-decimal table → atol 1e-8 (REFERENCES.md: "1e-8 absolute for a closed form").
    for (const [x, y, k, ax, ay] of SIE_TABLE) {
      expectAbs(kappaAt(sie, x, y), k, 1e-8, `κ(${x}, ${y})`);
      const [gx, gy] = alphaAt(sie, x, y);
      expectAbs(gx, ax, 1e-8, `αx(${x}, ${y})`);
      expectAbs(gy, ay, 1e-8, `αy(${x}, ${y})`);
    }
  });

  it("α is parallel to θ on both axes, and κ is larger on the major axis (REFERENCES.md §3)", () => {
    // Convention pins (REFERENCES.md §3): at pa = 30° the major axis is the direction
    // (sin 30°, cos 30°); α_x/α_y = tan 30° there. Round-off tolerance.
    const [mx, my] = alphaAt(sie, 0.5, Math.sqrt(3) / 2);
    expectRel(mx / my, Math.tan(Math.PI / 6), 1e-13, "major axis αx/αy");
    const [nx, ny] = alphaAt(sie, Math.sqrt(3) / 2, -0.5);
    expectRel(nx / ny, -Math.sqrt(3), 1e-13, "minor axis αx/αy");
    expect(kappaAt(sie, 0.5, Math.sqrt(3) / 2)).toBeGreaterThan(kappaAt(sie, Math.sqrt(3) / 2, -0.5));
  });

  it("Gauss's theorem: the flux of α through ξ = R is 2π θ_E R (REFERENCES.md §3)", () => {
    // REFERENCES.md §3: 9.047786842 at R = θ_E (mean κ inside ξ = θ_E is 1), 15.079644737 at
    // R = 2″. The trapezoidal rule on a smooth periodic integrand with 2000 points is accurate
    // far below the 1e-8 tolerance.
    expectAbs(ellipseFlux(sie, 0.7, 30, 1.2), 9.047786842, 1e-8);
    expectAbs(ellipseFlux(sie, 0.7, 30, 2), 15.079644737, 1e-8);
  });

  it("∇·α = 2κ and ∇×α = 0 by central differences; the analytic Hessian agrees", () => {
    // Analytic identities of a lens potential; h = 1e-5″ → truncation ~1e-10·α''' and
    // round-off ~1e-11 → atol 1e-7 (relative to κ ~ 0.3–5).
    for (const [x, y] of SIE_TABLE) {
      const [dxx, dxy, dyx, dyy] = alphaDerivatives(sie, x, y);
      const k = kappaAt(sie, x, y);
      expectAbs(dxx + dyy, 2 * k, 1e-6 * Math.max(1, k), `div at (${x}, ${y})`);
      expectAbs(dxy - dyx, 0, 1e-6 * Math.max(1, k), `curl at (${x}, ${y})`);
      const [hxx, hxy, hyy] = hessianAt(sie, x, y);
      expectAbs(hxx, dxx, 1e-6 * Math.max(1, k));
      expectAbs(hxy, 0.5 * (dxy + dyx), 1e-6 * Math.max(1, k));
      expectAbs(hyy, dyy, 1e-6 * Math.max(1, k));
    }
  });

  it("∇ψ = α (potential by central differences)", () => {
    // Analytic identity; h = 1e-5″ → atol 1e-8 on O(1) deflections.
    for (const [x, y] of SIE_TABLE) {
      const [gx, gy] = psiGradient(sie, x, y);
      const [ax, ay] = alphaAt(sie, x, y);
      expectAbs(gx, ax, 1e-8);
      expectAbs(gy, ay, 1e-8);
    }
  });

  it("q → 1 tends to the SIS: α = θ_E θ/|θ| exactly at q = 1, and within O(1 − q) at q = 0.9999", () => {
    // Analytic SIS deflection. At q = 1 the e → 0 limit is exact (rtol 1e-14); at q = 0.9999 the
    // profile differs from the SIS at O(1 − q) = 1e-4 → atol 3e-4·θ_E.
    const sis = new Sie({ thetaEArcsec: 1.3, q: 1, paDeg: 17, xArcsec: 0, yArcsec: 0 });
    const near = new Sie({ thetaEArcsec: 1.3, q: 0.9999, paDeg: 17, xArcsec: 0, yArcsec: 0 });
    for (const [x, y] of SIE_TABLE) {
      const r = Math.hypot(x, y);
      const [ax, ay] = alphaAt(sis, x, y);
      expectRel(ax, (1.3 * x) / r, 1e-14);
      expectRel(ay, (1.3 * y) / r, 1e-14);
      const [bx, by] = alphaAt(near, x, y);
      expectAbs(bx, (1.3 * x) / r, 3e-4 * 1.3);
      expectAbs(by, (1.3 * y) / r, 3e-4 * 1.3);
    }
  });

  it("gives deflection 0 when the singular centre falls exactly on a ray (CONVENTIONS.md)", () => {
    const off = new Sie({ thetaEArcsec: 1, q: 0.6, paDeg: 10, xArcsec: 0.25, yArcsec: -0.5 });
    expect(alphaAt(off, 0.25, -0.5)).toEqual([0, 0]);
  });
});

describe("Sie with a core (Keeton 2001 softened isothermal)", () => {
  const core = 0.15;
  const cored = new Sie({ thetaEArcsec: 1.2, q: 0.7, paDeg: 30, xArcsec: 0, yArcsec: 0, coreArcsec: core });

  it("α matches the direct homoeoid integral of κ = θ_E/(2 sqrt(ξ² + core²))", () => {
    // Independent reference: REFERENCES.md §3 method (a) (Schramm 1990 homoeoid integral),
    // adaptive Gauss–Legendre to 1e-12 → atol 1e-9.
    const kappa = (xi: number) => 1.2 / (2 * Math.sqrt(xi * xi + core * core));
    for (const [x, y] of [...SIE_TABLE.map((r) => [r[0], r[1]]), [0, 0.01], [0.03, -0.02]]) {
      const [rx, ry] = homoeoidDeflection(kappa, 0.7, 30, x, y);
      const [ax, ay] = alphaAt(cored, x, y);
      expectAbs(ax, rx, 1e-9, `αx(${x}, ${y})`);
      expectAbs(ay, ry, 1e-9, `αy(${x}, ${y})`);
      expectAbs(kappaAt(cored, x, y), kappa(xiOf(x, y)), 1e-12);
    }
  });

  it("∇ψ = α, ∇·α = 2κ, and the analytic Hessian equals finite differences of α", () => {
    // Analytic identities; h = 1e-5″ → atol 1e-7.
    for (const [x, y] of [[0.05, 0.02], [0.5, 0.3], [-1, 0.7], [2, -1.5]]) {
      const [gx, gy] = psiGradient(cored, x, y);
      const [ax, ay] = alphaAt(cored, x, y);
      expectAbs(gx, ax, 1e-8, "∂ψ/∂x");
      expectAbs(gy, ay, 1e-8, "∂ψ/∂y");
      const [dxx, dxy, dyx, dyy] = alphaDerivatives(cored, x, y);
      const [hxx, hxy, hyy] = hessianAt(cored, x, y);
      expectAbs(dxx + dyy, 2 * kappaAt(cored, x, y), 1e-7);
      expectAbs(hxx, dxx, 1e-7);
      expectAbs(hxy, dxy, 1e-7);
      expectAbs(hxy, dyx, 1e-7);
      expectAbs(hyy, dyy, 1e-7);
    }
  });
});

/** Our elliptical radius for q = 0.7, pa = 30° (CONVENTIONS.md). */
function xiOf(x: number, y: number): number {
  const s = Math.sin(Math.PI / 6);
  const c = Math.cos(Math.PI / 6);
  const xp = x * s + y * c;
  const yp = -x * c + y * s;
  return Math.sqrt(0.7 * xp * xp + (yp * yp) / 0.7);
}
