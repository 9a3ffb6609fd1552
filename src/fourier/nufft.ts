/**
 * NufftPlan: the non-uniform FFT between a model grid and sampled (u, v) points.
 *
 * With pixel offsets a = nx/2 − i, b = j − ny/2 (so x = aΔ, y = bΔ, CONVENTIONS.md "Model
 * grids") and s = 2πuΔ, t = 2πvΔ, the forward transform is a 2D type-2 NUFFT:
 *   M_k = Σ_{a,b} J_{ab} e^{−i(s_k a + t_k b)}   (execute: real image → complex M_k),
 * and its adjoint a 2D type-1 NUFFT:
 *   A_{ab} = Σ_k c_k e^{+i(s_k a + t_k b)}        (executeAdjoint: real part; …Complex: both).
 * Method: pre-correct by the kernel transform, FFT on an upsampled fine grid (power of two
 * ≥ 2N, as fft.js requires), interpolate with the ES kernel (type 2); the type 1 is its exact
 * transpose (spread, backward FFT, correct). Since the sums are 2π-periodic in s and t, points
 * beyond the grid's Nyquist limit are handled exactly (they wrap), though a model grid that
 * does not resolve the longest baseline aliases: check data with `checkNyquist`.
 * With `threads` > 1 the spreading and interpolation are split over worker threads sharing
 * memory (SharedArrayBuffer); the FFTs stay on the calling thread.
 *
 * Reference: Barnett, Magland & af Klinteberg 2019, SIAM J. Sci. Comput. 41(5), C479 (§2–3);
 * REFERENCES.md §9.
 */
import { availableParallelism } from "node:os";
import { InputError } from "../errors.js";
import { Fft2 } from "./fft2.js";
import { esKernelForTolerance, esKernelForWidth, esKernelFourier, type EsKernel } from "./kernel.js";
import { fillKernelTables, interpolate, sortPointsByBin, spread, type KernelTable } from "./spreadInterp.js";
import { WorkerPool } from "./pool.js";

/** Options of a NufftPlan. */
export interface NufftOptions {
  /** Model-grid columns (x); even, ≥ 2. */
  nx: number;
  /** Model-grid rows (y); even, ≥ 2. Default: nx. */
  ny?: number;
  /** Cell size Δ [rad], > 0. */
  cellRad: number;
  /** Requested relative ℓ2 accuracy, in [1e-15, 0.1]. Default 1e-6. */
  tolerance?: number;
  /** Kernel width [fine cells], integer in [2, 16]; overrides `tolerance` when given. */
  kernelWidth?: number;
  /** Threads for spreading/interpolation (1 = calling thread only). Default: all cores. */
  threads?: number;
  /**
   * Precompute per-point kernel weights in `setPoints` (fast execute; 2·width numbers per
   * point, float32 when width ≤ 7 and float64 otherwise). When false the weights are
   * recomputed per execute in small blocks (slower, no per-point memory; for one-off sums
   * over very many points). Default true.
   */
  precomputeKernel?: boolean;
}

/** Defaults of the optional NufftOptions fields. */
export const DEFAULT_NUFFT_OPTIONS = Object.freeze({
  tolerance: 1e-6,
  precomputeKernel: true,
});

/** Below this many points per thread the workers are not worth waking. */
const MIN_POINTS_PER_THREAD = 20_000;
/** Points per block when kernel weights are computed on the fly. */
const ON_THE_FLY_BLOCK = 4096;

function nextPow2(n: number): number {
  let p = 16;
  while (p < n) p *= 2;
  return p;
}

/** Float64Array over shared memory when `shared`, so worker threads can see it. */
function f64(n: number, shared: boolean): Float64Array {
  return shared ? new Float64Array(new SharedArrayBuffer(8 * n)) : new Float64Array(n);
}

/**
 * Plan for repeated NUFFTs between one model grid and one set of (u, v) points.
 * Lifecycle: construct → setPoints → execute / executeAdjoint (any number) → dispose.
 */
export class NufftPlan {
  readonly nx: number;
  readonly ny: number;
  readonly cellRad: number;
  readonly kernel: EsKernel;
  /** Fine-grid size along x and y (powers of two ≥ 2·nx, 2·ny). */
  readonly nfx: number;
  readonly nfy: number;
  /** Requested threads (the calling thread counts as one). */
  readonly threads: number;
  readonly precomputeKernel: boolean;

