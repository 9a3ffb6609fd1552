/**
 * Singular isothermal ellipsoid (SIE), optionally with a finite core.
 * Convergence (CONVENTIONS.md): κ = θ_E / (2 sqrt(ξ² + core²)), ξ² = q x'² + y'²/q.
 * In Keeton's variables (major-axis frame, his x along the major axis) this is
 * κ = b/(2ψ), ψ = sqrt(q²(s² + x'²) + y'²), with b = θ_E √q and s = core/√q.
 * Deflection (Kormann, Schneider & Bartelmann 1994, A&A 284, 285; Keeton 2001,
 * astro-ph/0102341, softened isothermal, from memory; the tests check it against a direct
 * homoeoid integral):
 *   α_x' = (b/e) atan(e x'/(ψ + s)),   α_y' = (b/e) atanh(e y'/(ψ + q² s)),   e = sqrt(1 − q²).
 * Potential: ψ_lens = x'α_x' + y'α_y' − b s ln sqrt((ψ + s)² + e² x'²) + b s ln((1 + q) s)
 * (Keeton 2001, from memory; checked in the tests by ∇ψ = α).
 * For q = 1 the limit e → 0 is taken analytically (atan(ex)/e → x).
 */
import { fastAtanhRatio, fastAtanRatio } from "./fastMath.js";
import type { AffineMap, MassProfile } from "./profile.js";

export interface SieParams {
  /** Einstein radius [arcsec] (the critical curve is ξ = θ_E when core = 0). */
  thetaEArcsec: number;
  /** Axis ratio b/a in (0, 1]. */
  q: number;
  /** Position angle of the major axis [deg], North through East. */
  paDeg: number;
  /** Centre [arcsec]. */
  xArcsec: number;
  yArcsec: number;
  /** Core radius [arcsec] in the elliptical radius ξ (default 0: singular). */
  coreArcsec?: number;
}

// Below this 1 − q the closed forms lose digits to cancellation (b/e · atan(e t) with e → 0);
// a short Taylor series in e² is used instead: atan(u)/e ≈ t(1 − e²t²/3), u = e t.
const Q_CIRCULAR = 1 - 1e-7;

export class Sie implements MassProfile {
  readonly type = "sie";
  readonly params: Readonly<SieParams>;
  private readonly b: number;
  private readonly s: number;
  private readonly q: number;
  private readonly e: number;
  private readonly sinPa: number;
  private readonly cosPa: number;
  private readonly x0: number;
  private readonly y0: number;
  private readonly nearCircular: boolean;

  constructor(p: SieParams) {
    this.params = { ...p };
    this.q = p.q;
    this.b = p.thetaEArcsec * Math.sqrt(p.q);
    this.s = (p.coreArcsec ?? 0) / Math.sqrt(p.q);
    this.e = Math.sqrt(Math.max(0, 1 - p.q * p.q));
    const phi = (p.paDeg * Math.PI) / 180;
    this.sinPa = Math.sin(phi);
    this.cosPa = Math.cos(phi);
    this.x0 = p.xArcsec;
    this.y0 = p.yArcsec;
    this.nearCircular = p.q > Q_CIRCULAR;
  }

  addDeflection(x: Float64Array, y: Float64Array, outAx: Float64Array, outAy: Float64Array, n: number): void {
    this.deflectionKernel(x, y, null, outAx, outAy, n);
  }

  /** β = map(θ) − α(θ) in one pass (MassProfile.traceAffine). */
  traceAffine(x: Float64Array, y: Float64Array, map: AffineMap, outBx: Float64Array, outBy: Float64Array, n: number): void {
    this.deflectionKernel(x, y, map, outBx, outBy, n);
  }

  /**
   * The per-ray deflection, shared by addDeflection (map = null: α is ADDED into out) and
   * traceAffine (out is OVERWRITTEN with map(θ) − α), so both give the same α bit for bit.
   */
  private deflectionKernel(
    x: Float64Array,
    y: Float64Array,
    map: AffineMap | null,
    outX: Float64Array,
    outY: Float64Array,
    n: number,
  ): void {
    const { b, s, q, e, sinPa, cosPa, x0, y0, nearCircular } = this;
    const q2 = q * q;
    const q2s = q2 * s;
    const boe = b / e;
    const e2 = e * e;
    const trace = map !== null;
    // identity map when adding: the branch below on `trace` is the same for every ray
    const mxx = trace ? map.xx : 1;
    const mxy = trace ? map.xy : 0;
    const myx = trace ? map.yx : 0;
    const myy = trace ? map.yy : 1;
    const mx0 = trace ? map.x0 : 0;
    const my0 = trace ? map.y0 : 0;
    for (let i = 0; i < n; i++) {
      const xi = x[i];
      const yi = y[i];
      const dx = xi - x0;
      const dy = yi - y0;
      const xp = dx * sinPa + dy * cosPa;
      const yp = -dx * cosPa + dy * sinPa;
      const psi = Math.sqrt(q2 * (s * s + xp * xp) + yp * yp);
      let ax = 0;
      let ay = 0;
      // psi = 0: singular centre on the ray, deflection 0 (CONVENTIONS.md)
      if (psi !== 0) {
        let axp: number;
        let ayp: number;
        if (nearCircular) {
          const tx = xp / (psi + s);
          const ty = yp / (psi + q2s);
          axp = b * tx * (1 - (e2 * tx * tx) / 3);
          ayp = b * ty * (1 + (e2 * ty * ty) / 3);
        } else {
          // fastAtanRatio / fastAtanhRatio (within 2 ulp of Math.atan / Math.atanh) are inlined
          // here, where the Math functions are calls into C, and take the ratio apart, which
          // saves a division each: this loop runs for every sub-ray. |t| = e|y'|/(ψ + q²s) < 1.
          axp = boe * fastAtanRatio(e * xp, psi + s);
          ayp = boe * fastAtanhRatio(e * yp, psi + q2s);
        }
        ax = axp * sinPa - ayp * cosPa;
        ay = axp * cosPa + ayp * sinPa;
      }
      if (trace) {
        outX[i] = mxx * xi + mxy * yi + mx0 - ax;
        outY[i] = myx * xi + myy * yi + my0 - ay;
      } else {
        outX[i] += ax;
        outY[i] += ay;
      }
    }
  }

