import { describe, expect, it } from "vitest";
import { Nfw, nfwF, nfwH, nfwKappaOverKappaS } from "../../src/lens/nfw.js";
import { expectAbs, expectRel } from "../helpers.js";
import { alphaAt, alphaDerivatives, hessianAt, kappaAt, psiGradient } from "./reference.js";

describe("Nfw, circular (Wright & Brainerd 2000)", () => {
  // REFERENCES.md §3 NFW table: x, κ/κ_s, mean κ(<x)/κ_s, α/(κ_s θ_s) (line-of-sight and
  // enclosed-mass quadratures agree to 1e-12).
  const table: [number, number, number, number][] = [
    [0.5, 1.388511980272, 2.150362103712, 1.075181051856],
    [1.0, 0.666666666667, 1.22741127776, 1.22741127776],
    [2.0, 0.263600141281, 0.604599788078, 1.209199576156],
  ];

  it("κ, mean κ and α match REFERENCES.md §3 at x = 0.5, 1, 2", () => {
    // Closed forms vs a 12-decimal table → atol 1e-10 (REFERENCES.md tolerance).
    const kappaS = 0.3;
    const rs = 2.5;
    const lens = new Nfw({ kappaS, rSArcsec: rs, q: 1, paDeg: 0, xArcsec: 0, yArcsec: 0 });
    for (const [x, k, kbar, a] of table) {
      expectAbs(nfwKappaOverKappaS(x), k, 1e-10, `κ(${x})`);
      expectAbs((4 * nfwH(x)) / (x * x), kbar, 1e-10, `κ̄(${x})`);
      // through the profile object, at a point of radius x r_s along pa = 40°
      const px = x * rs * Math.sin(0.7);
      const py = x * rs * Math.cos(0.7);
      expectAbs(kappaAt(lens, px, py) / kappaS, k, 1e-10, `κ object (${x})`);
      const [ax, ay] = alphaAt(lens, px, py);
      expectAbs(Math.hypot(ax, ay) / (kappaS * rs), a, 1e-10, `α object (${x})`);
    }
  });

  it("is continuous across x = 1 (x = 1 ± 1e-6), where the branch formulas cancel", () => {
    // κ(1) = 2κ_s/3 and h(1) = 1 − ln 2 exactly (REFERENCES.md §3). Both functions have O(1)
    // slopes, so values at 1 ± 1e-6 differ from those at 1 by ~1e-6 → atol 2e-6; the two sides
    // must agree with their mean slope to 1e-9 (no cancellation noise).
    for (const dx of [-1e-6, 1e-6]) {
      expectAbs(nfwKappaOverKappaS(1 + dx), 2 / 3, 2e-6);
      expectAbs(nfwH(1 + dx), 1 - Math.LN2, 2e-6);
    }
    const slope = (nfwKappaOverKappaS(1 + 1e-6) - nfwKappaOverKappaS(1 - 1e-6)) / 2e-6;
    const slopeWide = (nfwKappaOverKappaS(1 + 1e-3) - nfwKappaOverKappaS(1 - 1e-3)) / 2e-3;
    expectAbs(slope, slopeWide, 1e-6);
    // the series branch (|1 − x²| < 0.1) joins the closed forms: compare just inside/outside
    for (const x of [Math.sqrt(0.9), Math.sqrt(1.1)]) {
      const closedF = x < 1 ? Math.acosh(1 / x) / Math.sqrt(1 - x * x) : Math.acos(1 / x) / Math.sqrt(x * x - 1);
      expectRel(nfwF(x * (1 + 1e-12)), closedF, 1e-11, `F(${x})`);
    }
  });
});

describe("Nfw, elliptical potential", () => {
  const lens = new Nfw({ kappaS: 0.4, rSArcsec: 3, q: 0.75, paDeg: 110, xArcsec: 0.2, yArcsec: -0.1 });
  const pts = [[0.5, 0.3], [-1.2, 0.8], [3, -2.5], [0.25, -0.05]];

  it("∇ψ = α, ∇·α = 2κ, ∇×α = 0 and the analytic Hessian matches finite differences", () => {
    // Analytic identities; central differences h = 1e-5″ → atol 1e-7·max(1, κ).
    for (const [x, y] of pts) {
      const k = kappaAt(lens, x, y);
      const tol = 1e-7 * Math.max(1, k);
      const [gx, gy] = psiGradient(lens, x, y);
      const [ax, ay] = alphaAt(lens, x, y);
      expectAbs(gx, ax, 1e-8);
      expectAbs(gy, ay, 1e-8);
      const [dxx, dxy, dyx, dyy] = alphaDerivatives(lens, x, y);
      expectAbs(dxx + dyy, 2 * k, tol, "div");
      expectAbs(dxy - dyx, 0, tol, "curl");
      const [hxx, hxy, hyy] = hessianAt(lens, x, y);
      expectAbs(hxx, dxx, tol);
      expectAbs(hxy, dxy, tol);
      expectAbs(hyy, dyy, tol);
    }
  });

  it("the potential isocontours are ellipses of axis ratio q along pa", () => {
    // Definition of the model (Golse & Kneib 2002 form): ψ at the major-axis point (a, 0)′
    // equals ψ at the minor-axis point (0, a·q)′. Round-off tolerance.
    const phi = (110 * Math.PI) / 180;
    const a = 1.3;
    const major = [0.2 + a * Math.sin(phi), -0.1 + a * Math.cos(phi)];
    const minor = [0.2 - a * 0.75 * Math.cos(phi), -0.1 + a * 0.75 * Math.sin(phi)];
    const psi = (x: number, y: number) => {
      const o = new Float64Array(1);
      lens.addPotential(Float64Array.of(x), Float64Array.of(y), o, 1);
      return o[0];
    };
    expectRel(psi(major[0], major[1]), psi(minor[0], minor[1]), 1e-13);
    expect(psi(major[0], major[1])).not.toBe(0);
  });
});