  private readonly corrX: Float64Array;
  private readonly corrY: Float64Array;
  private readonly fineColOfI: Int32Array;
  private readonly fineRowOfJ: Int32Array;
  private readonly fft: Fft2;
  private readonly shared: boolean;
  /** The fine grid, interleaved complex nfx × nfy. */
  readonly grid: Float64Array;

  private u: Float64Array = new Float64Array(0);
  private v: Float64Array = new Float64Array(0);
  private count = 0;
  private perm: Uint32Array = new Uint32Array(0);
  private cell: Int32Array = new Int32Array(0);
  private tab: KernelTable | null = null;
  private readonly blockTab: Float64Array;
  private pool: WorkerPool | null = null;
  /** Sorted-order point values exchanged with the workers (only when threads are used). */
  private sortedRe: Float64Array = new Float64Array(0);
  private sortedIm: Float64Array = new Float64Array(0);
  private disposed = false;

  constructor(options: NufftOptions) {
    const nx = options.nx;
    const ny = options.ny ?? nx;
    for (const [name, n] of [["nx", nx], ["ny", ny]] as const) {
      if (!Number.isInteger(n) || n < 2 || n % 2 !== 0 || n > 16384) {
        throw new InputError(`NufftPlan ${name}: got ${n}; the model grid size must be an even integer in [2, 16384]`);
      }
    }
    if (!(options.cellRad > 0 && Number.isFinite(options.cellRad))) {
      throw new InputError(`NufftPlan cellRad: got ${options.cellRad}; the cell size must be a positive number of radians`);
    }
    const threads = options.threads ?? availableParallelism();
    if (!Number.isInteger(threads) || threads < 1 || threads > 256) {
      throw new InputError(`NufftPlan threads: got ${threads}; use an integer from 1 to 256 (1 = no worker threads)`);
    }
    this.nx = nx;
    this.ny = ny;
    this.cellRad = options.cellRad;
    this.threads = threads;
    this.kernel =
      options.kernelWidth !== undefined
        ? esKernelForWidth(options.kernelWidth)
        : esKernelForTolerance(options.tolerance ?? DEFAULT_NUFFT_OPTIONS.tolerance);
    this.precomputeKernel = options.precomputeKernel ?? DEFAULT_NUFFT_OPTIONS.precomputeKernel;
    const w = this.kernel.width;
    // Upsampling ≥ 2, and room for the kernel to wrap at most once.
    this.nfx = nextPow2(Math.max(2 * nx, 2 * w));
    this.nfy = nextPow2(Math.max(2 * ny, 2 * w));
    this.shared = threads > 1;
    this.grid = f64(2 * this.nfx * this.nfy, this.shared);
    this.fft = new Fft2(this.nfx, this.nfy);
    this.blockTab = new Float64Array(this.precomputeKernel ? 0 : ON_THE_FLY_BLOCK * 2 * w);

    // Correction factors h/ψ̂(a) = 2/(w·Φ(a·w·π/nf)) per pixel offset (Barnett et al. §3).
    this.corrX = new Float64Array(nx);
    this.corrY = new Float64Array(ny);
    this.fineColOfI = new Int32Array(nx);
    this.fineRowOfJ = new Int32Array(ny);
    const kx = new Float64Array(nx);
    for (let i = 0; i < nx; i++) {
      const a = nx / 2 - i;
      kx[i] = (a * w * Math.PI) / this.nfx;
      this.fineColOfI[i] = a & (this.nfx - 1);
    }
    esKernelFourier(kx, this.kernel.beta, this.corrX);
    for (let i = 0; i < nx; i++) this.corrX[i] = 2 / (w * this.corrX[i]);
    const ky = new Float64Array(ny);
    for (let j = 0; j < ny; j++) {
      const b = j - ny / 2;
      ky[j] = (b * w * Math.PI) / this.nfy;
      this.fineRowOfJ[j] = b & (this.nfy - 1);
    }
    esKernelFourier(ky, this.kernel.beta, this.corrY);
    for (let j = 0; j < ny; j++) this.corrY[j] = 2 / (w * this.corrY[j]);
  }