  addConvergence(x: Float64Array, y: Float64Array, out: Float64Array, n: number): void {
    const { b, s, q, sinPa, cosPa, x0, y0 } = this;
    const q2 = q * q;
    for (let i = 0; i < n; i++) {
      const dx = x[i] - x0;
      const dy = y[i] - y0;
      const xp = dx * sinPa + dy * cosPa;
      const yp = -dx * cosPa + dy * sinPa;
      const psi = Math.sqrt(q2 * (s * s + xp * xp) + yp * yp);
      out[i] += psi === 0 ? Infinity : b / (2 * psi);
    }
  }

  addPotential(x: Float64Array, y: Float64Array, out: Float64Array, n: number): void {
    const { b, s, q, e, sinPa, cosPa, x0, y0, nearCircular } = this;
    const q2 = q * q;
    const boe = b / e;
    const constTerm = s > 0 ? b * s * Math.log((1 + q) * s) : 0;
    for (let i = 0; i < n; i++) {
      const dx = x[i] - x0;
      const dy = y[i] - y0;
      const xp = dx * sinPa + dy * cosPa;
      const yp = -dx * cosPa + dy * sinPa;
      const psi = Math.sqrt(q2 * (s * s + xp * xp) + yp * yp);
      if (psi === 0) continue;
      let axp: number;
      let ayp: number;
      if (nearCircular) {
        const tx = xp / (psi + s);
        const ty = yp / (psi + q2 * s);
        const e2 = e * e;
        axp = b * tx * (1 - (e2 * tx * tx) / 3);
        ayp = b * ty * (1 + (e2 * ty * ty) / 3);
      } else {
        axp = boe * Math.atan((e * xp) / (psi + s));
        ayp = boe * Math.atanh((e * yp) / (psi + q2 * s));
      }
      let v = xp * axp + yp * ayp;
      if (s > 0) {
        const ps = psi + s;
        v += -b * s * 0.5 * Math.log(ps * ps + e * e * xp * xp) + constTerm;
      }
      out[i] += v;
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
    const { b, s, q, sinPa, cosPa, x0, y0 } = this;
    const q2 = q * q;
    const e2 = 1 - q2;
    const sc = sinPa * cosPa;
    const s2 = sinPa * sinPa;
    const c2 = cosPa * cosPa;
    for (let i = 0; i < n; i++) {
      const dx = x[i] - x0;
      const dy = y[i] - y0;
      const xp = dx * sinPa + dy * cosPa;
      const yp = -dx * cosPa + dy * sinPa;
      const psi = Math.sqrt(q2 * (s * s + xp * xp) + yp * yp);
      if (psi === 0) {
        // infinite convergence at the singular centre
        outXx[i] += Infinity;
        outYy[i] += Infinity;
        continue;
      }
      // Derivatives of the closed forms above; ∂ψ/∂x' = q²x'/ψ, ∂ψ/∂y' = y'/ψ.
      // ∂α_x'/∂x' = b (w − x' ψ_x)/(w² + e²x'²), w = ψ + s, and similarly (see module doc).
      const px = (q2 * xp) / psi;
      const py = yp / psi;
      const w = psi + s;
      const v = psi + q2 * s;
      const dx2 = w * w + e2 * xp * xp;
      const dy2 = v * v - e2 * yp * yp;
      const hxx = (b * (w - xp * px)) / dx2;
      const hxy = (-b * xp * py) / dx2;
      const hyy = (b * (v - yp * py)) / dy2;
      // rotate the major-axis-frame Hessian back to the sky (H = Rᵀ H' R)
      outXx[i] += s2 * hxx - 2 * sc * hxy + c2 * hyy;
      outYy[i] += c2 * hxx + 2 * sc * hxy + s2 * hyy;
      outXy[i] += sc * (hxx - hyy) + (s2 - c2) * hxy;
    }
  }
}
