/**
 * Sérsic profile, normalised to unit total flux.
 * I(R) = I_e exp(−b_n [(R/R_e)^(1/n) − 1]), R = ξ = sqrt(q x'² + y'²/q) (CONVENTIONS.md), so
 * R_e is the circularised half-light radius. b_n is the exact root of P(2n, b) = 1/2
 * (Ciotti & Bertin 1999, A&A 352, 447, eq. 4, from memory), found by safeguarded Newton.
 * Total flux F = 2π n R_e² I_e e^(b_n) Γ(2n)/b_n^(2n) (Graham & Driver 2005, PASA 22, 118,
 * eq. 4, from memory); the ellipse ξ = R has area πR², so it holds for any q.
 */
import { fastExp } from "../lens/fastMath.js";
import { lnGamma, regularizedGammaP } from "./gammaFunctions.js";

/** Range of the Sérsic index accepted by the builder. */
export const SERSIC_N_MIN = 0.2;
export const SERSIC_N_MAX = 10;

/**
 * Exact b_n: the root of P(2n, b) = 1/2 (half the light inside R_e), to ~1e-14.
 * @param n Sérsic index > 0
 * Reference: Ciotti & Bertin (1999) eq. 4 (definition); Newton with dP/db = b^(2n−1) e^−b/Γ(2n).
 */
export function sersicBn(n: number): number {
  const a = 2 * n;
  const lg = lnGamma(a);
  let lo = 0;
  let hi = Math.max(2 * a + 10, 1);
  // Ciotti & Bertin's leading terms as a start (good for n ≳ 0.3); clamp into the bracket
  let b = Math.min(Math.max(a - 1 / 3 + 4 / (405 * n), 1e-3), hi * 0.5);
  for (let iter = 0; iter < 200; iter++) {
    const f = regularizedGammaP(a, b) - 0.5;
    if (f > 0) hi = b;
    else lo = b;
    const dfdb = Math.exp((a - 1) * Math.log(b) - b - lg);
    let next = b - f / dfdb;
    if (!(next > lo && next < hi)) next = 0.5 * (lo + hi); // Newton left the bracket: bisect
    if (Math.abs(next - b) <= 1e-15 * Math.max(1, b)) return next;
    b = next;
  }
  return b;
}

/**
 * F/(I_e R_e²) = 2π n e^(b_n) Γ(2n)/b_n^(2n). Reference: Graham & Driver (2005) eq. 4.
 */
export function sersicFluxOverIeRe2(n: number, bn = sersicBn(n)): number {
  return 2 * Math.PI * n * Math.exp(bn + lnGamma(2 * n) - 2 * n * Math.log(bn));
}

/** Sérsic source of unit total flux (brightness in arcsec⁻², i.e. Jy/arcsec² per Jy). */
export class SersicProfile {
  readonly type = "sersic";
  readonly bn: number;
  /** Central brightness I_0 = I_e e^(b_n) of the unit-flux profile [arcsec⁻²]. */
  readonly centralUnit: number;
  private readonly halfInvN: number;
  /** k when 1/(2n) = 2^−k (n = 0.5, 1, 2, 4): u^(1/(2n)) is then k square roots; −1 otherwise. */
  private readonly sqrtRoots: number;
  private readonly invRe2: number;
  private readonly q: number;
  private readonly sinPa: number;
  private readonly cosPa: number;

  constructor(
    readonly rEffArcsec: number,
    readonly n: number,
    q: number,
    paDeg: number,
    readonly xArcsec: number,
    readonly yArcsec: number,
  ) {
    this.bn = sersicBn(n);
    this.q = q;
    const ie = 1 / (sersicFluxOverIeRe2(n, this.bn) * rEffArcsec * rEffArcsec);
    this.centralUnit = ie * Math.exp(this.bn);
    this.halfInvN = 0.5 / n;
    this.sqrtRoots = [1, 0.5, 0.25, 0.125].indexOf(this.halfInvN);
    this.invRe2 = 1 / (rEffArcsec * rEffArcsec);
    const phi = (paDeg * Math.PI) / 180;
    this.sinPa = Math.sin(phi);
    this.cosPa = Math.cos(phi);
  }

  /** Adds scale·I(β) [arcsec⁻² × scale] at n source-plane positions [arcsec]. */
  addBrightness(bx: Float64Array, by: Float64Array, out: Float64Array, n: number, scale: number): void {
    const { bn, halfInvN, invRe2, q, sinPa, cosPa, xArcsec, yArcsec, sqrtRoots } = this;
    const amp = scale * this.centralUnit;
    const invQ = 1 / q;
    for (let i = 0; i < n; i++) {
      const dx = bx[i] - xArcsec;
      const dy = by[i] - yArcsec;
      const xp = dx * sinPa + dy * cosPa;
      const yp = -dx * cosPa + dy * sinPa;
      // (R/R_e)^(1/n) = (R²/R_e²)^(1/(2n)) = u^h. For h = 1, ½, ¼, ⅛ (n = 0.5, 1, 2, 4) that is
      // 0–3 square roots, each correctly rounded; otherwise exp(h·ln u) in place of
      // Math.pow(u, h): the same value to rounding (u > 0; u = 0 gives exp(−∞) = 0 as pow does)
      // and faster in V8. fastExp (within 2 ulp of Math.exp) is inlined into this loop, where
      // Math.exp is a call into C: this runs for every sub-ray. The branches on sqrtRoots go the
      // same way for every ray.
      const u = (q * xp * xp + yp * yp * invQ) * invRe2;
      let w: number;
      if (sqrtRoots < 0) {
        w = fastExp(halfInvN * Math.log(u));
      } else if (sqrtRoots === 1) {
        w = Math.sqrt(u);
      } else if (sqrtRoots === 0) {
        w = u;
      } else {
        w = Math.sqrt(Math.sqrt(u));
        if (sqrtRoots === 3) w = Math.sqrt(w);
      }
      out[i] += amp * fastExp(-bn * w);
    }
  }
}
