/**
 * Dirty image and dirty beam (PSF) of a set of visibilities, by convolutional gridding and FFT.
 *
 * The dirty image is the adjoint of the measurement equation (CONVENTIONS.md), normalised by the
 * sum of the imaging weights so that the PSF peak is 1 (Jy/beam):
 *   I_D(x, y) = Σ_k w'_k Re[d_k e^{+2πi(u_k x + v_k y)}] / Σ_k w'_k,
 *   B(x, y)   = Σ_k w'_k cos 2π(u_k x + v_k y) / Σ_k w'_k,
 * on the model grid: column i at x = (N/2 − i)Δ (East), row j at y = (j − N/2)Δ (North).
 * Each visibility stands with its Hermitian conjugate (−u, −v, d*); their sum is twice the real
 * part of one term, so the gridding spreads each visibility once and takes 2·Re at the end (the
 * factor 2 cancels in the normalisation). The weighting grid of uniform/Briggs weighting does
 * count both points explicitly.
 *
 * Gridding: the exponential-of-semicircle (ES) kernel of width w fine cells, β = 2.30 w, on a
 * fine grid of n_f ≥ 2N cells of size 1/(n_f Δ), corrected in the image plane by the kernel's
 * Fourier transform (Gauss–Legendre quadrature). This is a 2-D type-1 NUFFT; the error is about
 * 10^(1−w) relative (REFERENCES.md §9). Because image pixels sit at multiples of Δ, the sum is
 * periodic in u with period 1/Δ and the grid's wrap-around is exact (no visibility is lost; those
 * beyond the Nyquist limit |u| > 1/(2Δ) alias, as they would in the direct sum).
 *
 * Weighting (Briggs 1995, PhD thesis, New Mexico Tech, §3.2 "robust weighting"): with W_c the sum
 * of the weights in uv cell c of size 1/(NΔ),
 *   natural  w' = w;   uniform  w' = w / W_c;
 *   Briggs   w' = w / (1 + W_c f²),  f² = (5·10^(−R))² / (Σ_c W_c² / Σ_k w_k),
 * which tends to natural as R → +∞ and to uniform as R → −∞.
 *
 * Reference: Thompson, Moran & Swenson 2017, ch. 10 (gridding, weighting); Barnett, Magland &
 * af Klinteberg 2019, SIAM J. Sci. Comput. 41, C479 (ES kernel); Briggs 1995 (robust weighting).
 */
import FFT from "fft.js";
import { InputError } from "../errors.js";
import { ARCSEC_TO_RAD, RAD_TO_ARCSEC, C_M_PER_S } from "../units.js";

/** The visibility columns imaging needs (a subset of `Visibilities`). */
export interface VisLike {
  uLambda: Float64Array;
  vLambda: Float64Array;
  /** [Jy]; `Visibilities` stores them in single precision, other callers pass doubles. */
  reJy: Float32Array | Float64Array;
  imJy: Float32Array | Float64Array;
  /** w = 1/σ² [Jy⁻²] */
  weight: Float64Array;
}

export type Weighting = "natural" | "uniform" | "briggs";

export interface DirtyImageOptions {
  /** Image size N (pixels per side, even, ≤ 2048). Default 256. */
  size: number;
  /** Pixel size Δ [arcsec]. Required. */
  cellArcsec: number;
  /** 'natural' | 'uniform' | 'briggs'. Default 'natural'. */
  weighting: Weighting;
  /** Briggs robustness R in [−2, 2] (used only with 'briggs'). Default 0.5. */
  robust: number;
  /** Requested relative accuracy of the gridding, 1e-12 … 1e-2. Default 1e-6. */
  tolerance: number;
}

export const DEFAULT_DIRTY_OPTIONS: Readonly<Omit<DirtyImageOptions, "cellArcsec">> = Object.freeze({
  size: 256,
  weighting: "natural" as Weighting,
  robust: 0.5,
  tolerance: 1e-6,
});

