/**
 * Navarro–Frenk–White halo, κ_s and r_s parametrisation, with ellipticity in the potential.
 * Circular profile (Wright & Brainerd 2000, ApJ 534, 34, eqs. 11–13; Golse & Kneib 2002,
 * A&A 390, 821, eq. 7 for the potential; both from memory), x = R/r_s, u = 1 − x²:
 *   F(x) = artanh(√u)/√u (x < 1) or arctan(√−u)/√−u (x > 1) = Σ_k u^k/(2k + 1),
 *   κ = 2κ_s (1 − F)/(x² − 1) = 2κ_s Σ_{k≥1} u^(k−1)/(2k + 1),
 *   h(x) = ln(x/2) + F(x),   α = 4κ_s r_s h(x)/x,   mean κ(<x) = 4κ_s h(x)/x²,
 *   ψ = 4κ_s r_s² [½ ln²(x/2) + ½ (x² − 1) F(x)²].
 * (2 artanh sqrt((1−x)/(1+x)) = arccosh(1/x), so h is Wright & Brainerd's g-function in this
 * compact form.) Near x = 1 the closed forms cancel badly; the series in u is used for
 * |u| < 0.1 (19 terms reach 1e-19), which has no cancellation at all.
 * Ellipticity: ψ(θ) = ψ_circ(ξ), ξ² = q x'² + y'²/q (ellipticity in the potential, as Golse &
 * Kneib 2002). Chosen because deflection and Hessian stay closed-form (fast enough for fits);
 * the price is that the isodensity contours are flatter than q and become peanut-shaped for
 * strongly flattened potentials, so q ≥ NFW_MIN_Q is required. With q = 1 the profile is the
 * exact circular NFW. κ is computed as half the trace of the analytic Hessian.
 */
import type { MassProfile } from "./profile.js";

export interface NfwParams {
  /** κ_s = ρ_s r_s / Σ_crit. */
  kappaS: number;
  /** Scale radius [arcsec]. */
  rSArcsec: number;
  /** Axis ratio of the potential's isocontours. */
  q: number;
  paDeg: number;
  xArcsec: number;
  yArcsec: number;
}

/** Smallest potential axis ratio accepted (see the module comment). */
export const NFW_MIN_Q = 0.5;

const SERIES_U = 0.1;

/** F(x) of the NFW lens (see module comment); x > 0. */
export function nfwF(x: number): number {
  const u = 1 - x * x;
  if (Math.abs(u) < SERIES_U) {
    let sum = 0;
    let p = 1;
    for (let k = 0; k < 20; k++) {
      sum += p / (2 * k + 1);
      p *= u;
    }
    return sum;
  }
  if (x < 1) return Math.acosh(1 / x) / Math.sqrt(u);
  return Math.acos(1 / x) / Math.sqrt(-u);
}

/** κ/κ_s of the circular NFW at x = R/r_s (Wright & Brainerd 2000 eq. 11). */
export function nfwKappaOverKappaS(x: number): number {
  const u = 1 - x * x;
  if (Math.abs(u) < SERIES_U) {
    let sum = 0;
    let p = 1;
    for (let k = 1; k < 21; k++) {
      sum += p / (2 * k + 1);
      p *= u;
    }
    return 2 * sum;
  }
  return (2 * (1 - nfwF(x))) / (x * x - 1);
}

/** h(x) = ln(x/2) + F(x): α = 4κ_s r_s h/x (Wright & Brainerd 2000 eq. 13, rewritten). */
export function nfwH(x: number): number {
  return Math.log(x / 2) + nfwF(x);
}

export class Nfw implements MassProfile {
  readonly type = "nfw";
  readonly params: Readonly<NfwParams>;
  private readonly ks: number;
  private readonly rs: number;
  private readonly q: number;
  private readonly sinPa: number;
  private readonly cosPa: number;
  private readonly x0: number;
  private readonly y0: number;

  constructor(p: NfwParams) {
    this.params = { ...p };
    this.ks = p.kappaS;
    this.rs = p.rSArcsec;
    this.q = p.q;
    const phi = (p.paDeg * Math.PI) / 180;
    this.sinPa = Math.sin(phi);
    this.cosPa = Math.cos(phi);
    this.x0 = p.xArcsec;
    this.y0 = p.yArcsec;
  }

