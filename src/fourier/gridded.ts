/**
 * Gridded statistics: χ² of a model image against many visibilities at a cost independent of
 * their number (DESIGN.md "Two exact ideas", 2). With J the beam-attenuated image [Jy/pixel],
 * h_k = sinc(u_kΔ)·sinc(v_kΔ) and m_k = M_k/h_k, exactly
 *   χ² = Σ_k w_k|d_k|² − 2 Σ_p J_p D_p + Σ_p Σ_q J_p J_q B(x_p − x_q),
 *   D_p = Σ_k (w_k/h_k) Re[d_k e^{+2πi(u_k x_p + v_k y_p)}]   (model grid, N × N),
 *   B(Δ) = Σ_k (w_k/h_k²) cos 2π(u_k Δx + v_k Δy)             (lag grid, 2N × 2N),
 * each summed once over the stored visibilities. D and B come from two type-1 NUFFTs at
 * tight tolerance on the 2N grid, spread in one pass over the points (they share the points,
 * so each point's kernel weights are computed once: NufftPlan.executeAdjointPair); B is
 * stored as the real transform B̂ of its circular arrangement, so ⟨J, B⋆J⟩ = Σ_f B̂_f |Ĵ_f|²/(2N)²
 * costs one FFT of J zero-padded to 2N × 2N.
 * Visibilities whose channels need different images form channel groups, each with its own
 * (D, B); χ² sums over groups.
 *
 * Reference: DESIGN.md; CONVENTIONS.md (grid, χ², pixel window); the quadratic-form expansion
 * of χ² is elementary algebra (analytic).
 */
import { InputError } from "../errors.js";
import { Fft2 } from "./fft2.js";
import { NufftPlan } from "./nufft.js";
import { dotCompensated } from "./sum.js";
import { checkNyquist, pixelWindow } from "./window.js";

/** The visibilities the statistics are built from (internal sign convention, CONVENTIONS.md). */
export interface GriddedInput {
  /** Baselines [wavelengths] at each entry's own channel frequency. */
  uLambda: Float64Array;
  vLambda: Float64Array;
  /** Data [Jy]; `Visibilities` stores them in single precision, other callers pass doubles. */
  reJy: Float32Array | Float64Array;
  imJy: Float32Array | Float64Array;
  /** w = 1/σ² [Jy⁻²], finite and ≥ 0. */
  weight: Float64Array;
  /** Channel group of each entry (integers 0 … G − 1); default: one group. */
  group?: ArrayLike<number>;
}

/** Everything GriddedStats needs after its set-up (structured-clone friendly). */
export interface GriddedState {
  n: number;
  cellRad: number;
  groupSizes: Int32Array;
  dTerms: Float64Array[];
  bHat: Float64Array[];
  dataSq: Float64Array;
}

/** Options of GriddedStats. */
export interface GriddedOptions {
  /** Model grid size N (N × N pixels, even). */
  n: number;
  /** Cell Δ [rad]. */
  cellRad: number;
  /** NUFFT tolerance of the one-off sums. Default 1e-12. */
  tolerance?: number;
  /** Threads for the set-up NUFFTs. Default 1 (a one-off cost). */
  threads?: number;
}

/** Defaults of the optional GriddedOptions fields. */
export const DEFAULT_GRIDDED_OPTIONS = Object.freeze({ tolerance: 1e-12, threads: 1 });

/**
 * Above this many points a group's kernel fractions are recomputed from u, v rather than stored
 * (16 bytes per point), which keeps the set-up on one thread. Stored fractions are only worth
 * their memory when worker threads share them.
 */
const MAX_STORED_FRACTION_POINTS = 4_000_000;

/** Precomputed (D, B̂, Σw|d|²) per channel group, and the buffers to evaluate χ². */
export class GriddedStats {
  readonly n: number;
  readonly cellRad: number;
  readonly groupCount: number;
  /** Visibilities per group. */
  readonly groupSizes: Int32Array;
  private readonly dTerms: Float64Array[] = [];
  private readonly bHat: Float64Array[] = [];
  private readonly dataSq: Float64Array;
  /** Side of the padded FFT grid: the power of two ≥ 2N (fft.js sizes are powers of two). */
  private readonly padSize: number;
  private readonly fft: Fft2;
  /** Padded complex work grid, padSize × padSize. */
  private readonly pad: Float64Array;
  /** Half spectra of the images of one normalEquations call (grown on demand, then reused). */
  private spectra = new Float64Array(0);

