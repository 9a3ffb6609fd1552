/**
 * Pseudo-Jaffe (truncated isothermal sphere), DESIGN.md form:
 *   κ = (θ_E/2)(1/r − 1/sqrt(r² + a²)),  a = r_trunc,
 *   α(r) = θ_E (r + a − sqrt(r² + a²))/r  (radially, from 2/r ∫0^r κ r' dr'),
 *   ψ = θ_E [r − sqrt(r² + a²) + a ln(a + sqrt(r² + a²))].
 * θ_E is the Einstein radius of the untruncated SIS; the truncated lens's own Einstein radius
 * is smaller. Reference: Keeton (2001, astro-ph/0102341) §3 "pseudo-Jaffe" (from memory); the
 * α and ψ above are integrated here analytically and checked in the tests.
 */
import { addCircularHessian, type MassProfile } from "./profile.js";

export interface PseudoJaffeParams {
  thetaEArcsec: number;
  /** Truncation radius a [arcsec] > 0. */
  rTruncArcsec: number;
  xArcsec: number;
  yArcsec: number;
}

export class PseudoJaffe implements MassProfile {
  readonly type = "pseudo_jaffe";
  readonly params: Readonly<PseudoJaffeParams>;
  private readonly b: number;
  private readonly a: number;
  private readonly x0: number;
  private readonly y0: number;

  constructor(p: PseudoJaffeParams) {
    this.params = { ...p };
    this.b = p.thetaEArcsec;
    this.a = p.rTruncArcsec;
    this.x0 = p.xArcsec;
    this.y0 = p.yArcsec;
  }

  addDeflection(x: Float64Array, y: Float64Array, outAx: Float64Array, outAy: Float64Array, n: number): void {
    const { b, a, x0, y0 } = this;
    const a2 = a * a;
    for (let i = 0; i < n; i++) {
      const dx = x[i] - x0;
      const dy = y[i] - y0;
      const r2 = dx * dx + dy * dy;
      if (r2 === 0) continue;
      const r = Math.sqrt(r2);
      const s = Math.sqrt(r2 + a2);
      // r + a − s = r(r − ... ): write as r(1 − r/(a + s))·... to avoid cancellation for r ≪ a:
      // r + a − s = r − r²/(a + s) = r (a + s − r)/(a + s)
      const aOverR = (b * (a + s - r)) / ((a + s) * r);
      outAx[i] += aOverR * dx;
      outAy[i] += aOverR * dy;
    }
  }

  addConvergence(x: Float64Array, y: Float64Array, out: Float64Array, n: number): void {
    const { b, a, x0, y0 } = this;
    const a2 = a * a;
    for (let i = 0; i < n; i++) {
      const dx = x[i] - x0;
      const dy = y[i] - y0;
      const r2 = dx * dx + dy * dy;
      if (r2 === 0) {
        out[i] += Infinity;
        continue;
      }
      out[i] += 0.5 * b * (1 / Math.sqrt(r2) - 1 / Math.sqrt(r2 + a2));
    }
  }

  addPotential(x: Float64Array, y: Float64Array, out: Float64Array, n: number): void {
    const { b, a, x0, y0 } = this;
    const a2 = a * a;
    for (let i = 0; i < n; i++) {
      const dx = x[i] - x0;
      const dy = y[i] - y0;
      const r = Math.sqrt(dx * dx + dy * dy);
      const s = Math.sqrt(r * r + a2);
      out[i] += b * (r - s + a * Math.log(a + s));
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
    const { b, a, x0, y0 } = this;
    const a2 = a * a;
    for (let i = 0; i < n; i++) {
      const dx = x[i] - x0;
      const dy = y[i] - y0;
      const r2 = dx * dx + dy * dy;
      if (r2 === 0) {
        outXx[i] += Infinity;
        outYy[i] += Infinity;
        continue;
      }
      const r = Math.sqrt(r2);
      const s = Math.sqrt(r2 + a2);
      const kappa = 0.5 * b * (1 / r - 1 / s);
      const aOverR = (b * (a + s - r)) / ((a + s) * r);
      addCircularHessian(dx, dy, kappa, aOverR, outXx, outXy, outYy, i);
    }
  }
}