export interface DirtyImageResult {
  /** Dirty image [Jy/beam], N×N, column fastest (model-grid layout). */
  image: Float64Array;
  /** Dirty beam, peak 1 at pixel (N/2, N/2). */
  psf: Float64Array;
  size: number;
  cellArcsec: number;
  /** Imaging weight w' of each visibility (after density weighting). */
  imagingWeight: Float64Array;
  /** Σ_k w'_k over the stored visibilities (conjugates not counted). */
  sumWeights: number;
  /** Σ_k w_k of the input weights [Jy⁻²]. */
  sumNaturalWeights: number;
  /** Expected thermal noise of the dirty image [Jy/beam]: sqrt(Σ w'²/w) / Σ w'. */
  noiseJyPerBeam: number;
  /** Visibilities beyond the Nyquist limit of the cell (|u| or |v| > 1/(2Δ)): they alias. */
  countBeyondNyquist: number;
}

/** Validate options and fill defaults; throws InputError naming the option. */
export function resolveDirtyOptions(opts: Partial<DirtyImageOptions> & { cellArcsec: number }): DirtyImageOptions {
  const o: DirtyImageOptions = { ...DEFAULT_DIRTY_OPTIONS, ...opts };
  // The two fine grids take 2 × 16·(2N)² bytes: 512 MB at N = 2048, the largest size allowed.
  if (!Number.isInteger(o.size) || o.size < 4 || o.size % 2 !== 0 || o.size > 2048) {
    throw new InputError(`--size ${o.size}: image size must be an even integer in [4, 2048]; try 256`);
  }
  if (!(o.cellArcsec > 0) || !Number.isFinite(o.cellArcsec)) {
    throw new InputError(`--cell ${o.cellArcsec}: pixel size must be a positive number of arcsec`);
  }
  if (!["natural", "uniform", "briggs"].includes(o.weighting)) {
    throw new InputError(`--weighting ${o.weighting}: must be natural, uniform or briggs`);
  }
  if (!(o.robust >= -2 && o.robust <= 2)) {
    throw new InputError(`--robust ${o.robust}: Briggs robustness must lie in [-2, 2] (-2 ≈ uniform, 2 ≈ natural); try --robust 0.5`);
  }
  if (!(o.tolerance >= 1e-12 && o.tolerance <= 1e-2)) {
    throw new InputError(`tolerance ${o.tolerance}: must lie in [1e-12, 1e-2]`);
  }
  return o;
}

/**
 * Imaging weights w' for natural, uniform or Briggs weighting, on a uv weighting grid of N×N
 * cells of size 1/(NΔ) that holds each visibility and its conjugate.
 * @returns w' per visibility (same units as w for natural; dimensionless ratios otherwise)
 * Reference: Briggs 1995, PhD thesis, §3.2; Thompson, Moran & Swenson 2017, §10.2.
 */
export function imagingWeights(vis: VisLike, size: number, cellArcsec: number, weighting: Weighting, robust: number): Float64Array {
  const m = vis.uLambda.length;
  const out = new Float64Array(m);
  if (weighting === "natural") {
    out.set(vis.weight);
    return out;
  }
  const n = size;
  const scale = n * cellArcsec * ARCSEC_TO_RAD; // uv cell = 1/(NΔ): u [λ] → cell units
  const grid = new Float64Array(n * n);
  const cellOf = (u: number, v: number): number => {
    const cu = ((Math.round(u * scale) % n) + n) % n;
    const cv = ((Math.round(v * scale) % n) + n) % n;
    return cv * n + cu;
  };
  let sumW = 0;
  for (let k = 0; k < m; k++) {
    const w = vis.weight[k];
    grid[cellOf(vis.uLambda[k], vis.vLambda[k])] += w;
    grid[cellOf(-vis.uLambda[k], -vis.vLambda[k])] += w;
    sumW += 2 * w;
  }
  if (weighting === "uniform") {
    for (let k = 0; k < m; k++) {
      const wc = grid[cellOf(vis.uLambda[k], vis.vLambda[k])];
      out[k] = wc > 0 ? vis.weight[k] / wc : 0;
    }
    return out;
  }
  let sumW2 = 0;
  for (let c = 0; c < n * n; c++) sumW2 += grid[c] * grid[c];
  const f2 = (5 * Math.pow(10, -robust)) ** 2 / (sumW2 / sumW);
  for (let k = 0; k < m; k++) {
    out[k] = vis.weight[k] / (1 + grid[cellOf(vis.uLambda[k], vis.vLambda[k])] * f2);
  }
  return out;
}

