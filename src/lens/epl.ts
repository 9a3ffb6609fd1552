/**
 * Elliptical power-law mass distribution (EPL).
 * Convergence (CONVENTIONS.md): κ = (3 − γ)/2 · (θ_E/ξ)^(γ−1), ξ² = q x'² + y'²/q; γ = 2 is
 * the SIE. In Tessore & Metcalf's variables, t = γ − 1, b = θ_E √q, R = sqrt(q²x'² + y'²),
 * φ_e = atan2(y', q x'), the deflection in the major-axis frame is
 *   α_x' + i α_y' = 2b/(1+q) · (b/R)^(t−1) · e^{iφ_e} · ₂F₁(1, t/2; 2 − t/2; −f e^{2iφ_e}),
 *   f = (1 − q)/(1 + q),
 * (Tessore & Metcalf 2015, A&A 580, A79, eqs. 13 and 29–30). The hypergeometric function is
 * summed as its power series in z = −f e^{2iφ_e}: term_n = term_{n−1} · (2n − 2 + t)/(2n + 2 − t) · z.
 * For 0 < t < 2 the ratio factor is < 1, so the tail after term n is below |term_n|·f/(1 − f);
 * the sum stops when that bound times the prefactor is under 1e-10 arcsec (a 100× margin on
 * the 1e-8 arcsec target), with at most MAX_TERMS terms (q ≥ EPL_MIN_Q keeps f ≤ 0.905, where
 * 1e-10 needs < 300 terms).
 * Potential: ψ = (x·α)/(2 − t), since κ ∝ r^(−t) makes ψ homogeneous of degree 2 − t (Euler's
 * theorem; Tessore & Metcalf 2015 §3). Hessian: from κ, α and the same homogeneity
 * (see hessianFromHomogeneity).
 */
import { fastExp } from "./fastMath.js";
import { Scratch, type AffineMap, type MassProfile } from "./profile.js";

export interface EplParams {
  thetaEArcsec: number;
  /** Logarithmic slope γ of the 3D density, 1.2 < γ < 2.8 (2 = isothermal). */
  slope: number;
  q: number;
  paDeg: number;
  xArcsec: number;
  yArcsec: number;
}

/** Smallest axis ratio accepted: keeps the series under MAX_TERMS terms. */
export const EPL_MIN_Q = 0.05;
/** Slope range of the series (0.2 < t < 1.8). */
export const EPL_SLOPE_MIN = 1.2;
export const EPL_SLOPE_MAX = 2.8;
const MAX_TERMS = 400;
/** Truncation bound on the series tail [arcsec]. */
const SERIES_TOL_ARCSEC = 1e-10;

export class Epl implements MassProfile {
  readonly type = "epl";
  readonly params: Readonly<EplParams>;
  private readonly b: number;
  private readonly t: number;
  private readonly q: number;
  private readonly f: number;
  private readonly pref: number;
  private readonly kappaNorm: number;
  private readonly sinPa: number;
  private readonly cosPa: number;
  private readonly x0: number;
  private readonly y0: number;
  private readonly scratch = new Scratch(3);
  /** ln b, for (b/r)^(t−1) = exp((t − 1)(ln b − ½ ln r²)). */
  private readonly lnB: number;
  /** The series' term ratios (2k − 2 + t)/(2k + 2 − t), k = 1..MAX_TERMS (index k − 1): fixed per profile. */
  private readonly ratios: Float64Array;

