/**
 * A composite lens: the sum of its mass components. Deflection, convergence, potential and
 * Hessian add the components' analytic values; the Jacobian A = I − ∂α/∂θ and the
 * magnification μ = 1/det A follow from the Hessian.
 * Reference: Schneider, Ehlers & Falco (1992) ch. 5 (lens equation, A and μ; from memory).
 */
import type { AffineMap, MassProfile } from "./profile.js";

/** Second derivatives of ψ at a set of points, and the derived lensing Jacobian quantities. */
export class HessianWorkspace {
  xx = new Float64Array(0);
  xy = new Float64Array(0);
  yy = new Float64Array(0);
  /** Grow (never shrink) and zero the first n entries. */
  reset(n: number): void {
    if (this.xx.length < n) {
      this.xx = new Float64Array(n);
      this.xy = new Float64Array(n);
      this.yy = new Float64Array(n);
    } else {
      this.xx.fill(0, 0, n);
      this.xy.fill(0, 0, n);
      this.yy.fill(0, 0, n);
    }
  }
}

export class Lens {
  /** Mass components, summed. */
  readonly components: readonly MassProfile[];
  private readonly ws = new HessianWorkspace();

  /**
   * One-pass ray trace, when the lens is one component with traceAffine plus any number of
   * linear ones (shear): β = map(θ) − α_main(θ), map = θ − Σ α_linear. Null otherwise.
   */
  private readonly fused: { main: MassProfile | null; map: AffineMap } | null;

  constructor(components: readonly MassProfile[]) {
    this.components = components;
    this.fused = planFusedTrace(components);
  }

  /**
   * Total deflection α(θ) [arcsec] at positions (x, y) [arcsec]; overwrites outAx/outAy.
   * @param n number of points (default x.length)
   */
  deflect(
    xArcsec: Float64Array,
    yArcsec: Float64Array,
    outAx: Float64Array,
    outAy: Float64Array,
    n = xArcsec.length,
  ): void {
    outAx.fill(0, 0, n);
    outAy.fill(0, 0, n);
    for (const c of this.components) c.addDeflection(xArcsec, yArcsec, outAx, outAy, n);
  }

  /** Source-plane positions β = θ − α(θ) [arcsec]; overwrites outBx/outBy. */
  sourcePositions(
    xArcsec: Float64Array,
    yArcsec: Float64Array,
    outBx: Float64Array,
    outBy: Float64Array,
    n = xArcsec.length,
  ): void {
    const fused = this.fused;
    if (fused !== null) {
      if (fused.main !== null && fused.main.traceAffine) {
        fused.main.traceAffine(xArcsec, yArcsec, fused.map, outBx, outBy, n);
      } else {
        applyAffine(fused.map, xArcsec, yArcsec, outBx, outBy, n);
      }
      return;
    }
    this.deflect(xArcsec, yArcsec, outBx, outBy, n);
    for (let i = 0; i < n; i++) {
      outBx[i] = xArcsec[i] - outBx[i];
      outBy[i] = yArcsec[i] - outBy[i];
    }
  }

  /** Convergence κ (dimensionless); overwrites out. */
  convergence(xArcsec: Float64Array, yArcsec: Float64Array, out: Float64Array, n = xArcsec.length): void {
    out.fill(0, 0, n);
    for (const c of this.components) c.addConvergence(xArcsec, yArcsec, out, n);
  }

  /** Lensing potential ψ [arcsec²] (up to a constant); overwrites out. */
  potential(xArcsec: Float64Array, yArcsec: Float64Array, out: Float64Array, n = xArcsec.length): void {
    out.fill(0, 0, n);
    for (const c of this.components) c.addPotential(xArcsec, yArcsec, out, n);
  }