/**
 * Dirty image and PSF by ES-kernel gridding and FFT (see the module comment for definitions).
 * @param vis visibilities in the internal sign convention, u, v [λ], re/im [Jy], weight [Jy⁻²]
 * @param options size N, cell Δ [arcsec], weighting, robust, tolerance
 * @returns image [Jy/beam] and PSF (peak 1), both N×N on the model grid
 * Reference: Thompson, Moran & Swenson 2017, §10.2; Barnett et al. 2019 (ES kernel).
 */
export function dirtyImage(vis: VisLike, options: Partial<DirtyImageOptions> & { cellArcsec: number }): DirtyImageResult {
  const o = resolveDirtyOptions(options);
  checkVis(vis);
  const n = o.size;
  const m = vis.uLambda.length;
  const cellRad = o.cellArcsec * ARCSEC_TO_RAD;
  const wImg = imagingWeights(vis, n, o.cellArcsec, o.weighting, o.robust);

  let sumWp = 0, sumW = 0, varNum = 0, beyond = 0;
  const nyquist = 0.5 / cellRad;
  for (let k = 0; k < m; k++) {
    sumWp += wImg[k];
    sumW += vis.weight[k];
    varNum += (wImg[k] * wImg[k]) / vis.weight[k];
    if (Math.abs(vis.uLambda[k]) > nyquist || Math.abs(vis.vLambda[k]) > nyquist) beyond++;
  }
  if (!(sumWp > 0)) throw new InputError("dirty image: the imaging weights sum to zero; the data hold no usable visibility");

  const plan = new GriddingPlan(n, cellRad, o.tolerance);
  const image = new Float64Array(n * n);
  const psf = new Float64Array(n * n);
  plan.image(vis.uLambda, vis.vLambda, vis.reJy, vis.imJy, wImg, image, psf);
  // Normalise by the gridded PSF centre (≈ 2Σw' up to the gridding error) so the peak is exactly 1.
  const peak = psf[(n / 2) * n + n / 2];
  for (let p = 0; p < n * n; p++) {
    image[p] /= peak;
    psf[p] /= peak;
  }
  return {
    image, psf, size: n, cellArcsec: o.cellArcsec, imagingWeight: wImg,
    sumWeights: sumWp, sumNaturalWeights: sumW,
    noiseJyPerBeam: Math.sqrt(varNum) / sumWp, countBeyondNyquist: beyond,
  };
}

function checkVis(vis: VisLike): void {
  const m = vis.uLambda.length;
  for (const [name, a] of [["vLambda", vis.vLambda], ["reJy", vis.reJy], ["imJy", vis.imJy], ["weight", vis.weight]] as const) {
    if (a.length !== m) throw new InputError(`dirty image: ${name} has ${a.length} entries, uLambda ${m}; all columns must have equal length`);
  }
  if (m === 0) throw new InputError("dirty image: no visibilities; the data set is empty after flagging");
  for (let k = 0; k < m; k++) {
    if (!(vis.weight[k] > 0) || !Number.isFinite(vis.weight[k])) {
      throw new InputError(`dirty image: visibility ${k} has weight ${vis.weight[k]}; weights must be finite and > 0`);
    }
  }
}

/**
 * Gridding set-up for one image size and cell: kernel parameters, the image-plane correction
 * 1/ψ̂ and the fine-grid and FFT scratch buffers (allocated once, reused by each `image` call).
 */
