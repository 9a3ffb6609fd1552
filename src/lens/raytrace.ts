/**
 * Ray tracing of a model grid with supersampling and adaptive refinement.
 * Grid (CONVENTIONS.md): N×N, cell Δ, column i at x = (N/2 − i)Δ (East), row j at
 * y = (j − N/2)Δ (North), pixel p = j·N + i. Each pixel is sampled by s×s sub-rays at the
 * centres of an s×s sub-grid; a pixel holds the mean brightness over its sub-rays × Δ² [Jy/pixel].
 * Adaptive refinement: a pixel is re-sampled with (s·r)² sub-rays when its s² values spread by
 * more than `refineTolerance` × the largest sub-ray value of the image, or (optionally) when
 * det A changes sign across its corners (a critical curve crosses it). The refined rays of a
 * pixel are traced once per lens and reused by later renders.
 * Point sources are not sampled: their images are found by solving the lens equation
 * (pointImages.ts) on the pixel-corner grid and flux × |μ| is deposited in the pixel holding
 * each image.
 * Reference: common practice of supersampled ray shooting (Schneider, Ehlers & Falco 1992
 * §10.6, from memory).
 */
import { InputError } from "../errors.js";
import type { AnalyticSource } from "../source/analytic.js";
import type { Lens } from "./lens.js";
import { findPointImages, type NodeGrid, type PointImages } from "./pointImages.js";

export interface RayTraceOptions {
  /** Pixels per side N (even). */
  n: number;
  /** Cell Δ [arcsec]. */
  cellArcsec: number;
  /** Sub-rays per pixel side s ≥ 1 (default 2). */
  supersample?: number;
  /** Extra factor r per side for refined pixels, 1 disables refinement (default 4). */
  refineFactor?: number;
  /**
   * Spread of a pixel's sub-ray values, as a fraction of the image's peak sub-ray value, that
   * marks it undersampled and triggers refinement (default 0.3: a resolved source varies by
   * less between neighbouring sub-rays, and needs no refinement).
   */
  refineTolerance?: number;
  /** Also refine pixels crossed by a critical curve (default true). */
  refineNearCritical?: boolean;
  /**
   * The refined region grows from the flagged pixels through pixels brighter than this fraction
   * of the image's peak sub-ray value (default 1e-3).
   */
  refineFloor?: number;
}

export const DEFAULT_RAYTRACE_OPTIONS = Object.freeze({
  supersample: 2,
  refineFactor: 4,
  refineTolerance: 0.3,
  refineNearCritical: true,
  refineFloor: 1e-3,
});

/** Evaluates a brightness [Jy/arcsec² or per unit flux] at n source-plane positions; overwrites out. */
export type BrightnessFunction = (betaX: Float64Array, betaY: Float64Array, out: Float64Array, n: number) => void;

export class RayTracePlan {
  readonly n: number;
  readonly cellArcsec: number;
  readonly supersample: number;
  readonly refineFactor: number;
  readonly refineTolerance: number;
  readonly refineNearCritical: boolean;
  readonly nPixels: number;
  /** Number of regular sub-rays, N²s². */
  readonly nRays: number;
  readonly pixelAreaArcsec2: number;
  /** Sub-ray image-plane positions [arcsec], pixel-major (ray p·s² + k). Do not mutate. */
  readonly rayX: Float64Array;
  readonly rayY: Float64Array;
  /** Source-plane positions of the sub-rays from the last trace [arcsec]. */
  readonly betaX: Float64Array;
  readonly betaY: Float64Array;

  private lens: Lens | null = null;
  private readonly values: Float64Array;
  /** 1 where a critical curve crosses the pixel (valid after trace when refineNearCritical). */
  private readonly criticalFlag: Uint8Array;
  private readonly refineList: Int32Array;
  private readonly refineMark: Uint8Array;
  private readonly pixelMax: Float64Array;
  private readonly seedMark: Uint8Array;
  private hasSeeds = false;
  readonly refineFloor: number;
  /** Per pixel: offset (in refined-ray blocks) of its cached refined rays, or −1. */
  private readonly fineBlock: Int32Array;
  private fineCount = 0;
  private fineBetaX = new Float64Array(0);
  private fineBetaY = new Float64Array(0);
  private fineX = new Float64Array(0);
  private fineY = new Float64Array(0);
  private gatherX = new Float64Array(0);
  private gatherY = new Float64Array(0);
  private gatherV = new Float64Array(0);
  private nodeGrid: NodeGrid | null = null;
  private nodeX: Float64Array | null = null;
  private nodeY: Float64Array | null = null;
  private readonly pointCache = new Map<string, PointImages>();