  /** ψ_xx, ψ_xy, ψ_yy (analytic for every component); overwrites the outputs. */
  hessian(
    xArcsec: Float64Array,
    yArcsec: Float64Array,
    outXx: Float64Array,
    outXy: Float64Array,
    outYy: Float64Array,
    n = xArcsec.length,
  ): void {
    outXx.fill(0, 0, n);
    outXy.fill(0, 0, n);
    outYy.fill(0, 0, n);
    for (const c of this.components) c.addHessian(xArcsec, yArcsec, outXx, outXy, outYy, n);
  }

  /**
   * Jacobian quantities at each point: det A, and the two eigenvalues of A,
   * λ_t = 1 − κ − |γ| (tangential: vanishes on tangential critical curves) and
   * λ_r = 1 − κ + |γ| (radial). Any output may be null.
   */
  jacobian(
    xArcsec: Float64Array,
    yArcsec: Float64Array,
    outDetA: Float64Array | null,
    outLambdaT: Float64Array | null = null,
    outLambdaR: Float64Array | null = null,
    n = xArcsec.length,
  ): void {
    const ws = this.ws;
    ws.reset(n);
    for (const c of this.components) c.addHessian(xArcsec, yArcsec, ws.xx, ws.xy, ws.yy, n);
    for (let i = 0; i < n; i++) {
      const kappa = 0.5 * (ws.xx[i] + ws.yy[i]);
      const g1 = 0.5 * (ws.xx[i] - ws.yy[i]);
      const g2 = ws.xy[i];
      const g = Math.sqrt(g1 * g1 + g2 * g2);
      const lt = 1 - kappa - g;
      const lr = 1 - kappa + g;
      if (outDetA) outDetA[i] = (1 - ws.xx[i]) * (1 - ws.yy[i]) - ws.xy[i] * ws.xy[i];
      if (outLambdaT) outLambdaT[i] = lt;
      if (outLambdaR) outLambdaR[i] = lr;
    }
  }

  /** Signed magnification μ = 1/det A; overwrites out. */
  magnification(xArcsec: Float64Array, yArcsec: Float64Array, out: Float64Array, n = xArcsec.length): void {
    this.jacobian(xArcsec, yArcsec, out, null, null, n);
    for (let i = 0; i < n; i++) out[i] = 1 / out[i];
  }
}

/**
 * Fold the linear components into map(θ) = θ − Σ J_k(θ − c_k) = (I − ΣJ_k)θ + Σ J_k c_k, and
 * pick the single non-linear component that can trace through it in one pass (or none, for a
 * purely linear lens). Returns null when the lens needs the general path.
 */
function planFusedTrace(components: readonly MassProfile[]): { main: MassProfile | null; map: AffineMap } | null {
  let main: MassProfile | null = null;
  let jxx = 0;
  let jxy = 0;
  let jyx = 0;
  let jyy = 0;
  let x0 = 0;
  let y0 = 0;
  for (const c of components) {
    const lin = c.linearDeflection ? c.linearDeflection() : null;
    if (lin) {
      jxx += lin.xx;
      jxy += lin.xy;
      jyx += lin.yx;
      jyy += lin.yy;
      x0 += lin.xx * lin.xArcsec + lin.xy * lin.yArcsec;
      y0 += lin.yx * lin.xArcsec + lin.yy * lin.yArcsec;
    } else if (main === null && c.traceAffine) {
      main = c;
    } else {
      return null;
    }
  }
  return { main, map: { xx: 1 - jxx, xy: -jxy, yx: -jyx, yy: 1 - jyy, x0, y0 } };
}

/** out = map(θ) [arcsec]. */
function applyAffine(
  map: AffineMap,
  x: Float64Array,
  y: Float64Array,
  outX: Float64Array,
  outY: Float64Array,
  n: number,
): void {
  const { xx, xy, yx, yy, x0, y0 } = map;
  for (let i = 0; i < n; i++) {
    const xi = x[i];
    const yi = y[i];
    outX[i] = xx * xi + xy * yi + x0;
    outY[i] = yx * xi + yy * yi + y0;
  }
}
