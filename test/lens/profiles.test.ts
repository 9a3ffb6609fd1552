import { describe, expect, it } from "vitest";
import { integrate } from "../../src/cosmo/quadrature.js";
import { Multipole } from "../../src/lens/multipole.js";
import { PointMass } from "../../src/lens/pointMass.js";
import { PseudoJaffe } from "../../src/lens/pseudoJaffe.js";
import { ExternalShear } from "../../src/lens/shear.js";
import { expectAbs, expectRel } from "../helpers.js";
import { alphaAt, alphaDerivatives, hessianAt, kappaAt, psiAt, psiGradient } from "./reference.js";

const PTS = [[0.5, 0.3], [-1.2, 0.8], [1.7, -2.1], [0.05, -0.3]];

function checkIdentities(p: Parameters<typeof alphaAt>[0] & Parameters<typeof kappaAt>[0], what: string): void {
  // Analytic identities of any lens potential: ∇ψ = α, ∇·α = 2κ, ∇×α = 0, Hessian = ∂α.
  // Central differences with h = 1e-5″ → atol 1e-7·max(1, |κ|).
  for (const [x, y] of PTS) {
    const k = kappaAt(p, x, y);
    const tol = 1e-7 * Math.max(1, Math.abs(k));
    const [gx, gy] = psiGradient(p, x, y);
    const [ax, ay] = alphaAt(p, x, y);
    expectAbs(gx, ax, 1e-8, `${what} ∂ψ/∂x`);
    expectAbs(gy, ay, 1e-8, `${what} ∂ψ/∂y`);
    const [dxx, dxy, dyx, dyy] = alphaDerivatives(p, x, y);
    expectAbs(dxx + dyy, 2 * k, tol, `${what} div`);
    expectAbs(dxy - dyx, 0, tol, `${what} curl`);
    const [hxx, hxy, hyy] = hessianAt(p, x, y);
    expectAbs(hxx, dxx, tol, `${what} ψxx`);
    expectAbs(hxy, dxy, tol, `${what} ψxy`);
    expectAbs(hyy, dyy, tol, `${what} ψyy`);
  }
}

describe("ExternalShear", () => {
  it("stretches images along pa: A = diag(1 + γ, 1 − γ) in the (East, North) frame at pa = 0", () => {
    // CONVENTIONS.md "External shear" (images stretched along pa) → exact values.
    const sh = new ExternalShear({ gamma: 0.1, paDeg: 0, xArcsec: 0, yArcsec: 0 });
    const [hxx, hxy, hyy] = hessianAt(sh, 0.3, 0.4);
    expectAbs(1 - hxx, 1.1, 1e-15);
    expectAbs(1 - hyy, 0.9, 1e-15);
    expectAbs(hxy, 0, 1e-15);
    // at pa = 90° the stretch is East–West: A_xx = 1 − γ
    const east = new ExternalShear({ gamma: 0.1, paDeg: 90, xArcsec: 0, yArcsec: 0 });
    expectAbs(1 - hessianAt(east, 0.3, 0.4)[0], 0.9, 1e-15);
  });

  it("has ψ = (γ/2) r² cos 2(φ − φ_γ) with φ the position angle, and consistent derivatives", () => {
    // CONVENTIONS.md formula evaluated directly at a point with φ = atan2(x, y).
    const sh = new ExternalShear({ gamma: 0.07, paDeg: 35, xArcsec: 0.1, yArcsec: -0.2 });
    const x = 0.9;
    const y = 0.4;
    const dx = x - 0.1;
    const dy = y + 0.2;
    const phi = Math.atan2(dx, dy);
    expectRel(psiAt(sh, x, y), 0.5 * 0.07 * (dx * dx + dy * dy) * Math.cos(2 * (phi - (35 * Math.PI) / 180)), 1e-13);
    checkIdentities(sh, "shear");
  });
});