  constructor(options: RayTraceOptions) {
    const o = { ...DEFAULT_RAYTRACE_OPTIONS, ...options };
    if (!Number.isInteger(o.n) || o.n < 2 || o.n % 2 !== 0) {
      throw new InputError(`ray-trace grid: n = ${o.n} must be an even integer ≥ 2 (CONVENTIONS.md model grids)`);
    }
    if (!(o.cellArcsec > 0) || !Number.isFinite(o.cellArcsec)) {
      throw new InputError(`ray-trace grid: cell = ${o.cellArcsec} arcsec must be a positive number`);
    }
    if (!Number.isInteger(o.supersample) || o.supersample < 1 || o.supersample > 64) {
      throw new InputError(`ray-trace grid: supersample = ${o.supersample} must be an integer in [1, 64]`);
    }
    if (!Number.isInteger(o.refineFactor) || o.refineFactor < 1 || o.refineFactor > 64) {
      throw new InputError(`ray-trace grid: refineFactor = ${o.refineFactor} must be an integer in [1, 64] (1 = off)`);
    }
    if (!(o.refineTolerance > 0)) {
      throw new InputError(`ray-trace grid: refineTolerance = ${o.refineTolerance} must be > 0`);
    }
    this.n = o.n;
    this.cellArcsec = o.cellArcsec;
    this.supersample = o.supersample;
    this.refineFactor = o.refineFactor;
    this.refineTolerance = o.refineTolerance;
    this.refineNearCritical = o.refineNearCritical;
    this.refineFloor = o.refineFloor;
    this.nPixels = o.n * o.n;
    const s = o.supersample;
    const s2 = s * s;
    this.nRays = this.nPixels * s2;
    this.pixelAreaArcsec2 = o.cellArcsec * o.cellArcsec;
    this.rayX = new Float64Array(this.nRays);
    this.rayY = new Float64Array(this.nRays);
    this.betaX = new Float64Array(this.nRays);
    this.betaY = new Float64Array(this.nRays);
    this.values = new Float64Array(this.nRays);
    this.criticalFlag = new Uint8Array(this.nPixels);
    this.refineList = new Int32Array(this.nPixels);
    this.refineMark = new Uint8Array(this.nPixels);
    this.pixelMax = new Float64Array(this.nPixels);
    this.seedMark = new Uint8Array(this.nPixels);
    this.fineBlock = new Int32Array(this.nPixels).fill(-1);
    const d = o.cellArcsec;
    const half = o.n / 2;
    for (let j = 0; j < o.n; j++) {
      for (let i = 0; i < o.n; i++) {
        const p = j * o.n + i;
        const xc = (half - i) * d;
        const yc = (j - half) * d;
        for (let sj = 0; sj < s; sj++) {
          for (let si = 0; si < s; si++) {
            const k = p * s2 + sj * s + si;
            this.rayX[k] = xc + ((si + 0.5) / s - 0.5) * d;
            this.rayY[k] = yc + ((sj + 0.5) / s - 0.5) * d;
          }
        }
      }
    }
  }

  /** x of pixel column i [arcsec]. */
  pixelX(i: number): number {
    return (this.n / 2 - i) * this.cellArcsec;
  }
  /** y of pixel row j [arcsec]. */
  pixelY(j: number): number {
    return (j - this.n / 2) * this.cellArcsec;
  }

  /**
   * Trace every sub-ray through the lens, β = θ − α(θ), into the plan's betaX/betaY (and
   * copies into outBetaX/outBetaY if given, each nRays long). Resets the refinement cache.
   */
  trace(lens: Lens, outBetaX?: Float64Array, outBetaY?: Float64Array): void {
    this.lens = lens;
    lens.sourcePositions(this.rayX, this.rayY, this.betaX, this.betaY, this.nRays);
    if (outBetaX) outBetaX.set(this.betaX);
    if (outBetaY) outBetaY.set(this.betaY);
    this.fineBlock.fill(-1);
    this.fineCount = 0;
    this.nodeGrid = null;
    this.pointCache.clear();
    if (this.refineNearCritical && this.refineFactor > 1) this.flagCriticalPixels(lens);
    else this.criticalFlag.fill(0);
  }