  constructor(p: EplParams) {
    this.params = { ...p };
    this.q = p.q;
    this.b = p.thetaEArcsec * Math.sqrt(p.q);
    this.t = p.slope - 1;
    this.f = (1 - p.q) / (1 + p.q);
    this.pref = (2 * this.b) / (1 + p.q);
    this.kappaNorm = (3 - p.slope) / 2;
    const phi = (p.paDeg * Math.PI) / 180;
    this.sinPa = Math.sin(phi);
    this.cosPa = Math.cos(phi);
    this.x0 = p.xArcsec;
    this.y0 = p.yArcsec;
    this.lnB = Math.log(this.b);
    this.ratios = new Float64Array(MAX_TERMS);
    for (let k = 1; k <= MAX_TERMS; k++) this.ratios[k - 1] = (2 * k - 2 + this.t) / (2 * k + 2 - this.t);
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
    const { t, q, f, pref, sinPa, cosPa, x0, y0, lnB, ratios } = this;
    const tm1 = t - 1;
    // stop when scale·|term|·f/(1 − f) < tol, i.e. |term| < tol(1 − f)/(f·scale)
    const tailFactor = f > 0 ? (1 - f) / f : Infinity;
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
      const qx = q * xp;
      const r2 = qx * qx + yp * yp;
      let ax = 0;
      let ay = 0;
      // r2 = 0: singular centre on the ray, deflection 0 (CONVENTIONS.md)
      if (r2 !== 0) {
        const r = Math.sqrt(r2);
        const invR = 1 / r;
        const c = qx * invR;
        const s = yp * invR;
        // (b/r)^(t−1) = exp((t − 1)(ln b − ½ ln r²)), with the inlined fastExp (within 2 ulp of
        // Math.exp) in place of Math.pow, a call into C: this runs per sub-ray.
        const scale = pref * fastExp(tm1 * (lnB - 0.5 * Math.log(r2)));
        // z = −f e^{2iφ}
        const zr = -f * (c * c - s * s);
        const zi = -f * 2 * s * c;
        let sr = 1;
        let si = 0;
        let tr = 1;
        let ti = 0;
        const stopAbs = (SERIES_TOL_ARCSEC * tailFactor) / scale;
        const stop2 = stopAbs * stopAbs;
        for (let k = 0; k < MAX_TERMS; k++) {
          const ratio = ratios[k]; // the ratio of term k + 1 to term k, from the table
          const nr = (tr * zr - ti * zi) * ratio;
          ti = (tr * zi + ti * zr) * ratio;
          tr = nr;
          sr += tr;
          si += ti;
          if (tr * tr + ti * ti < stop2) break;
        }
        // α' = scale · e^{iφ} · S
        const axp = scale * (c * sr - s * si);
        const ayp = scale * (c * si + s * sr);
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
    const { b, t, q, kappaNorm, sinPa, cosPa, x0, y0 } = this;
    const halfT = 0.5 * t;
    const b2 = b * b;
    for (let i = 0; i < n; i++) {
      const dx = x[i] - x0;
      const dy = y[i] - y0;
      const xp = dx * sinPa + dy * cosPa;
      const yp = -dx * cosPa + dy * sinPa;
      const r2 = q * q * xp * xp + yp * yp;
      out[i] += r2 === 0 ? Infinity : kappaNorm * Math.pow(b2 / r2, halfT);
    }
  }

  addPotential(x: Float64Array, y: Float64Array, out: Float64Array, n: number): void {
    const m = Math.min(n, x.length);
    const ax = this.scratch.get(0, m);
    const ay = this.scratch.get(1, m);
    this.addDeflection(x, y, ax, ay, m);
    const inv = 1 / (2 - this.t);
    for (let i = 0; i < m; i++) out[i] += ((x[i] - this.x0) * ax[i] + (y[i] - this.y0) * ay[i]) * inv;
  }

  addHessian(
    x: Float64Array,
    y: Float64Array,
    outXx: Float64Array,
    outXy: Float64Array,
    outYy: Float64Array,
    n: number,
  ): void {
    // one deflection and one convergence evaluation per point, in scratch buffers
    const m = Math.min(n, x.length);
    const ax = this.scratch.get(0, m);
    const ay = this.scratch.get(1, m);
    const kappa = this.scratch.get(2, m);
    this.addDeflection(x, y, ax, ay, m);
    this.addConvergence(x, y, kappa, m);
    hessianFromHomogeneity(x, y, this.x0, this.y0, ax, ay, kappa, 1 - this.t, outXx, outXy, outYy, m);
  }
}

/**
 * Hessian of a lens whose deflection is homogeneous of degree d about its centre
 * (α(λθ) = λ^d α(θ), true for κ ∝ r^−t with d = 1 − t). Euler's theorem gives
 * x ∂α/∂x + y ∂α/∂y = d α; with ∂α_x/∂x + ∂α_y/∂y = 2κ and ∂α_x/∂y = ∂α_y/∂x this fixes
 *   ψ_xx = (P x − Q y + 2κ y²)/r²,  ψ_xy = (d(x α_y + y α_x) − 2κ x y)/r²,  ψ_yy = 2κ − ψ_xx,
 * with P = d α_x, Q = d α_y. Adds into the outputs. (Analytic; derived here.)
 */
export function hessianFromHomogeneity(
  x: Float64Array,
  y: Float64Array,
  x0: number,
  y0: number,
  ax: Float64Array,
  ay: Float64Array,
  kappa: Float64Array,
  degree: number,
  outXx: Float64Array,
  outXy: Float64Array,
  outYy: Float64Array,
  n: number,
): void {
  for (let i = 0; i < n; i++) {
    const dx = x[i] - x0;
    const dy = y[i] - y0;
    const r2 = dx * dx + dy * dy;
    const k2 = 2 * kappa[i];
    if (r2 === 0) {
      outXx[i] += Infinity;
      outYy[i] += Infinity;
      continue;
    }
    const hxy = (degree * (dx * ay[i] + dy * ax[i]) - k2 * dx * dy) / r2;
    const hxx = (degree * ax[i] * dx - degree * ay[i] * dy + k2 * dy * dy) / r2;
    outXx[i] += hxx;
    outXy[i] += hxy;
    outYy[i] += k2 - hxx;
  }
}
