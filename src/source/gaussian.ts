/**
 * Elliptical Gaussian source of unit total flux:
 * I = exp(−ξ²/(2σ²)) / (2πσ²), ξ² = q x'² + y'²/q (CONVENTIONS.md; σ is circularised:
 * σ_major = σ/√q, σ_minor = σ√q). The ellipse ξ = R has area πR², so ∫ I d²β = 1.
 * Reference: REFERENCES.md §5 (elliptical Gaussian definition).
 */
import { fastExp } from "../lens/fastMath.js";

export class GaussianProfile {
  readonly type = "gaussian";
  private readonly norm: number;
  private readonly inv2s2: number;
  private readonly q: number;
  private readonly sinPa: number;
  private readonly cosPa: number;

  constructor(
    readonly sigmaArcsec: number,
    q: number,
    paDeg: number,
    readonly xArcsec: number,
    readonly yArcsec: number,
  ) {
    this.norm = 1 / (2 * Math.PI * sigmaArcsec * sigmaArcsec);
    this.inv2s2 = 1 / (2 * sigmaArcsec * sigmaArcsec);
    this.q = q;
    const phi = (paDeg * Math.PI) / 180;
    this.sinPa = Math.sin(phi);
    this.cosPa = Math.cos(phi);
  }

  /** Adds scale·I(β) at n source-plane positions [arcsec]. */
  addBrightness(bx: Float64Array, by: Float64Array, out: Float64Array, n: number, scale: number): void {
    const { inv2s2, q, sinPa, cosPa, xArcsec, yArcsec } = this;
    const amp = scale * this.norm;
    const invQ = 1 / q;
    for (let i = 0; i < n; i++) {
      const dx = bx[i] - xArcsec;
      const dy = by[i] - yArcsec;
      const xp = dx * sinPa + dy * cosPa;
      const yp = -dx * cosPa + dy * sinPa;
      // fastExp (within 2 ulp of Math.exp) inlines into this per-ray loop; Math.exp is a C call
      out[i] += amp * fastExp(-(q * xp * xp + yp * yp * invQ) * inv2s2);
    }
  }
}

/**
 * Point source: no surface brightness; the ray tracer finds its images by solving the lens
 * equation and deposits flux × |μ| into the pixels they fall in.
 */
export class PointSourceProfile {
  readonly type = "point_source";
  constructor(
    readonly xArcsec: number,
    readonly yArcsec: number,
  ) {}
  addBrightness(_bx: Float64Array, _by: Float64Array, _out: Float64Array, _n: number, _scale: number): void {
    // a δ-function has no finite surface brightness at any sampled point
  }
}