  constructor(input: GriddedInput, options: GriddedOptions) {
    const n = options.n;
    if (!Number.isInteger(n) || n < 2 || n % 2 !== 0 || n > 8192) {
      throw new InputError(`GriddedStats n: got ${n}; the model grid size must be an even integer in [2, 8192]`);
    }
    if (!(options.cellRad > 0 && Number.isFinite(options.cellRad))) {
      throw new InputError(`GriddedStats cellRad: got ${options.cellRad}; the cell size must be a positive number of radians`);
    }
    const m = input.uLambda.length;
    for (const [name, arr] of [["vLambda", input.vLambda], ["reJy", input.reJy], ["imJy", input.imJy], ["weight", input.weight]] as const) {
      if (arr.length !== m) {
        throw new InputError(`GriddedStats: ${name} has ${arr.length} entries but uLambda has ${m}; every array needs one value per visibility`);
      }
    }
    if (input.group && input.group.length !== m) {
      throw new InputError(`GriddedStats: group has ${input.group.length} entries but uLambda has ${m}; give one group id per visibility`);
    }
    for (let k = 0; k < m; k++) {
      const w = input.weight[k];
      if (!(w >= 0 && Number.isFinite(w)) || !Number.isFinite(input.reJy[k]) || !Number.isFinite(input.imJy[k])) {
        throw new InputError(
          `GriddedStats: visibility ${k} has re = ${input.reJy[k]}, im = ${input.imJy[k]}, weight = ${w}; data must be finite and weights finite and ≥ 0 (drop flagged entries first)`,
        );
      }
    }
    checkNyquist(input.uLambda, input.vLambda, options.cellRad);
    this.n = n;
    this.cellRad = options.cellRad;

    // Group membership.
    let groups = 1;
    if (input.group) {
      for (let k = 0; k < m; k++) {
        const g = input.group[k];
        if (!Number.isInteger(g) || g < 0 || g > 65535) {
          throw new InputError(`GriddedStats: visibility ${k} has channel group ${g}; group ids must be integers in [0, 65535]`);
        }
        if (g + 1 > groups) groups = g + 1;
      }
    }
    this.groupCount = groups;
    this.groupSizes = new Int32Array(groups);
    for (let k = 0; k < m; k++) this.groupSizes[input.group ? input.group[k] : 0]++;
    this.dataSq = new Float64Array(groups);

    const n2 = 2 * n;
    let ps = 2;
    while (ps < n2) ps *= 2;
    this.padSize = ps;
    this.fft = new Fft2(ps, ps);
    this.pad = new Float64Array(2 * ps * ps);
    const tolerance = options.tolerance ?? DEFAULT_GRIDDED_OPTIONS.tolerance;
    const threads = options.threads ?? DEFAULT_GRIDDED_OPTIONS.threads;
    const big = new Float64Array(n2 * n2);
    const bigB = new Float64Array(n2 * n2);

    for (let g = 0; g < groups; g++) {
      const size = this.groupSizes[g];
      // The group's entries (no copy when there is one group).
      let u = input.uLambda;
      let v = input.vLambda;
      let re = input.reJy;
      let im = input.imJy;
      let wt = input.weight;
      if (groups > 1) {
        u = new Float64Array(size);
        v = new Float64Array(size);
        re = new Float64Array(size);
        im = new Float64Array(size);
        wt = new Float64Array(size);
        let c = 0;
        const grp = input.group as ArrayLike<number>;
        for (let k = 0; k < m; k++) {
          if (grp[k] !== g) continue;
          u[c] = input.uLambda[k];
          v[c] = input.vLambda[k];
          re[c] = input.reJy[k];
          im[c] = input.imJy[k];
          wt[c] = input.weight[k];
          c++;
        }
      }
      // Σ w|d|², and the NUFFT inputs w d/h (for D) and w/h² (for B).
      const cRe = new Float64Array(size);
      const cIm = new Float64Array(size);
      const cB = new Float64Array(size);
      let s = 0;
      let comp = 0;
      for (let k = 0; k < size; k++) {
        const x = wt[k] * (re[k] * re[k] + im[k] * im[k]);
        const t = s + x;
        comp += s >= x ? s - t + x : x - t + s;
        s = t;
        const h = pixelWindow(u[k], v[k], this.cellRad);
        cRe[k] = (wt[k] * re[k]) / h;
        cIm[k] = (wt[k] * im[k]) / h;
        cB[k] = wt[k] / (h * h);
      }
      this.dataSq[g] = s + comp;

      // One plan on the 2N grid serves both sums: the N grid is its central quarter.
      const plan = new NufftPlan({
        nx: n2,
        cellRad: this.cellRad,
        tolerance,
        threads,
        precomputeKernel: threads > 1 && size <= MAX_STORED_FRACTION_POINTS,
      });
      try {
        plan.setPoints(u, v);
        plan.executeAdjointPair(cRe, cIm, cB, big, bigB);
        const d = new Float64Array(n * n);
        // 2N-grid column i' has x offset N − i', the N-grid column i has N/2 − i: i' = i + N/2.
        for (let j = 0; j < n; j++) {
          for (let i = 0; i < n; i++) d[j * n + i] = big[(j + n / 2) * n2 + (i + n / 2)];
        }
        this.dTerms.push(d);
      } finally {
        plan.dispose();
      }
      this.bHat.push(this.lagTransform(bigB));
    }
  }