  /** Render an analytic source [Jy/pixel] into out (N² long), at freqHz if given. */
  render(source: AnalyticSource, out: Float64Array, freqHz?: number): void {
    this.seedCompactImages(source, -1);
    this.renderBrightness((bx, by, o, m) => source.evaluate(bx, by, o, m, freqHz), out, true);
    for (let k = 0; k < source.nComponents; k++) {
      if (!source.isPoint(k)) continue;
      const p = source.components[k].profile;
      this.depositPointSource(p.xArcsec, p.yArcsec, source.componentFluxJy(k, freqHz), out);
    }
  }

  /** Render component k with unit total flux [Jy/pixel per Jy] into out (N² long). */
  renderComponent(source: AnalyticSource, k: number, out: Float64Array): void {
    if (source.isPoint(k)) {
      out.fill(0);
      const p = source.components[k].profile;
      this.depositPointSource(p.xArcsec, p.yArcsec, 1, out);
      return;
    }
    this.seedCompactImages(source, k);
    this.renderBrightness((bx, by, o, m) => source.evaluateComponent(k, bx, by, o, m), out, true);
  }

  /**
   * A component smaller than the sub-ray spacing can fall between all sub-rays of a pixel, so
   * the spread test cannot see it. For such components the images of the component's centre
   * (found as for point sources) seed the refinement. k = −1: all components of the source.
   */
  private seedCompactImages(source: AnalyticSource, k: number): void {
    this.seedMark.fill(0);
    this.hasSeeds = false;
    if (this.refineFactor <= 1) return;
    const spacing = this.cellArcsec / this.supersample;
    for (let c = 0; c < source.nComponents; c++) {
      if ((k >= 0 && c !== k) || source.isPoint(c)) continue;
      const prof = source.components[c].profile;
      const size = prof.type === "sersic" ? prof.rEffArcsec : prof.type === "gaussian" ? prof.sigmaArcsec : Infinity;
      if (!(size < 2 * spacing)) continue;
      const im = this.pointImages(prof.xArcsec, prof.yArcsec);
      for (let t = 0; t < im.xArcsec.length; t++) {
        const p = this.pixelIndexAt(im.xArcsec[t], im.yArcsec[t]);
        if (p >= 0) {
          this.seedMark[p] = 1;
          this.hasSeeds = true;
        }
      }
    }
  }

  /**
   * Render any source-plane brightness function [per arcsec²] into out [per pixel] with
   * supersampling and adaptive refinement (used also for pixelised sources).
   */
  renderBrightness(evaluate: BrightnessFunction, out: Float64Array, useSeeds = false): void {
    const seeds = useSeeds && this.hasSeeds;
    const lens = this.requireTraced();
    const nPix = this.nPixels;
    const s2 = this.supersample * this.supersample;
    const vals = this.values;
    evaluate(this.betaX, this.betaY, vals, this.nRays);
    const refine = this.refineFactor > 1;
    if (!refine) {
      // no refinement: only the pixel means (the same arithmetic as below, without the spread)
      const invS2 = 1 / s2;
      const area = this.pixelAreaArcsec2;
      for (let p = 0; p < nPix; p++) {
        const base = p * s2;
        let sum = 0;
        for (let k = 0; k < s2; k++) sum += vals[base + k];
        out[p] = sum * invS2 * area;
      }
      return;
    }
    // the peak sets the refinement thresholds
    let peak = 0;
    for (let k = 0; k < this.nRays; k++) if (vals[k] > peak) peak = vals[k];
    const spreadLimit = this.refineTolerance * peak;
    // critical-curve pixels are refined only where the source is seen (else they cost rays
    // for nothing; compact sources the sub-rays miss are caught by seedCompactImages)
    const floorLimit = this.refineFloor * peak;
    const area = this.pixelAreaArcsec2;
    const invS2 = 1 / s2;
    const flag = this.refineMark;
    const pixMax = this.pixelMax;
    let nFlagged = 0;
    for (let p = 0; p < nPix; p++) {
      const base = p * s2;
      let sum = 0;
      let lo = Infinity;
      let hi = -Infinity;
      for (let k = 0; k < s2; k++) {
        const v = vals[base + k];
        sum += v;
        if (v < lo) lo = v;
        if (v > hi) hi = v;
      }
      out[p] = sum * invS2 * area;
      pixMax[p] = hi;
      const f =
        hi - lo > spreadLimit ||
        (this.criticalFlag[p] === 1 && hi > floorLimit) ||
        (seeds && this.seedMark[p] === 1)
          ? 1
          : 0;
      flag[p] = f;
      nFlagged += f;
    }
    if (nFlagged === 0) return;
    const nRefine = this.growRefineRegion(floorLimit);
    this.refinePixels(lens, evaluate, nRefine, out);
  }