export class GriddingPlan {
  readonly size: number;
  readonly fineSize: number;
  readonly width: number;
  readonly beta: number;
  private readonly cellRad: number;
  private readonly correction: Float64Array; // 1/ψ̂(m) for m = −N/2 … N/2, index m + N/2
  private readonly grid: Float64Array; // interleaved complex, fineSize² (image)
  private readonly gridBeam: Float64Array; // same, for the beam (only the real part is filled)
  private readonly cols: Int32Array;
  private readonly fft: FFT;
  private readonly lineIn: Float64Array;
  private readonly lineOut: Float64Array;
  private readonly kx: Float64Array;
  private readonly ky: Float64Array;

  /**
   * @param size image size N (even)
   * @param cellRad pixel size Δ [rad]
   * @param tolerance requested relative accuracy; kernel width w = ceil(log10(1/tol)) + 1
   */
  constructor(size: number, cellRad: number, tolerance: number) {
    this.size = size;
    this.cellRad = cellRad;
    let nf = 16;
    while (nf < 2 * size) nf *= 2; // fft.js needs a power of two; upsampling ≥ 2
    this.fineSize = nf;
    this.width = Math.min(16, Math.max(2, Math.ceil(Math.log10(1 / tolerance)) + 1));
    this.beta = 2.3 * this.width;
    this.grid = new Float64Array(2 * nf * nf);
    this.gridBeam = new Float64Array(2 * nf * nf);
    this.cols = new Int32Array(this.width);
    this.fft = new FFT(nf);
    this.lineIn = new Float64Array(2 * nf);
    this.lineOut = new Float64Array(2 * nf);
    this.kx = new Float64Array(this.width);
    this.ky = new Float64Array(this.width);
    this.correction = new Float64Array(size + 1);
    for (let m = -size / 2; m <= size / 2; m++) this.correction[m + size / 2] = 1 / esKernelTransform(m / nf, this.width, this.beta);
  }

  /**
   * Grid and transform both the dirty image and the beam in one spreading pass:
   * outImage(i, j) ∝ Σ_k w_k d_k e^{+2πi(u_k x_i + v_k y_j)} + conj and outBeam ∝ the same with
   * d_k = 1, with the same constant factor in both (the caller normalises by the beam peak).
   */
  image(u: Float64Array, v: Float64Array, re: Float32Array | Float64Array, im: Float32Array | Float64Array, w: Float64Array, outImage: Float64Array, outBeam: Float64Array): void {
    const nf = this.fineSize, wd = this.width, half = wd / 2, beta = this.beta;
    const gi = this.grid, gb = this.gridBeam, kx = this.kx, ky = this.ky, cols = this.cols;
    gi.fill(0);
    gb.fill(0);
    const scale = nf * this.cellRad; // u [λ] → fine-grid units
    for (let k = 0; k < u.length; k++) {
      const tu = u[k] * scale, tv = v[k] * scale;
      const lu0 = Math.ceil(tu - half), lv0 = Math.ceil(tv - half);
      for (let a = 0; a < wd; a++) {
        kx[a] = esKernel((lu0 + a - tu) / half, beta);
        ky[a] = esKernel((lv0 + a - tv) / half, beta);
        cols[a] = 2 * ((((lu0 + a) % nf) + nf) % nf);
      }
      const wk = w[k];
      const cr = wk * re[k], ci = wk * im[k];
      for (let b = 0; b < wd; b++) {
        const base = 2 * nf * ((((lv0 + b) % nf) + nf) % nf);
        const kyb = ky[b];
        for (let a = 0; a < wd; a++) {
          const kk = kx[a] * kyb;
          const q = base + cols[a];
          gi[q] += cr * kk;
          gi[q + 1] += ci * kk;
          gb[q] += wk * kk;
        }
      }
    }
    this.transform(gi, outImage);
    this.transform(gb, outBeam);
  }