  /** The arrays that define the statistics (for rebuilding them in a worker thread without the set-up). */
  exportState(): GriddedState {
    return {
      n: this.n,
      cellRad: this.cellRad,
      groupSizes: this.groupSizes,
      dTerms: this.dTerms,
      bHat: this.bHat,
      dataSq: this.dataSq,
    };
  }

  /** Rebuild statistics from exportState() (no NUFFT; allocates only the FFT buffers). */
  static fromState(state: GriddedState): GriddedStats {
    const g = Object.create(GriddedStats.prototype) as GriddedStats;
    const w = g as unknown as Record<string, unknown>;
    let ps = 2;
    while (ps < 2 * state.n) ps *= 2;
    w.n = state.n;
    w.cellRad = state.cellRad;
    w.groupCount = state.groupSizes.length;
    w.groupSizes = state.groupSizes;
    w.dTerms = state.dTerms;
    w.bHat = state.bHat;
    w.dataSq = state.dataSq;
    w.padSize = ps;
    w.fft = new Fft2(ps, ps);
    w.pad = new Float64Array(2 * ps * ps);
    w.spectra = new Float64Array(0);
    return g;
  }

  /** D of group g [Jy⁻¹ per Jy/pixel, i.e. the weighted back-projection], N × N row-major. */
  dataTerm(g = 0): Float64Array {
    return this.dTerms[g];
  }

  /** Σ_k w_k|d_k|² of group g (dimensionless χ² units); all groups when g is omitted. */
  sumWeightedDataSq(g?: number): number {
    if (g !== undefined) return this.dataSq[g];
    let s = 0;
    for (let i = 0; i < this.groupCount; i++) s += this.dataSq[i];
    return s;
  }

  /**
   * χ² = Σ_g [Σw|d|² − 2⟨J_g, D_g⟩ + ⟨J_g, B_g⋆J_g⟩].
   * @param images one N × N image J_g [Jy/pixel] per group, or one image for every group.
   */
  chi2(images: Float64Array | readonly Float64Array[]): number {
    let total = 0;
    for (let g = 0; g < this.groupCount; g++) {
      const J = images instanceof Float64Array ? images : images[g];
      if (!J) throw new InputError(`GriddedStats.chi2: no image for channel group ${g}; pass one image per group (${this.groupCount}) or one for all`);
      this.checkImage(J);
      total += this.dataSq[g] - 2 * dotCompensated(J, this.dTerms[g], J.length) + this.quadratic(J, g);
    }
    return total;
  }

