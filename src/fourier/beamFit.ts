/**
 * Elliptical-Gaussian fit to the main lobe of a dirty beam (PSF): the synthesised-beam size
 * written as BMAJ, BMIN, BPA into FITS headers and drawn on figures.
 *
 * Pixels used: the 4-connected region around the peak whose values exceed `threshold`·peak
 * (35% by default — common practice, low enough to sample the lobe's shape, high enough to stay
 * clear of the first sidelobes). Model, with the amplitude and centre fixed at the peak pixel:
 *   G(x, y) = A exp(−(a x² + 2b xy + c y²)),  x East, y North [arcsec].
 * A log-linear weighted least-squares solve for (a, b, c) starts Gauss–Newton iterations on the
 * linear residuals. The eigenvalues λ₁ ≤ λ₂ of [[a, b], [b, c]] give σ = 1/sqrt(2λ), FWHM =
 * 2 sqrt(2 ln 2) σ; the eigenvector of λ₁ is the major axis, whose position angle is measured from
 * North through East and reported in [0°, 180°) (CONVENTIONS.md; FITS BPA convention).
 *
 * Reference: Thompson, Moran & Swenson 2017, §10.3 (synthesised beam); Gaussian FWHM = 2√(2 ln 2) σ.
 */
import { InputError } from "../errors.js";
import { RAD_TO_DEG } from "../units.js";

export interface BeamFitResult {
  /** Major- and minor-axis FWHM [arcsec]. */
  bmajArcsec: number;
  bminArcsec: number;
  /** Position angle of the major axis, North through East, in [0, 180) [deg]. */
  bpaDeg: number;
  /** Number of pixels in the fitted main lobe. */
  pixelsUsed: number;
}

const FWHM_PER_SIGMA = 2 * Math.sqrt(2 * Math.LN2);

/**
 * Fit an elliptical Gaussian to the PSF main lobe.
 * @param psf N×N image on the model grid (column i at x = (N/2 − i)Δ, row j at y = (j − N/2)Δ)
 * @param size N
 * @param cellArcsec Δ [arcsec]
 * @param threshold fraction of the peak bounding the main lobe (default 0.35)
 * @returns BMAJ, BMIN [arcsec], BPA [deg, N through E, in [0, 180)]
 * Reference: see the module comment.
 */