  /** Number of points set by `setPoints`. */
  get pointCount(): number {
    return this.count;
  }

  /**
   * Set the sample points. The plan BORROWS the arrays (no copy): do not change them until the
   * next setPoints. Sorts the points by fine-grid bin and, by default, tabulates the kernel.
   * @param uLambda, vLambda baseline coordinates [wavelengths], equal lengths, finite.
   */
  setPoints(uLambda: Float64Array, vLambda: Float64Array): void {
    this.checkAlive();
    const m = uLambda.length;
    if (vLambda.length !== m) {
      throw new InputError(`NufftPlan.setPoints: uLambda has ${m} entries but vLambda has ${vLambda.length}; give one (u, v) per point`);
    }
    for (let k = 0; k < m; k++) {
      if (!Number.isFinite(uLambda[k]) || !Number.isFinite(vLambda[k])) {
        throw new InputError(`NufftPlan.setPoints: point ${k} has u = ${uLambda[k]}, v = ${vLambda[k]}; every coordinate must be finite`);
      }
    }
    this.u = uLambda;
    this.v = vLambda;
    this.count = m;
    const w = this.kernel.width;
    const useThreads = this.activeThreads(m) > 1;
    const sharedPoints = this.shared && useThreads;
    const i32 = (n: number) => (sharedPoints ? new Int32Array(new SharedArrayBuffer(4 * n)) : new Int32Array(n));
    if (this.perm.length !== m || this.cell.buffer instanceof SharedArrayBuffer !== sharedPoints) {
      this.perm = sharedPoints ? new Uint32Array(new SharedArrayBuffer(4 * m)) : new Uint32Array(m);
      this.cell = i32(m);
    }
    const scaleX = this.cellRad * this.nfx;
    const scaleY = this.cellRad * this.nfy;
    // `cell` doubles as the bin scratch of the sort; it is overwritten just below.
    sortPointsByBin(uLambda, vLambda, scaleX, scaleY, this.nfx, this.nfy, w, this.perm, this.cell);
    if (this.precomputeKernel) {
      const len = m * 2 * w;
      const bytes = w <= 7 ? 4 : 8;
      const buf = sharedPoints ? new SharedArrayBuffer(bytes * len) : new ArrayBuffer(bytes * len);
      this.tab = bytes === 4 ? new Float32Array(buf) : new Float64Array(buf);
      fillKernelTables(this.perm, uLambda, vLambda, scaleX, scaleY, this.nfx, this.nfy, w, this.kernel.beta, this.tab, 0, 0, m, this.cell);
    } else {
      this.tab = null;
      // Start cells only; the weights come per block at execute time.
      const tmp = new Float64Array(ON_THE_FLY_BLOCK * 2 * w);
      for (let k0 = 0; k0 < m; k0 += ON_THE_FLY_BLOCK) {
        const k1 = Math.min(m, k0 + ON_THE_FLY_BLOCK);
        fillKernelTables(this.perm, uLambda, vLambda, scaleX, scaleY, this.nfx, this.nfy, w, this.kernel.beta, tmp, k0, k0, k1, this.cell);
      }
    }
    if (sharedPoints) {
      this.sortedRe = f64(m, true);
      this.sortedIm = f64(m, true);
      this.ensurePool().attach({
        grid: this.grid,
        nfx: this.nfx,
        nfy: this.nfy,
        width: w,
        cell: this.cell,
        perm: this.perm,
        tab: this.tab as KernelTable,
        sortedRe: this.sortedRe,
        sortedIm: this.sortedIm,
      });
    } else {
      this.sortedRe = new Float64Array(0);
      this.sortedIm = new Float64Array(0);
    }
  }