  /**
   * ⟨J, B_g⋆J⟩ = Σ_{p,q} J_p J_q B_g(x_p − x_q) by one FFT of J zero-padded to 2N × 2N.
   * Two real rows go through one complex FFT; only half the spectrum is needed since J is real
   * and B̂ even.
   */
  quadratic(J: Float64Array, g = 0): number {
    this.checkImage(J);
    this.halfSpectrum(J);
    const { pad } = this;
    const n2 = this.padSize;
    const half = n2 / 2;
    const rowLen = 2 * n2;
    const bh = this.bHat[g];
    let s = 0;
    let c = 0;
    for (let fy = 0; fy < n2; fy++) {
      const o = fy * rowLen;
      const ob = fy * n2;
      for (let fx = 0; fx <= half; fx++) {
        const re = pad[o + 2 * fx];
        const im = pad[o + 2 * fx + 1];
        const x = (fx === 0 || fx === half ? 1 : 2) * bh[ob + fx] * (re * re + im * im);
        const t = s + x;
        if (Math.abs(s) >= Math.abs(x)) c += s - t + x;
        else c += x - t + s;
        s = t;
      }
    }
    return (s + c) / (n2 * n2);
  }

  /**
   * The normal equations of a linear model J = Σ_k f_k J_k in group g:
   * outA[k·K + l] = ⟨J_k, B_g⋆J_l⟩ and outB[k] = ⟨J_k, D_g⟩, so that
   * χ²_g(f) = Σw|d|² − 2 fᵀb + fᵀA f. One forward FFT per image; the cross terms are formed
   * in the Fourier domain (B̂ real and even), so K images cost K FFTs, not K² products.
   * @param images K images [Jy/pixel per unit of f_k], N × N each
   * @param outA K × K, row-major (overwritten); @param outB K (overwritten)
   */
  normalEquations(images: readonly Float64Array[], g: number, outA: Float64Array, outB: Float64Array): void {
    const k = images.length;
    const n2 = this.padSize;
    const half = n2 / 2;
    const specLen = n2 * (half + 1) * 2;
    if (this.spectra.length < k * specLen) this.spectra = new Float64Array(k * specLen);
    const spec = this.spectra;
    const rowLen = 2 * n2;
    for (let a = 0; a < k; a++) {
      const J = images[a];
      this.checkImage(J);
      outB[a] = dotCompensated(J, this.dTerms[g], J.length);
      this.halfSpectrum(J);
      const base = a * specLen;
      for (let fy = 0; fy < n2; fy++) {
        const o = fy * rowLen;
        const so = base + fy * (half + 1) * 2;
        for (let q = 0; q < 2 * (half + 1); q++) spec[so + q] = this.pad[o + q];
      }
    }
    const bh = this.bHat[g];
    const norm = 1 / (n2 * n2);
    for (let a = 0; a < k; a++) {
      for (let b = a; b < k; b++) {
        const ba = a * specLen;
        const bb = b * specLen;
        let s = 0;
        for (let fy = 0; fy < n2; fy++) {
          const so = fy * (half + 1) * 2;
          const ob = fy * n2;
          for (let fx = 0; fx <= half; fx++) {
            const i = so + 2 * fx;
            const cross = spec[ba + i] * spec[bb + i] + spec[ba + i + 1] * spec[bb + i + 1];
            s += (fx === 0 || fx === half ? 1 : 2) * bh[ob + fx] * cross;
          }
        }
        outA[a * k + b] = s * norm;
        outA[b * k + a] = s * norm;
      }
    }
  }

