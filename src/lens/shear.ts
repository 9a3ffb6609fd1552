/**
 * External shear. Potential (CONVENTIONS.md): ψ = (γ/2) r² cos 2(φ − φ_γ), φ the position
 * angle (North through East) of the point about the shear centre. With (x, y) = r(sin φ, cos φ):
 * r² cos 2φ = y² − x² and r² sin 2φ = 2xy, so
 *   ψ = (γ/2)[(y² − x²) C + 2xy S],  C = cos 2φ_γ, S = sin 2φ_γ,
 *   α = γ(−xC + yS, yC + xS),  ψ_xx = −γC, ψ_yy = γC, ψ_xy = γS, κ = 0.
 * At φ_γ = 0 the Jacobian is diag(1 + γ, 1 − γ): images are stretched along North = pa.
 * Reference: Kovner (1987, ApJ 312, 22) (from memory); CONVENTIONS.md "External shear".
 */
import type { LinearDeflection, MassProfile } from "./profile.js";

export interface ShearParams {
  /** Shear strength γ (dimensionless). */
  gamma: number;
  /** Shear position angle [deg]: the stretching direction. */
  paDeg: number;
  /** Centre [arcsec] (default 0, 0). */
  xArcsec: number;
  yArcsec: number;
}

export class ExternalShear implements MassProfile {
  readonly type = "shear";
  readonly params: Readonly<ShearParams>;
  private readonly gc: number;
  private readonly gs: number;
  private readonly x0: number;
  private readonly y0: number;

  constructor(p: ShearParams) {
    this.params = { ...p };
    const twoPhi = (2 * p.paDeg * Math.PI) / 180;
    this.gc = p.gamma * Math.cos(twoPhi);
    this.gs = p.gamma * Math.sin(twoPhi);
    this.x0 = p.xArcsec;
    this.y0 = p.yArcsec;
  }

  /** α = J(θ − c) with J = γ[[−C, S], [S, C]]: the shear is linear in θ. */
  linearDeflection(): LinearDeflection {
    return { xx: -this.gc, xy: this.gs, yx: this.gs, yy: this.gc, xArcsec: this.x0, yArcsec: this.y0 };
  }

  addDeflection(x: Float64Array, y: Float64Array, outAx: Float64Array, outAy: Float64Array, n: number): void {
    const { gc, gs, x0, y0 } = this;
    for (let i = 0; i < n; i++) {
      const dx = x[i] - x0;
      const dy = y[i] - y0;
      outAx[i] += -dx * gc + dy * gs;
      outAy[i] += dy * gc + dx * gs;
    }
  }

  addConvergence(_x: Float64Array, _y: Float64Array, _out: Float64Array, _n: number): void {
    // κ = 0: a pure shear has a traceless Hessian
  }

  addPotential(x: Float64Array, y: Float64Array, out: Float64Array, n: number): void {
    const { gc, gs, x0, y0 } = this;
    for (let i = 0; i < n; i++) {
      const dx = x[i] - x0;
      const dy = y[i] - y0;
      out[i] += 0.5 * ((dy * dy - dx * dx) * gc + 2 * dx * dy * gs);
    }
  }

  addHessian(
    _x: Float64Array,
    _y: Float64Array,
    outXx: Float64Array,
    outXy: Float64Array,
    outYy: Float64Array,
    n: number,
  ): void {
    const { gc, gs } = this;
    for (let i = 0; i < n; i++) {
      outXx[i] -= gc;
      outYy[i] += gc;
      outXy[i] += gs;
    }
  }
}