  /** 2-D inverse FFT (sign +) of a fine grid, then 2·Re and the kernel correction on the N×N output. */
  private transform(grid: Float64Array, out: Float64Array): void {
    const nf = this.fineSize, n = this.size;
    const fft = this.fft, lin = this.lineIn, lout = this.lineOut;
    // Rows: along u for every fine row.
    for (let r = 0; r < nf; r++) {
      const row = grid.subarray(2 * r * nf, 2 * (r + 1) * nf);
      lin.set(row);
      fft.inverseTransform(lout, lin);
      row.set(lout);
    }
    // Columns: only the N output columns m_x = N/2 − i are needed.
    for (let i = 0; i < n; i++) {
      const mx = n / 2 - i;
      const col = ((mx % nf) + nf) % nf;
      for (let r = 0; r < nf; r++) {
        lin[2 * r] = grid[2 * (r * nf + col)];
        lin[2 * r + 1] = grid[2 * (r * nf + col) + 1];
      }
      fft.inverseTransform(lout, lin);
      const cx = this.correction[mx + n / 2];
      for (let j = 0; j < n; j++) {
        const my = j - n / 2;
        const rr = ((my % nf) + nf) % nf;
        // 2·Re adds the Hermitian conjugate of every visibility.
        out[j * n + i] = 2 * lout[2 * rr] * cx * this.correction[my + n / 2];
      }
    }
  }
}

/** ES kernel φ(z) = exp(β(sqrt(1 − z²) − 1)) for |z| < 1, else 0 (Barnett et al. 2019). */
export function esKernel(z: number, beta: number): number {
  const t = 1 - z * z;
  return t > 0 ? Math.exp(beta * (Math.sqrt(t) - 1)) : 0;
}

/**
 * Continuous Fourier transform of the ES kernel of width w grid cells at frequency ξ [cycles per
 * cell]: ψ̂(ξ) = ∫_{−w/2}^{w/2} φ(2s/w) cos(2π ξ s) ds, by Gauss–Legendre quadrature.
 * Reference: Barnett, Magland & af Klinteberg 2019, §3 (the transform has no closed form).
 */
export function esKernelTransform(xi: number, width: number, beta: number): number {
  const { nodes, weights } = gaussLegendre(Math.max(40, 4 * width + 20));
  const half = width / 2;
  let s = 0;
  for (let q = 0; q < nodes.length; q++) {
    const sPos = half * nodes[q];
    s += weights[q] * esKernel(nodes[q], beta) * Math.cos(2 * Math.PI * xi * sPos);
  }
  return s * half;
}

const glCache = new Map<number, { nodes: Float64Array; weights: Float64Array }>();

/** Gauss–Legendre nodes and weights on [−1, 1] by Newton iteration (Press et al., Numerical Recipes §4.6). */
export function gaussLegendre(q: number): { nodes: Float64Array; weights: Float64Array } {
  const hit = glCache.get(q);
  if (hit) return hit;
  const nodes = new Float64Array(q);
  const weights = new Float64Array(q);
  for (let i = 0; i < q; i++) {
    let z = Math.cos((Math.PI * (i + 0.75)) / (q + 0.5));
    let dp = 0;
    for (let it = 0; it < 100; it++) {
      let p0 = 1, p1 = 0;
      for (let j = 1; j <= q; j++) {
        const p2 = p1;
        p1 = p0;
        p0 = ((2 * j - 1) * z * p1 - (j - 1) * p2) / j;
      }
      dp = (q * (z * p0 - p1)) / (z * z - 1);
      const dz = p0 / dp;
      z -= dz;
      if (Math.abs(dz) < 1e-16) break;
    }
    nodes[i] = z;
    weights[i] = 2 / ((1 - z * z) * dp * dp);
  }
  const res = { nodes, weights };
  glCache.set(q, res);
  return res;
}

/**
 * Direct (slow, O(N²·M)) dirty image and PSF with given imaging weights: the reference the gridded
 * version is tested against. No kernel, no FFT, no Hermitian trick: both terms summed explicitly.
 * @returns image [Jy/beam] and psf, normalised by Σ over both conjugates of w'
 * Reference: the definition in the module comment (adjoint of CONVENTIONS.md's measurement equation).
 */