  /** Pixel index holding (x, y) [arcsec], or −1 outside the grid. */
  pixelIndexAt(xArcsec: number, yArcsec: number): number {
    const i = Math.round(this.n / 2 - xArcsec / this.cellArcsec);
    const j = Math.round(yArcsec / this.cellArcsec + this.n / 2);
    if (i < 0 || j < 0 || i >= this.n || j >= this.n) return -1;
    return j * this.n + i;
  }

  /** Images of a point source at β [arcsec] within the grid (cached per trace). */
  pointImages(betaXArcsec: number, betaYArcsec: number): PointImages {
    const key = `${betaXArcsec},${betaYArcsec}`;
    const hit = this.pointCache.get(key);
    if (hit) return hit;
    const images = findPointImages(this.requireTraced(), this.ensureNodeGrid(), betaXArcsec, betaYArcsec);
    if (this.pointCache.size > 256) this.pointCache.clear();
    this.pointCache.set(key, images);
    return images;
  }

  /** Add flux × |μ| of each image of a point source into the pixel holding it. */
  depositPointSource(betaXArcsec: number, betaYArcsec: number, fluxJy: number, out: Float64Array): void {
    const im = this.pointImages(betaXArcsec, betaYArcsec);
    for (let k = 0; k < im.xArcsec.length; k++) {
      const p = this.pixelIndexAt(im.xArcsec[k], im.yArcsec[k]);
      if (p >= 0) out[p] += fluxJy * Math.abs(im.magnification[k]);
    }
  }

  /** Pixels flagged as crossed by a critical curve in the last trace (1) or not (0). */
  get criticalPixels(): Readonly<Uint8Array> {
    return this.criticalFlag;
  }

  private requireTraced(): Lens {
    if (!this.lens) throw new Error("RayTracePlan: call trace(lens) before rendering");
    return this.lens;
  }

  /** Node grid at pixel corners: node (r, c) at x = (N/2 − c + ½)Δ, y = (r − N/2 − ½)Δ. */
  private ensureNodeArrays(): { x: Float64Array; y: Float64Array } {
    if (!this.nodeX || !this.nodeY) {
      const nn = this.n + 1;
      this.nodeX = new Float64Array(nn * nn);
      this.nodeY = new Float64Array(nn * nn);
      const d = this.cellArcsec;
      for (let r = 0; r < nn; r++) {
        for (let c = 0; c < nn; c++) {
          this.nodeX[r * nn + c] = (this.n / 2 - c + 0.5) * d;
          this.nodeY[r * nn + c] = (r - this.n / 2 - 0.5) * d;
        }
      }
    }
    return { x: this.nodeX, y: this.nodeY };
  }

  private ensureNodeGrid(): NodeGrid {
    if (this.nodeGrid) return this.nodeGrid;
    const { x, y } = this.ensureNodeArrays();
    const nn = this.n + 1;
    const bx = new Float64Array(nn * nn);
    const by = new Float64Array(nn * nn);
    this.requireTraced().sourcePositions(x, y, bx, by, nn * nn);
    this.nodeGrid = {
      nNodes: nn,
      x0Arcsec: x[0],
      y0Arcsec: y[0],
      stepArcsec: this.cellArcsec,
      betaX: bx,
      betaY: by,
    };
    return this.nodeGrid;
  }

  private detScratch = new Float64Array(0);

  private flagCriticalPixels(lens: Lens): void {
    const { x, y } = this.ensureNodeArrays();
    const nn = this.n + 1;
    if (this.detScratch.length !== nn * nn) this.detScratch = new Float64Array(nn * nn);
    const det = this.detScratch;
    lens.jacobian(x, y, det, null, null, nn * nn);
    const n = this.n;
    for (let j = 0; j < n; j++) {
      for (let i = 0; i < n; i++) {
        const a = det[j * nn + i];
        const b = det[j * nn + i + 1];
        const c = det[(j + 1) * nn + i];
        const d = det[(j + 1) * nn + i + 1];
        const pos = (a > 0 ? 1 : 0) + (b > 0 ? 1 : 0) + (c > 0 ? 1 : 0) + (d > 0 ? 1 : 0);
        this.criticalFlag[j * n + i] = pos > 0 && pos < 4 ? 1 : 0;
      }
    }
  }