describe("Multipole", () => {
  it("κ = strength/(2r) · cos(m(φ − pa)) and ψ, α, Hessian are consistent for m = 3 and 4", () => {
    // Normalisation defined in src/lens/multipole.ts; the identities are analytic.
    for (const order of [3, 4]) {
      const mp = new Multipole({ order, strength: 0.05, paDeg: 25, xArcsec: 0.1, yArcsec: 0.05 });
      const x = 0.7;
      const y = -0.45;
      const dx = x - 0.1;
      const dy = y - 0.05;
      const phi = Math.atan2(dx, dy);
      expectRel(kappaAt(mp, x, y), (0.05 / (2 * Math.hypot(dx, dy))) * Math.cos(order * (phi - (25 * Math.PI) / 180)), 1e-13);
      checkIdentities(mp, `multipole m=${order}`);
    }
  });

  it("κ is largest along pa and periodic in pa with period 360°/m", () => {
    const m4 = new Multipole({ order: 4, strength: 0.05, paDeg: 30, xArcsec: 0, yArcsec: 0 });
    const m4b = new Multipole({ order: 4, strength: 0.05, paDeg: 120, xArcsec: 0, yArcsec: 0 });
    const along = kappaAt(m4, Math.sin(Math.PI / 6), Math.cos(Math.PI / 6));
    expectRel(along, 0.025, 1e-13);
    expectRel(kappaAt(m4b, 0.3, 0.8), kappaAt(m4, 0.3, 0.8), 1e-12);
  });
});

describe("PointMass", () => {
  it("α = θ_E² θ/|θ|², ψ = θ_E² ln r, κ = 0 off-centre (Schneider et al. 1992 §8.1.1)", () => {
    // Analytic; round-off tolerance.
    const pm = new PointMass({ thetaEArcsec: 1.1, xArcsec: 0.2, yArcsec: 0.1 });
    const [ax, ay] = alphaAt(pm, 1.2, -0.9);
    const r2 = 1 + 1;
    expectRel(ax, (1.21 * 1) / r2, 1e-14);
    expectRel(ay, (1.21 * -1) / r2, 1e-14);
    expect(kappaAt(pm, 1.2, -0.9)).toBe(0);
    checkIdentities(pm, "point");
    expect(alphaAt(pm, 0.2, 0.1)).toEqual([0, 0]);
  });
});

describe("PseudoJaffe", () => {
  const pj = new PseudoJaffe({ thetaEArcsec: 1.2, rTruncArcsec: 2.5, xArcsec: -0.1, yArcsec: 0.2 });

  it("α(r) = (2/r)∫0^r κ r' dr' by quadrature of the DESIGN.md convergence", () => {
    // Circular lens theorem (Schneider et al. 1992 §8.1); quadrature to 1e-13 → rtol 1e-11.
    const kappa = (r: number) => 0.6 * (1 / r - 1 / Math.sqrt(r * r + 6.25));
    for (const r of [0.01, 0.4, 1.2, 5, 30]) {
      const mass = integrate((s) => kappa(s) * s, 0, r, 1e-13);
      const [ax, ay] = alphaAt(pj, -0.1 + r * 0.6, 0.2 + r * 0.8);
      expectRel(Math.hypot(ax, ay), (2 / r) * mass, 1e-11, `α(${r})`);
      expectRel(kappaAt(pj, -0.1 + r * 0.6, 0.2 + r * 0.8), kappa(r), 1e-12);
    }
    checkIdentities(pj, "pseudo-Jaffe");
  });

  it("tends to the SIS (α = θ_E) well inside the truncation radius", () => {
    // α = θ_E (1 + a/r − sqrt(1 + a²/r²))·... → θ_E(1 − r/(2a)) for r ≪ a: at r = 1e-3 a the
    // deficit is 5e-4·θ_E → check against the expansion to 1e-6.
    const big = new PseudoJaffe({ thetaEArcsec: 1, rTruncArcsec: 1000, xArcsec: 0, yArcsec: 0 });
    const [ax] = alphaAt(big, 1, 0);
    expectAbs(ax, 1 - 1 / 2000, 1e-6);
  });
});