  addDeflection(x: Float64Array, y: Float64Array, outAx: Float64Array, outAy: Float64Array, n: number): void {
    const { ks, rs, q, sinPa, cosPa, x0, y0 } = this;
    const invQ = 1 / q;
    for (let i = 0; i < n; i++) {
      const dx = x[i] - x0;
      const dy = y[i] - y0;
      const xp = dx * sinPa + dy * cosPa;
      const yp = -dx * cosPa + dy * sinPa;
      const xi = Math.sqrt(q * xp * xp + yp * yp * invQ);
      if (xi === 0) continue;
      const xx = xi / rs;
      // α_circ(ξ)/ξ, then ∂ψ/∂x' = α_c q x'/ξ, ∂ψ/∂y' = α_c y'/(q ξ)
      const aOverXi = (4 * ks * nfwH(xx)) / (xx * xx);
      const axp = aOverXi * q * xp;
      const ayp = aOverXi * yp * invQ;
      outAx[i] += axp * sinPa - ayp * cosPa;
      outAy[i] += axp * cosPa + ayp * sinPa;
    }
  }

  addConvergence(x: Float64Array, y: Float64Array, out: Float64Array, n: number): void {
    const { ks, rs, q, sinPa, cosPa, x0, y0 } = this;
    const invQ = 1 / q;
    for (let i = 0; i < n; i++) {
      const dx = x[i] - x0;
      const dy = y[i] - y0;
      const xp = dx * sinPa + dy * cosPa;
      const yp = -dx * cosPa + dy * sinPa;
      const xi = Math.sqrt(q * xp * xp + yp * yp * invQ);
      if (xi === 0) {
        out[i] += Infinity;
        continue;
      }
      const xx = xi / rs;
      const a = (4 * ks * nfwH(xx)) / (xx * xx);
      const d = 2 * ks * nfwKappaOverKappaS(xx) - a;
      const gx = (q * xp) / xi;
      const gy = (yp * invQ) / xi;
      const hxx = d * gx * gx + a * (q - gx * gx);
      const hyy = d * gy * gy + a * (invQ - gy * gy);
      out[i] += 0.5 * (hxx + hyy);
    }
  }

  addPotential(x: Float64Array, y: Float64Array, out: Float64Array, n: number): void {
    const { ks, rs, q, sinPa, cosPa, x0, y0 } = this;
    const invQ = 1 / q;
    const norm = 4 * ks * rs * rs;
    for (let i = 0; i < n; i++) {
      const dx = x[i] - x0;
      const dy = y[i] - y0;
      const xp = dx * sinPa + dy * cosPa;
      const yp = -dx * cosPa + dy * sinPa;
      const xi = Math.sqrt(q * xp * xp + yp * yp * invQ);
      if (xi === 0) continue; // ψ → 0 as ξ → 0 (ln² terms cancel)
      const xx = xi / rs;
      const l = Math.log(xx / 2);
      const f = nfwF(xx);
      out[i] += norm * 0.5 * (l * l + (xx * xx - 1) * f * f);
    }
  }

  addHessian(
    x: Float64Array,
    y: Float64Array,
    outXx: Float64Array,
    outXy: Float64Array,
    outYy: Float64Array,
    n: number,
  ): void {
    const { ks, rs, q, sinPa, cosPa, x0, y0 } = this;
    const invQ = 1 / q;
    const sc = sinPa * cosPa;
    const s2 = sinPa * sinPa;
    const c2 = cosPa * cosPa;
    for (let i = 0; i < n; i++) {
      const dx = x[i] - x0;
      const dy = y[i] - y0;
      const xp = dx * sinPa + dy * cosPa;
      const yp = -dx * cosPa + dy * sinPa;
      const xi = Math.sqrt(q * xp * xp + yp * yp * invQ);
      if (xi === 0) {
        outXx[i] += Infinity;
        outYy[i] += Infinity;
        continue;
      }
      const xx = xi / rs;
      // a = Ψ'/ξ, d = Ψ'' = 2κ_c − a; H' = d g gᵀ + a (diag(q, 1/q) − g gᵀ)
      const a = (4 * ks * nfwH(xx)) / (xx * xx);
      const d = 2 * ks * nfwKappaOverKappaS(xx) - a;
      const gx = (q * xp) / xi;
      const gy = (yp * invQ) / xi;
      const hxx = d * gx * gx + a * (q - gx * gx);
      const hyy = d * gy * gy + a * (invQ - gy * gy);
      const hxy = (d - a) * gx * gy;
      outXx[i] += s2 * hxx - 2 * sc * hxy + c2 * hyy;
      outYy[i] += c2 * hxx + 2 * sc * hxy + s2 * hyy;
      outXy[i] += sc * (hxx - hyy) + (s2 - c2) * hxy;
    }
  }
}