  /**
   * Type 2 (forward): M_k = Σ_p J_p e^{−2πi(u_k x_p + v_k y_p)} for a real image.
   * @param image J [Jy/pixel], row-major nx·ny (CONVENTIONS.md model grid).
   * @param outRe, outIm receive Re, Im of M_k [Jy], length = number of points.
   */
  execute(image: Float64Array, outRe: Float64Array, outIm: Float64Array): void {
    this.checkAlive();
    this.checkLength("execute image", image.length, this.nx * this.ny);
    this.checkLength("execute outRe", outRe.length, this.count);
    this.checkLength("execute outIm", outIm.length, this.count);
    const { nx, ny, nfx, nfy, grid, fft } = this;
    const half = ny / 2;
    // Rows of the fine grid outside the band of image rows stay zero.
    grid.fill(0, 2 * nfx * half, 2 * nfx * (nfy - half));
    const row = fft.scratchRow;
    for (let j = 0; j < ny; j++) {
      row.fill(0);
      const cy = this.corrY[j];
      const base = j * nx;
      for (let i = 0; i < nx; i++) row[2 * this.fineColOfI[i]] = image[base + i] * this.corrX[i] * cy;
      fft.rowFromScratch(grid, this.fineRowOfJ[j], false);
    }
    fft.columns(grid, false);
    this.interpolateAll(outRe, outIm);
  }

  /**
   * Type 1 (adjoint), real part: out_p = Re Σ_k c_k e^{+2πi(u_k x_p + v_k y_p)}. This is the
   * exact adjoint of `execute` under ⟨a, b⟩ = Σ Re(a* b): ⟨execute(x), c⟩ = ⟨x, adjoint(c)⟩.
   * @param re, im c_k (im may be null for real c_k), length = number of points.
   * @param outImage receives the nx·ny real image (row-major).
   */
  executeAdjoint(re: Float64Array, im: Float64Array | null, outImage: Float64Array): void {
    this.adjointCore(re, im, outImage, null);
  }

  /** Type 1 (adjoint), complex: outRe + i·outIm = Σ_k c_k e^{+2πi(u_k x_p + v_k y_p)}. */
  executeAdjointComplex(re: Float64Array, im: Float64Array | null, outRe: Float64Array, outIm: Float64Array): void {
    this.checkLength("executeAdjointComplex outIm", outIm.length, this.nx * this.ny);
    this.adjointCore(re, im, outRe, outIm);
  }

  /** Terminate the worker threads and drop the point arrays. The plan is unusable after. */
  dispose(): void {
    if (this.pool) this.pool.dispose();
    this.pool = null;
    this.tab = null;
    this.perm = new Uint32Array(0);
    this.cell = new Int32Array(0);
    this.disposed = true;
  }

  /** Bytes held by the plan: fine grid, sort order, start cells, kernel tables, thread buffers. */
  get memoryBytes(): number {
    return (
      this.grid.byteLength +
      this.perm.byteLength +
      this.cell.byteLength +
      (this.tab ? this.tab.byteLength : 0) +
      this.sortedRe.byteLength +
      this.sortedIm.byteLength +
      (this.pool ? this.pool.privateGridBytes : 0)
    );
  }

  private adjointCore(re: Float64Array, im: Float64Array | null, outRe: Float64Array, outIm: Float64Array | null): void {
    this.checkAlive();
    this.checkLength("executeAdjoint re", re.length, this.count);
    if (im) this.checkLength("executeAdjoint im", im.length, this.count);
    this.checkLength("executeAdjoint outImage", outRe.length, this.nx * this.ny);
    const { nx, ny, grid, fft } = this;
    grid.fill(0);
    this.spreadAll(re, im);
    fft.columns(grid, true);
    for (let j = 0; j < ny; j++) {
      const row = fft.rowToScratch(grid, this.fineRowOfJ[j], true);
      const cy = this.corrY[j];
      const base = j * nx;
      for (let i = 0; i < nx; i++) {
        const c = this.corrX[i] * cy;
        const f = 2 * this.fineColOfI[i];
        outRe[base + i] = row[f] * c;
        if (outIm) outIm[base + i] = row[f + 1] * c;
      }
    }
  }

  private activeThreads(m: number): number {
    if (this.threads <= 1 || !this.precomputeKernel) return 1;
    return Math.max(1, Math.min(this.threads, Math.floor(m / MIN_POINTS_PER_THREAD)));
  }

  private ensurePool(): WorkerPool {
    if (!this.pool) this.pool = new WorkerPool(this.threads - 1);
    return this.pool;
  }

