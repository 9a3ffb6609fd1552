/**
 * Independent references for the lens tests: the 1D homoeoid integral for deflections of
 * elliptical mass distributions, and central finite differences.
 * Homoeoid integral (Schramm 1990; Keeton 2001 §2; REFERENCES.md §3 (a)): in the major-axis
 * frame, with Keeton's ξ_K² = x'² + y'²/q² (our ξ² = q ξ_K²),
 *   α_x' = q x' J0, α_y' = q y' J1, J_n = ∫0^1 κ(ξ(u)) [1 − (1 − q²)u]^−(n + ½) du,
 *   ξ_K(u)² = u (x'² + y'²/(1 − (1 − q²)u)).
 * For a central cusp κ ∝ ξ^−t the integrand behaves as u^(−t/2) at u = 0; the substitution
 * u = w^p with p = 2/(2 − t) makes it finite there (p = 2 for isothermal and cored profiles).
 */
import { integrate } from "../../src/cosmo/quadrature.js";
import type { Lens } from "../../src/lens/lens.js";
import type { MassProfile } from "../../src/lens/profile.js";

/** Deflection [arcsec] of κ(ξ) (ξ our elliptical radius) with axis ratio q, pa [deg], centre 0. */
export function homoeoidDeflection(
  kappaOfXi: (xi: number) => number,
  q: number,
  paDeg: number,
  x: number,
  y: number,
  cuspSlope = 1,
): [number, number] {
  const pw = 2 / (2 - cuspSlope);
  const phi = (paDeg * Math.PI) / 180;
  const s = Math.sin(phi);
  const c = Math.cos(phi);
  const xp = x * s + y * c;
  const yp = -x * c + y * s;
  const e2 = 1 - q * q;
  const j = (nExp: number) =>
    integrate(
      (w) => {
        if (w === 0) return 0;
        const u = Math.pow(w, pw);
        const den = 1 - e2 * u;
        const xiK2 = u * (xp * xp + (yp * yp) / den);
        const xi = Math.sqrt(q * xiK2);
        return pw * Math.pow(w, pw - 1) * kappaOfXi(xi) * Math.pow(den, -(nExp + 0.5));
      },
      0,
      1,
      1e-12,
      1e-15,
    );
  const axp = q * xp * j(0);
  const ayp = q * yp * j(1);
  return [axp * s - ayp * c, axp * c + ayp * s];
}

type Evaluator = Pick<MassProfile, "addDeflection" | "addConvergence" | "addPotential" | "addHessian">;

function one(v: number): Float64Array {
  return Float64Array.of(v);
}

/** Deflection of a profile or lens at one point. */
export function alphaAt(p: Evaluator | Lens, x: number, y: number): [number, number] {
  const ax = new Float64Array(1);
  const ay = new Float64Array(1);
  if ("deflect" in p) p.deflect(one(x), one(y), ax, ay, 1);
  else p.addDeflection(one(x), one(y), ax, ay, 1);
  return [ax[0], ay[0]];
}

export function kappaAt(p: Evaluator, x: number, y: number): number {
  const o = new Float64Array(1);
  p.addConvergence(one(x), one(y), o, 1);
  return o[0];
}

export function psiAt(p: Evaluator, x: number, y: number): number {
  const o = new Float64Array(1);
  p.addPotential(one(x), one(y), o, 1);
  return o[0];
}

export function hessianAt(p: Evaluator, x: number, y: number): [number, number, number] {
  const a = new Float64Array(1);
  const b = new Float64Array(1);
  const c = new Float64Array(1);
  p.addHessian(one(x), one(y), a, b, c, 1);
  return [a[0], b[0], c[0]];
}

/**
 * Central differences of α with step h: [∂αx/∂x, ∂αx/∂y, ∂αy/∂x, ∂αy/∂y].
 * Error O(h²·α''') + O(ε/h): h = 1e-5″ gives ~1e-9 for O(1) derivatives.
 */
export function alphaDerivatives(p: Evaluator, x: number, y: number, h = 1e-5): [number, number, number, number] {
  const [axp, ayp] = alphaAt(p, x + h, y);
  const [axm, aym] = alphaAt(p, x - h, y);
  const [bxp, byp] = alphaAt(p, x, y + h);
  const [bxm, bym] = alphaAt(p, x, y - h);
  return [(axp - axm) / (2 * h), (bxp - bxm) / (2 * h), (ayp - aym) / (2 * h), (byp - bym) / (2 * h)];
}

/** Central-difference gradient of ψ with step h. */
export function psiGradient(p: Evaluator, x: number, y: number, h = 1e-5): [number, number] {
  return [
    (psiAt(p, x + h, y) - psiAt(p, x - h, y)) / (2 * h),
    (psiAt(p, x, y + h) - psiAt(p, x, y - h)) / (2 * h),
  ];
}

/**
 * Flux of α through the ellipse ξ = R (our ξ, pa φ): ∮ α·n dl, by the trapezoidal rule on the
 * periodic parametrisation (spectrally accurate for smooth α).
 */
export function ellipseFlux(p: Evaluator, q: number, paDeg: number, R: number, nPts = 2000): number {
  const phi = (paDeg * Math.PI) / 180;
  const s = Math.sin(phi);
  const c = Math.cos(phi);
  const a = R / Math.sqrt(q); // semi-major (x') axis
  const b = R * Math.sqrt(q);
  let sum = 0;
  for (let k = 0; k < nPts; k++) {
    const t = (2 * Math.PI * k) / nPts;
    const xp = a * Math.cos(t);
    const yp = b * Math.sin(t);
    // outward normal × dl in the frame: (b cos t, a sin t) dt
    const nxp = b * Math.cos(t);
    const nyp = a * Math.sin(t);
    const x = xp * s - yp * c;
    const y = xp * c + yp * s;
    const nx = nxp * s - nyp * c;
    const ny = nxp * c + nyp * s;
    const [ax, ay] = alphaAt(p, x, y);
    sum += ax * nx + ay * ny;
  }
  return (sum * 2 * Math.PI) / nPts;
}
