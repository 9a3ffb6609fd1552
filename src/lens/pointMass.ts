/**
 * Point mass: ψ = θ_E² ln r, α = θ_E² θ/r², κ = 0 away from the centre (a δ-function there).
 * Reference: Schneider, Ehlers & Falco (1992) §8.1.1 (from memory); CONVENTIONS.md "Point mass".
 */
import { addCircularHessian, type MassProfile } from "./profile.js";

export interface PointMassParams {
  /** Einstein radius [arcsec]. */
  thetaEArcsec: number;
  xArcsec: number;
  yArcsec: number;
}

export class PointMass implements MassProfile {
  readonly type = "point";
  readonly params: Readonly<PointMassParams>;
  private readonly te2: number;
  private readonly x0: number;
  private readonly y0: number;

  constructor(p: PointMassParams) {
    this.params = { ...p };
    this.te2 = p.thetaEArcsec * p.thetaEArcsec;
    this.x0 = p.xArcsec;
    this.y0 = p.yArcsec;
  }

  addDeflection(x: Float64Array, y: Float64Array, outAx: Float64Array, outAy: Float64Array, n: number): void {
    const { te2, x0, y0 } = this;
    for (let i = 0; i < n; i++) {
      const dx = x[i] - x0;
      const dy = y[i] - y0;
      const r2 = dx * dx + dy * dy;
      if (r2 === 0) continue; // CONVENTIONS.md: 0 at the singular centre
      const k = te2 / r2;
      outAx[i] += k * dx;
      outAy[i] += k * dy;
    }
  }

  addConvergence(x: Float64Array, y: Float64Array, out: Float64Array, n: number): void {
    const { x0, y0 } = this;
    for (let i = 0; i < n; i++) {
      // the δ-function: infinite at the exact centre, zero elsewhere
      if (x[i] === x0 && y[i] === y0) out[i] += Infinity;
    }
  }

  addPotential(x: Float64Array, y: Float64Array, out: Float64Array, n: number): void {
    const { te2, x0, y0 } = this;
    for (let i = 0; i < n; i++) {
      const dx = x[i] - x0;
      const dy = y[i] - y0;
      const r2 = dx * dx + dy * dy;
      if (r2 === 0) continue;
      out[i] += 0.5 * te2 * Math.log(r2);
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
    const { te2, x0, y0 } = this;
    for (let i = 0; i < n; i++) {
      const dx = x[i] - x0;
      const dy = y[i] - y0;
      const r2 = dx * dx + dy * dy;
      if (r2 === 0) {
        outXx[i] += Infinity;
        outYy[i] += Infinity;
        continue;
      }
      addCircularHessian(dx, dy, 0, te2 / r2, outXx, outXy, outYy, i);
    }
  }
}