  /** Point ranges in sorted order: range t of T. */
  private range(t: number, parts: number): [number, number] {
    const m = this.count;
    return [Math.floor((m * t) / parts), Math.floor((m * (t + 1)) / parts)];
  }

  private interpolateAll(outRe: Float64Array, outIm: Float64Array): void {
    const { nfx, nfy, grid, cell, perm } = this;
    const w = this.kernel.width;
    const m = this.count;
    const parts = this.activeThreads(m);
    if (this.tab && parts > 1 && this.pool) {
      const pool = this.pool;
      for (let t = 1; t < parts; t++) {
        const [a, b] = this.range(t, parts);
        pool.start(t - 1, { op: "interpolate", kStart: a, kEnd: b });
      }
      const [a0, b0] = this.range(0, parts);
      interpolate(grid, nfx, nfy, w, cell, perm, this.tab, 0, a0, b0, outRe, outIm, true);
      pool.waitAll(parts - 1);
      const sRe = this.sortedRe;
      const sIm = this.sortedIm;
      for (let k = b0; k < m; k++) {
        const p = perm[k];
        outRe[p] = sRe[k];
        outIm[p] = sIm[k];
      }
      return;
    }
    if (this.tab) {
      interpolate(grid, nfx, nfy, w, cell, perm, this.tab, 0, 0, m, outRe, outIm, true);
      return;
    }
    const scaleX = this.cellRad * nfx;
    const scaleY = this.cellRad * nfy;
    for (let k0 = 0; k0 < m; k0 += ON_THE_FLY_BLOCK) {
      const k1 = Math.min(m, k0 + ON_THE_FLY_BLOCK);
      fillKernelTables(perm, this.u, this.v, scaleX, scaleY, nfx, nfy, w, this.kernel.beta, this.blockTab, k0, k0, k1, null);
      interpolate(grid, nfx, nfy, w, cell, perm, this.blockTab, k0, k0, k1, outRe, outIm, true);
    }
  }

  private spreadAll(re: Float64Array, im: Float64Array | null): void {
    const { nfx, nfy, grid, cell, perm } = this;
    const w = this.kernel.width;
    const m = this.count;
    const parts = this.activeThreads(m);
    if (this.tab && parts > 1 && this.pool) {
      const pool = this.pool;
      // Workers read sorted copies of the values (they cannot see the caller's arrays).
      const [, b0] = this.range(0, parts);
      const sRe = this.sortedRe;
      const sIm = this.sortedIm;
      for (let k = b0; k < m; k++) {
        const p = perm[k];
        sRe[k] = re[p];
        sIm[k] = im ? im[p] : 0;
      }
      for (let t = 1; t < parts; t++) {
        const [a, b] = this.range(t, parts);
        pool.start(t - 1, { op: "spread", kStart: a, kEnd: b });
      }
      spread(grid, nfx, nfy, w, cell, perm, this.tab, 0, 0, b0, re, im, true);
      pool.waitAll(parts - 1);
      // Sum the workers' private grids in a fixed order (deterministic, no races).
      for (let t = 1; t < parts; t++) {
        const g = pool.privateGrid(t - 1);
        for (let i = 0; i < grid.length; i++) grid[i] += g[i];
      }
      return;
    }
    if (this.tab) {
      spread(grid, nfx, nfy, w, cell, perm, this.tab, 0, 0, m, re, im, true);
      return;
    }
    const scaleX = this.cellRad * nfx;
    const scaleY = this.cellRad * nfy;
    for (let k0 = 0; k0 < m; k0 += ON_THE_FLY_BLOCK) {
      const k1 = Math.min(m, k0 + ON_THE_FLY_BLOCK);
      fillKernelTables(perm, this.u, this.v, scaleX, scaleY, nfx, nfy, w, this.kernel.beta, this.blockTab, k0, k0, k1, null);
      spread(grid, nfx, nfy, w, cell, perm, this.blockTab, k0, k0, k1, re, im, true);
    }
  }

  private checkLength(what: string, got: number, want: number): void {
    if (got !== want) {
      throw new InputError(`NufftPlan.${what}: length ${got}, expected ${want}; pass arrays sized for the plan's grid and points`);
    }
  }

  private checkAlive(): void {
    if (this.disposed) throw new Error("NufftPlan: used after dispose()");
  }
}