  /**
   * FFT of J zero-padded to P × P, left in `pad` for columns 0 … P/2 (the half spectrum a real
   * image needs). Two real rows go through one complex FFT.
   */
  private halfSpectrum(J: Float64Array): void {
    const { n, pad, fft } = this;
    const n2 = this.padSize;
    const half = n2 / 2;
    const rowLen = 2 * n2;
    // Rows n … 2n − 1 of the padded image are zero and stay zero through the row pass.
    pad.fill(0, n * rowLen);
    const row = fft.scratchRow;
    for (let j = 0; j < n; j += 2) {
      row.fill(0);
      const a = j * n;
      const b = (j + 1) * n;
      for (let i = 0; i < n; i++) {
        row[2 * i] = J[a + i];
        row[2 * i + 1] = J[b + i];
      }
      fft.rowFromScratch(pad, j, false);
      // Unpack: R_j[f] = (Z[f] + conj Z[−f])/2, R_{j+1}[f] = (Z[f] − conj Z[−f])/(2i),
      // for f = 0 … half (the half the column pass needs).
      const o0 = j * rowLen;
      const o1 = (j + 1) * rowLen;
      for (let f = half; f >= 0; f--) {
        const fm = (n2 - f) & (n2 - 1);
        const zr = pad[o0 + 2 * f];
        const zi = pad[o0 + 2 * f + 1];
        const wr = pad[o0 + 2 * fm];
        const wi = pad[o0 + 2 * fm + 1];
        pad[o1 + 2 * f] = 0.5 * (zi + wi);
        pad[o1 + 2 * f + 1] = 0.5 * (wr - zr);
        pad[o0 + 2 * f] = 0.5 * (zr + wr);
        pad[o0 + 2 * f + 1] = 0.5 * (zi - wi);
      }
    }
    fft.columns(pad, false, 0, half + 1);
  }

  /**
   * out = B_g ⋆ J on the model grid: out_p = Σ_q B_g(x_p − x_q) J_q (the normal-equation
   * operator of a linear inversion). @param J, out N × N row-major.
   */
  applyB(J: Float64Array, out: Float64Array, g = 0): void {
    this.checkImage(J);
    this.checkImage(out);
    const { n, pad, fft } = this;
    const n2 = this.padSize;
    const bh = this.bHat[g];
    pad.fill(0);
    const row = fft.scratchRow;
    for (let j = 0; j < n; j++) {
      row.fill(0);
      for (let i = 0; i < n; i++) row[2 * i] = J[j * n + i];
      fft.rowFromScratch(pad, j, false);
    }
    fft.columns(pad, false);
    for (let f = 0; f < n2 * n2; f++) {
      pad[2 * f] *= bh[f];
      pad[2 * f + 1] *= bh[f];
    }
    fft.columns(pad, true);
    const scale = 1 / (n2 * n2);
    for (let j = 0; j < n; j++) {
      const r = fft.rowToScratch(pad, j, true);
      for (let i = 0; i < n; i++) out[j * n + i] = r[2 * i] * scale;
    }
  }

  /**
   * B̂ from B on the 2N lag grid (NUFFT output layout: column i' ↔ Δx = (N − i')Δ, row j' ↔
   * Δy = (j' − N)Δ). Image pixels are placed at their own (i, j) in the padded grid, so the
   * circular kernel (period P = padSize ≥ 2N) is indexed by di = i_p − i_q = −Δx/Δ and
   * dj = Δy/Δ: i' = N + di, j' = N + dj, stored at (di mod P, dj mod P). Lags |d| ≥ N never occur
   * between two pixels and are set to zero, which makes the circular kernel exactly even and B̂ real.
   */
  private lagTransform(big: Float64Array): Float64Array {
    const { n, fft, pad } = this;
    const n2 = this.padSize;
    const mask = n2 - 1;
    pad.fill(0);
    for (let jp = 1; jp < 2 * n; jp++) {
      const dj = (jp - n) & mask;
      for (let ip = 1; ip < 2 * n; ip++) {
        const di = (ip - n) & mask;
        pad[2 * (dj * n2 + di)] = big[jp * 2 * n + ip];
      }
    }
    for (let j = 0; j < n2; j++) fft.rowInPlace(pad, j, false);
    fft.columns(pad, false);
    const out = new Float64Array(n2 * n2);
    for (let f = 0; f < n2 * n2; f++) out[f] = pad[2 * f];
    return out;
  }

  private checkImage(J: Float64Array): void {
    if (J.length !== this.n * this.n) {
      throw new InputError(`GriddedStats: image has ${J.length} pixels, expected ${this.n}×${this.n} = ${this.n * this.n}`);
    }
  }
}