  /**
   * Region to refine, written to refineList: the flagged pixels, their 8 neighbours, and every
   * pixel connected to them through pixels brighter than `floor` (with those pixels' neighbours).
   * Why a whole region: uniform sub-sampling of a smooth image is very accurate in total because
   * the midpoint errors of neighbouring pixels cancel; refining part of an image leaves an
   * uncancelled O(h²) error along the border of the refined part, unless that border lies where
   * the image is faint. Returns the number of pixels.
   */
  private growRefineRegion(floor: number): number {
    const n = this.n;
    const mark = this.refineMark; // 1 = flagged seed, 2 = in the region
    const pixMax = this.pixelMax;
    const list = this.refineList;
    let count = 0;
    for (let p = 0; p < this.nPixels; p++) {
      if (mark[p] === 1) {
        mark[p] = 3; // seed already in the region
        list[count++] = p;
      }
    }
    for (let head = 0; head < count; head++) {
      const p = list[head];
      if (mark[p] !== 3 && !(pixMax[p] > floor)) continue; // faint non-seed: do not expand
      const i = p % n;
      const j = (p - i) / n;
      for (let jj = j - 1; jj <= j + 1; jj++) {
        if (jj < 0 || jj >= n) continue;
        for (let ii = i - 1; ii <= i + 1; ii++) {
          if (ii < 0 || ii >= n) continue;
          const q = jj * n + ii;
          if (mark[q] >= 2) continue;
          mark[q] = 2;
          list[count++] = q;
        }
      }
    }
    return count;
  }

  /** Re-sample the listed pixels with (s·r)² sub-rays each and overwrite their values. */
  private refinePixels(lens: Lens, evaluate: BrightnessFunction, count: number, out: Float64Array): void {
    const sf = this.supersample * this.refineFactor;
    const m = sf * sf;
    // 1. trace the refined rays of pixels not yet cached, in one batch
    let missing = 0;
    for (let t = 0; t < count; t++) if (this.fineBlock[this.refineList[t]] < 0) missing++;
    if (missing > 0) {
      const start = this.fineCount;
      this.growFine((start + missing) * m);
      const d = this.cellArcsec;
      const half = this.n / 2;
      let block = start;
      for (let t = 0; t < count; t++) {
        const p = this.refineList[t];
        if (this.fineBlock[p] >= 0) continue;
        this.fineBlock[p] = block;
        const i = p % this.n;
        const j = (p - i) / this.n;
        const xc = (half - i) * d;
        const yc = (j - half) * d;
        const base = block * m;
        for (let sj = 0; sj < sf; sj++) {
          for (let si = 0; si < sf; si++) {
            this.fineX[base + sj * sf + si] = xc + ((si + 0.5) / sf - 0.5) * d;
            this.fineY[base + sj * sf + si] = yc + ((sj + 0.5) / sf - 0.5) * d;
          }
        }
        block++;
      }
      const off = start * m;
      const len = missing * m;
      lens.sourcePositions(
        this.fineX.subarray(off, off + len),
        this.fineY.subarray(off, off + len),
        this.fineBetaX.subarray(off, off + len),
        this.fineBetaY.subarray(off, off + len),
        len,
      );
      this.fineCount = start + missing;
    }
    // 2. gather the refined β of the listed pixels contiguously, evaluate once, reduce
    const total = count * m;
    if (this.gatherX.length < total) {
      const cap = Math.max(total, 2 * this.gatherX.length);
      this.gatherX = new Float64Array(cap);
      this.gatherY = new Float64Array(cap);
      this.gatherV = new Float64Array(cap);
    }
    const gx = this.gatherX;
    const gy = this.gatherY;
    const fbx = this.fineBetaX;
    const fby = this.fineBetaY;
    for (let t = 0; t < count; t++) {
      const src = this.fineBlock[this.refineList[t]] * m;
      const dst = t * m;
      for (let k = 0; k < m; k++) {
        gx[dst + k] = fbx[src + k];
        gy[dst + k] = fby[src + k];
      }
    }
    evaluate(this.gatherX, this.gatherY, this.gatherV, total);
    const scale = this.pixelAreaArcsec2 / m;
    for (let t = 0; t < count; t++) {
      let sum = 0;
      const base = t * m;
      for (let k = 0; k < m; k++) sum += this.gatherV[base + k];
      out[this.refineList[t]] = sum * scale;
    }
  }

  private growFine(needed: number): void {
    if (this.fineX.length >= needed) return;
    const cap = Math.max(needed, 2 * this.fineX.length);
    const grow = (a: Float64Array) => {
      const b = new Float64Array(cap);
      b.set(a);
      return b;
    };
    this.fineX = grow(this.fineX);
    this.fineY = grow(this.fineY);
    this.fineBetaX = grow(this.fineBetaX);
    this.fineBetaY = grow(this.fineBetaY);
  }
}