export function fitBeam(psf: Float64Array, size: number, cellArcsec: number, threshold = 0.35): BeamFitResult {
  const n = size;
  if (psf.length !== n * n) throw new InputError(`beam fit: PSF has ${psf.length} pixels; expected ${n}×${n}`);
  if (!(threshold > 0 && threshold < 1)) throw new InputError(`beam fit: threshold ${threshold} must lie in (0, 1)`);
  let p0 = -1;
  let peak = -Infinity;
  for (let p = 0; p < n * n; p++) if (psf[p] > peak) { peak = psf[p]; p0 = p; }
  if (!(peak > 0)) throw new InputError("beam fit: the PSF has no positive peak; check the weights");
  const i0 = p0 % n, j0 = Math.floor(p0 / n);

  // Flood fill of the main lobe (4-connected, above threshold).
  const inLobe = new Uint8Array(n * n);
  const stack = [p0];
  inLobe[p0] = 1;
  const xs: number[] = [], ys: number[] = [], vs: number[] = [];
  while (stack.length > 0) {
    const p = stack.pop()!;
    const i = p % n, j = Math.floor(p / n);
    xs.push(-(i - i0) * cellArcsec); // column index increases westward
    ys.push((j - j0) * cellArcsec);
    vs.push(psf[p] / peak);
    const nb = [i > 0 ? p - 1 : -1, i < n - 1 ? p + 1 : -1, j > 0 ? p - n : -1, j < n - 1 ? p + n : -1];
    for (const q of nb) {
      if (q >= 0 && !inLobe[q] && psf[q] > threshold * peak) {
        inLobe[q] = 1;
        stack.push(q);
      }
    }
  }
  const np = xs.length;
  if (np < 6) {
    throw new InputError(`beam fit: the PSF main lobe covers only ${np} pixels; use a smaller cell (about 5 pixels across the beam)`);
  }

  // Log-linear start: −ln v = a x² + 2b xy + c y², weights v² (variance of ln v ∝ 1/v²).
  const ata = new Float64Array(9), atb = new Float64Array(3), row = new Float64Array(3);
  for (let k = 0; k < np; k++) {
    if (k === 0 && xs[k] === 0 && ys[k] === 0) continue; // the peak carries no shape information
    const v = vs[k];
    row[0] = xs[k] * xs[k]; row[1] = 2 * xs[k] * ys[k]; row[2] = ys[k] * ys[k];
    const wt = v * v, rhs = -Math.log(v);
    accumulate(ata, atb, row, rhs, wt);
  }
  let params = solve3(ata, atb);
  let sse = residualSum(params, xs, ys, vs);
  // Gauss–Newton on r = v − exp(−Q), with step halving when the sum of squares grows.
  for (let it = 0; it < 50; it++) {
    ata.fill(0); atb.fill(0);
    for (let k = 0; k < np; k++) {
      const x = xs[k], y = ys[k];
      const g = Math.exp(-(params[0] * x * x + 2 * params[1] * x * y + params[2] * y * y));
      row[0] = -g * x * x; row[1] = -g * 2 * x * y; row[2] = -g * y * y;
      accumulate(ata, atb, row, vs[k] - g, 1);
    }
    const step = solve3(ata, atb);
    let t = 1, next = params, nextSse = Infinity;
    for (let h = 0; h < 20; h++, t /= 2) {
      next = [params[0] + t * step[0], params[1] + t * step[1], params[2] + t * step[2]];
      nextSse = residualSum(next, xs, ys, vs);
      if (nextSse <= sse) break;
    }
    if (!(nextSse <= sse)) break;
    const done = sse - nextSse <= 1e-15 * Math.max(sse, 1e-300);
    params = next;
    sse = nextSse;
    if (done) break;
  }
  const [a, b, c] = params;
  const mean = (a + c) / 2;
  const rad = Math.hypot((a - c) / 2, b);
  const lMin = mean - rad, lMax = mean + rad;
  if (!(lMin > 0)) throw new InputError("beam fit: the PSF main lobe is not a closed peak; the uv coverage is too sparse for a beam");
  // Eigenvector of lMin: (b, lMin − a) or (lMin − c, b), whichever is better conditioned.
  let ex = b, ey = lMin - a;
  if (Math.hypot(ex, ey) < Math.hypot(lMin - c, b)) { ex = lMin - c; ey = b; }
  let pa = rad === 0 ? 0 : Math.atan2(ex, ey) * RAD_TO_DEG; // (x, y) = (sin pa, cos pa)
  pa = ((pa % 180) + 180) % 180;
  if (pa >= 180) pa -= 180;
  return {
    bmajArcsec: FWHM_PER_SIGMA / Math.sqrt(2 * lMin),
    bminArcsec: FWHM_PER_SIGMA / Math.sqrt(2 * lMax),
    bpaDeg: pa,
    pixelsUsed: np,
  };
}

function accumulate(ata: Float64Array, atb: Float64Array, row: Float64Array, rhs: number, wt: number): void {
  for (let r = 0; r < 3; r++) {
    atb[r] += wt * row[r] * rhs;
    for (let s = 0; s < 3; s++) ata[3 * r + s] += wt * row[r] * row[s];
  }
}

function residualSum(p: number[], xs: number[], ys: number[], vs: number[]): number {
  let s = 0;
  for (let k = 0; k < xs.length; k++) {
    const x = xs[k], y = ys[k];
    const r = vs[k] - Math.exp(-(p[0] * x * x + 2 * p[1] * x * y + p[2] * y * y));
    s += r * r;
  }
  return s;
}

/** Solve a 3×3 symmetric system by Cramer's rule (the matrix is small and well scaled here). */
function solve3(m: Float64Array, r: Float64Array): number[] {
  const det = (a: number[]): number =>
    a[0] * (a[4] * a[8] - a[5] * a[7]) - a[1] * (a[3] * a[8] - a[5] * a[6]) + a[2] * (a[3] * a[7] - a[4] * a[6]);
  const base = Array.from(m);
  const d = det(base);
  if (d === 0 || !Number.isFinite(d)) throw new InputError("beam fit: the main-lobe pixels do not constrain an ellipse; use a smaller cell");
  const out: number[] = [];
  for (let col = 0; col < 3; col++) {
    const a = base.slice();
    for (let row = 0; row < 3; row++) a[3 * row + col] = r[row];
    out.push(det(a) / d);
  }
  return out;
}
