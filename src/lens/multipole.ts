/**
 * Isothermal multipole perturbation of order m (3 or 4).
 * Normalisation chosen here: the potential is
 *   ψ = strength · r · cos(m(φ − φ_m)) / (1 − m²),
 * with r the distance from the centre [arcsec], φ the position angle of the point (North
 * through East) and φ_m = pa. Since ∇²(r f(φ)) = (f + f'')/r, this gives
 *   κ = (strength / (2r)) · cos(m(φ − φ_m)),
 * i.e. `strength` [arcsec] is the amplitude of an isothermal (κ ∝ 1/r) angular perturbation;
 * for a lens of Einstein radius θ_E, strength/θ_E is the usual dimensionless multipole
 * amplitude a_m. This r·cos(mφ)/(1 − m²) potential form is the one used for lensing
 * multipoles by e.g. Evans & Witt (2003, MNRAS 345, 1351) and Chu et al. (2013, ApJ 770, 34)
 * (from memory; the tests check ∇²ψ = 2κ and ∇ψ = α by finite differences, not the citation).
 * pa is periodic with period 360°/m (not 180°).
 * Deflection: α = ∂_r ψ e_r + (1/r) ∂_φ ψ e_φ with e_r = (sin φ, cos φ), e_φ = (cos φ, −sin φ).
 * Hessian: ψ is homogeneous of degree 1, so ψ_ij = 2κ e_φ,i e_φ,j.
 */
import type { MassProfile } from "./profile.js";

export interface MultipoleParams {
  /** Order m: 3 or 4. */
  order: number;
  /** Amplitude [arcsec]: κ = strength/(2r) · cos(m(φ − pa)). */
  strength: number;
  /** Orientation [deg], North through East: κ is largest along pa. */
  paDeg: number;
  xArcsec: number;
  yArcsec: number;
}

export class Multipole implements MassProfile {
  readonly type = "multipole";
  readonly params: Readonly<MultipoleParams>;
  private readonly m: number;
  private readonly amp: number;
  private readonly phiM: number;
  private readonly x0: number;
  private readonly y0: number;

  constructor(p: MultipoleParams) {
    this.params = { ...p };
    this.m = p.order;
    this.amp = p.strength / (1 - p.order * p.order);
    this.phiM = (p.paDeg * Math.PI) / 180;
    this.x0 = p.xArcsec;
    this.y0 = p.yArcsec;
  }

  addDeflection(x: Float64Array, y: Float64Array, outAx: Float64Array, outAy: Float64Array, n: number): void {
    const { m, amp, phiM, x0, y0 } = this;
    for (let i = 0; i < n; i++) {
      const dx = x[i] - x0;
      const dy = y[i] - y0;
      const r = Math.sqrt(dx * dx + dy * dy);
      if (r === 0) continue; // direction-dependent limit at the centre: 0 (CONVENTIONS.md)
      const sinPhi = dx / r;
      const cosPhi = dy / r;
      const ang = m * (Math.atan2(dx, dy) - phiM);
      const cm = Math.cos(ang);
      const sm = Math.sin(ang);
      // ∂_r ψ = amp cos(mΔ); (1/r)∂_φ ψ = −amp m sin(mΔ)
      const ar = amp * cm;
      const ap = -amp * m * sm;
      outAx[i] += ar * sinPhi + ap * cosPhi;
      outAy[i] += ar * cosPhi - ap * sinPhi;
    }
  }

  addConvergence(x: Float64Array, y: Float64Array, out: Float64Array, n: number): void {
    const { m, phiM, x0, y0 } = this;
    const half = 0.5 * this.params.strength;
    for (let i = 0; i < n; i++) {
      const dx = x[i] - x0;
      const dy = y[i] - y0;
      const r = Math.sqrt(dx * dx + dy * dy);
      if (r === 0) continue;
      out[i] += (half / r) * Math.cos(m * (Math.atan2(dx, dy) - phiM));
    }
  }

  addPotential(x: Float64Array, y: Float64Array, out: Float64Array, n: number): void {
    const { m, amp, phiM, x0, y0 } = this;
    for (let i = 0; i < n; i++) {
      const dx = x[i] - x0;
      const dy = y[i] - y0;
      const r = Math.sqrt(dx * dx + dy * dy);
      if (r === 0) continue;
      out[i] += amp * r * Math.cos(m * (Math.atan2(dx, dy) - phiM));
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
    const { m, phiM, x0, y0 } = this;
    const strength = this.params.strength;
    for (let i = 0; i < n; i++) {
      const dx = x[i] - x0;
      const dy = y[i] - y0;
      const r2 = dx * dx + dy * dy;
      if (r2 === 0) continue;
      const r = Math.sqrt(r2);
      const twoKappa = (strength / r) * Math.cos(m * (Math.atan2(dx, dy) - phiM));
      // e_φ = (y/r, −x/r)
      outXx[i] += (twoKappa * dy * dy) / r2;
      outYy[i] += (twoKappa * dx * dx) / r2;
      outXy[i] -= (twoKappa * dx * dy) / r2;
    }
  }
}