export function directDirtyImage(vis: VisLike, imagingWeight: Float64Array, size: number, cellArcsec: number): { image: Float64Array; psf: Float64Array } {
  const n = size;
  const cellRad = cellArcsec * ARCSEC_TO_RAD;
  const image = new Float64Array(n * n);
  const psf = new Float64Array(n * n);
  const cxr = new Float64Array(n), cxi = new Float64Array(n), cyr = new Float64Array(n), cyi = new Float64Array(n);
  let sum = 0;
  for (let k = 0; k < vis.uLambda.length; k++) {
    const w = imagingWeight[k];
    sum += 2 * w;
    for (let i = 0; i < n; i++) {
      const ph = 2 * Math.PI * vis.uLambda[k] * (n / 2 - i) * cellRad;
      cxr[i] = Math.cos(ph);
      cxi[i] = Math.sin(ph);
    }
    for (let j = 0; j < n; j++) {
      const ph = 2 * Math.PI * vis.vLambda[k] * (j - n / 2) * cellRad;
      cyr[j] = Math.cos(ph);
      cyi[j] = Math.sin(ph);
    }
    const dr = vis.reJy[k], di = vis.imJy[k];
    for (let j = 0; j < n; j++) {
      for (let i = 0; i < n; i++) {
        // e^{iφ} = e^{iφx} e^{iφy}; d e^{iφ} + conj(d e^{iφ}) = 2 Re[d e^{iφ}]
        const er = cxr[i] * cyr[j] - cxi[i] * cyi[j];
        const ei = cxr[i] * cyi[j] + cxi[i] * cyr[j];
        image[j * n + i] += 2 * w * (dr * er - di * ei);
        psf[j * n + i] += 2 * w * er;
      }
    }
  }
  for (let p = 0; p < n * n; p++) {
    image[p] /= sum;
    psf[p] /= sum;
  }
  return { image, psf };
}

/** Default pixel size and image size for a data set. */
export interface ImagingDefaults {
  cellArcsec: number;
  size: number;
  /** How the size was chosen, for the user. */
  note: string;
}

/**
 * Default imaging parameters: cell = (1/|uv|_max)/5 (five pixels across the λ/B_max resolution,
 * common practice), size = the next power of two covering the primary-beam FWHM 1.13 λ/D at the
 * lowest frequency (REFERENCES.md §7) when the dish diameter is known, clamped to [64, 2048];
 * otherwise 256.
 * @returns cell [arcsec], size [pixels]
 * Reference: REFERENCES.md §7 (primary beam 1.13 λ/D; resolution ≈ λ/B_max, common practice).
 */
export function defaultImaging(vis: { uLambda: Float64Array; vLambda: Float64Array; channelFreqHz?: Float64Array; dishDiameterM?: number }): ImagingDefaults {
  let uvMax = 0;
  for (let k = 0; k < vis.uLambda.length; k++) {
    const r = Math.hypot(vis.uLambda[k], vis.vLambda[k]);
    if (r > uvMax) uvMax = r;
  }
  if (!(uvMax > 0)) throw new InputError("imaging defaults: all baselines have zero length; give --cell and --size explicitly");
  const cellArcsec = (1 / uvMax / 5) * RAD_TO_ARCSEC;
  let size = 256;
  let note = "size 256 (no dish diameter known)";
  if (vis.dishDiameterM && vis.dishDiameterM > 0 && vis.channelFreqHz && vis.channelFreqHz.length > 0) {
    let fMin = Infinity;
    for (const f of vis.channelFreqHz) if (f > 0 && f < fMin) fMin = f;
    if (Number.isFinite(fMin)) {
      const pbArcsec = ((1.13 * C_M_PER_S) / fMin / vis.dishDiameterM) * RAD_TO_ARCSEC;
      size = 64;
      while (size * cellArcsec < pbArcsec && size < 2048) size *= 2;
      note = `size ${size} covers the primary-beam FWHM ${pbArcsec.toFixed(2)}″ (clamped to [64, 2048])`;
    }
  }
  return { cellArcsec, size, note };
}
