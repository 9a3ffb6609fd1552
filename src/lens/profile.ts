/**
 * The interface every mass profile implements, and small helpers shared by them.
 * All positions and deflections are in arcsec on the sky (x East, y North; CONVENTIONS.md);
 * the potential ψ is in arcsec², the Hessian ∂²ψ dimensionless. Every method ADDS into its
 * output arrays, so a composite lens sums its components without temporaries.
 * Reference: Schneider, Ehlers & Falco (1992), Gravitational Lenses, ch. 5 (lens equation,
 * β = θ − ∇ψ, κ = ∇²ψ/2) (from memory).
 */

/**
 * An affine map of the image plane [arcsec → arcsec]:
 * (x, y) ↦ (xx·x + xy·y + x0, yx·x + yy·y + y0). The lens uses it for θ minus the summed
 * deflection of its linear components (external shear).
 */
export interface AffineMap {
  readonly xx: number;
  readonly xy: number;
  readonly yx: number;
  readonly yy: number;
  /** Offsets [arcsec]. */
  readonly x0: number;
  readonly y0: number;
}

/**
 * A deflection linear in θ: α = J·(θ − c), with J = [[xx, xy], [yx, yy]] (dimensionless) and
 * centre c [arcsec].
 */
export interface LinearDeflection {
  readonly xx: number;
  readonly xy: number;
  readonly yx: number;
  readonly yy: number;
  readonly xArcsec: number;
  readonly yArcsec: number;
}

export interface MassProfile {
  /** Component type as in the model file (`sie`, `epl`, ...). */
  readonly type: string;
  /**
   * Optional, for components whose deflection is linear in θ (external shear): its J and c.
   * The lens folds such components into one affine map instead of a pass over the rays each.
   */
  linearDeflection?(): LinearDeflection;
  /**
   * Optional fused ray trace: WRITES β = map(θ) − α(θ) [arcsec] at the first n positions, in one
   * pass (map: θ minus the deflection of the lens's linear components). Must equal
   * map(θ) − (what addDeflection adds) to rounding.
   */
  traceAffine?(
    xArcsec: Float64Array,
    yArcsec: Float64Array,
    map: AffineMap,
    outBx: Float64Array,
    outBy: Float64Array,
    n: number,
  ): void;
  /** α(θ) [arcsec] added into outAx/outAy at the first n positions [arcsec]. */
  addDeflection(xArcsec: Float64Array, yArcsec: Float64Array, outAx: Float64Array, outAy: Float64Array, n: number): void;
  /** κ(θ) added into out. */
  addConvergence(xArcsec: Float64Array, yArcsec: Float64Array, out: Float64Array, n: number): void;
  /** ψ(θ) [arcsec²] added into out (defined up to a constant). */
  addPotential(xArcsec: Float64Array, yArcsec: Float64Array, out: Float64Array, n: number): void;
  /** Second derivatives ψ_xx, ψ_xy, ψ_yy added into the outputs (analytic). */
  addHessian(
    xArcsec: Float64Array,
    yArcsec: Float64Array,
    outXx: Float64Array,
    outXy: Float64Array,
    outYy: Float64Array,
    n: number,
  ): void;
}

/**
 * Sine and cosine of a position angle [deg]. With x' = x sinφ + y cosφ (major axis) and
 * y' = −x cosφ + y sinφ (CONVENTIONS.md), the sky components of a vector given in the
 * major-axis frame are v_x = v_x' sinφ − v_y' cosφ, v_y = v_x' cosφ + v_y' sinφ.
 */
export interface Orientation {
  sinPa: number;
  cosPa: number;
}

/** Orientation of a position angle in degrees (North through East). */
export function orientation(paDeg: number): Orientation {
  const phi = (paDeg * Math.PI) / 180;
  return { sinPa: Math.sin(phi), cosPa: Math.cos(phi) };
}

/**
 * Zeroed scratch buffers that grow on demand (allocation only when a larger n is first seen),
 * for profiles that need intermediate arrays (e.g. a Hessian built from α and κ).
 */
export class Scratch {
  private readonly buffers: Float64Array[];
  constructor(count: number) {
    this.buffers = Array.from({ length: count }, () => new Float64Array(0));
  }
  /** Buffer k, at least n long, with its first n entries zeroed; returns a view of length n. */
  get(k: number, n: number): Float64Array {
    if (this.buffers[k].length < n) this.buffers[k] = new Float64Array(Math.max(n, 2 * this.buffers[k].length));
    const v = this.buffers[k].subarray(0, n);
    v.fill(0);
    return v;
  }
}

/**
 * Adds the Hessian of a circularly symmetric lens at offset (dx, dy) from its centre, given
 * κ and α(r)/r there: ψ_ij = (α/r) δ_ij + (2κ − 2α/r) x_i x_j / r²
 * (since dα/dr = 2κ − α/r for a circular lens). Analytic; Schneider, Ehlers & Falco (1992) §8.1
 * (from memory).
 */
export function addCircularHessian(
  dx: number,
  dy: number,
  kappa: number,
  alphaOverR: number,
  outXx: Float64Array,
  outXy: Float64Array,
  outYy: Float64Array,
  i: number,
): void {
  const r2 = dx * dx + dy * dy;
  const k = (2 * kappa - 2 * alphaOverR) / r2;
  outXx[i] += alphaOverR + k * dx * dx;
  outYy[i] += alphaOverR + k * dy * dy;
  outXy[i] += k * dx * dy;
}
