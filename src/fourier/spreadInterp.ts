/**
 * The NUFFT hot loops: per-point kernel tables, spreading of point values onto the periodic
 * fine grid (type 1) and interpolation from it (type 2). Shared by the main thread and the
 * workers, so everything here is plain functions over typed arrays: no plan objects, no
 * allocation.
 *
 * Layout: the fine grid is nfx × nfy complex values, interleaved (re, im), row-major with the
 * x (column) index fastest; both sizes are powers of two so wrapping is a bit mask. A point at
 * fine-grid coordinate X touches the `width` cells l0 … l0 + width − 1 with l0 = ⌈X − width/2⌉,
 * with weights φ((X − l)/(width/2)). Points are processed in sorted order; `perm[k]` is the
 * original index of sorted point k and `cell[k] = (l0y mod nfy)·nfx + (l0x mod nfx)`.
 * Kernel tables hold, per sorted point, width x-weights then width y-weights; they are filled
 * block by block from the points' fractions (kernelPoly.ts), so no per-point weights are stored.
 *
 * Reference: Barnett, Magland & af Klinteberg 2019 §2 (spreading/interpolation, eq. 2.5–2.7).
 */

import type { KernelEvaluator } from "./kernelPoly.js";

/** Kernel weights of a block of points (see fillKernelBlock). */
export type KernelTable = Float64Array;

/**
 * Start cells and kernel fractions of sorted points kStart … kEnd − 1.
 * @param u, v original-order coordinates [wavelengths]; scaleX = Δ·nfx, scaleY = Δ·nfy turn
 *   them into fine-grid coordinates (cycles per pixel × fine cells).
 * @param fracX, fracY receive s = l0 − (X − w/2) ∈ [0, 1) of sorted point k at k − fracBase
 *   (the variable of kernelPoly.ts).
 * @param cell if non-null receives the start cell of each sorted point (at index k).
 */
export function pointFractions(
  perm: Uint32Array,
  u: Float64Array,
  v: Float64Array,
  scaleX: number,
  scaleY: number,
  nfx: number,
  nfy: number,
  width: number,
  kStart: number,
  kEnd: number,
  fracX: Float64Array,
  fracY: Float64Array,
  fracBase: number,
  cell: Int32Array | null,
): void {
  const half = width / 2;
  const maskX = nfx - 1;
  const maskY = nfy - 1;
  for (let k = kStart; k < kEnd; k++) {
    const p = perm[k];
    // Same expression as sortPointsByBin, so the start cell agrees with the bin.
    const X = u[p] * scaleX - half;
    const Y = v[p] * scaleY - half;
    const l0x = Math.ceil(X);
    const l0y = Math.ceil(Y);
    fracX[k - fracBase] = l0x - X;
    fracY[k - fracBase] = l0y - Y;
    if (cell !== null) cell[k] = (l0y & maskY) * nfx + (l0x & maskX);
  }
}

/**
 * Start cells and kernel fractions of all points, as pointFractions with fracBase = 0 over the
 * whole range, visiting the points in their original order and writing each at its sorted
 * position k = inv[p] (sequential reads and scattered writes: much faster than scattered reads
 * for large point sets). The values are identical to pointFractions'.
 * @param inv sorted position of each original point (the inverse of perm).
 */
export function pointFractionsByOriginal(
  inv: Uint32Array,
  u: Float64Array,
  v: Float64Array,
  scaleX: number,
  scaleY: number,
  nfx: number,
  nfy: number,
  width: number,
  fracX: Float64Array,
  fracY: Float64Array,
  cell: Int32Array,
): void {
  const half = width / 2;
  const maskX = nfx - 1;
  const maskY = nfy - 1;
  const m = inv.length;
  for (let p = 0; p < m; p++) {
    const k = inv[p];
    const X = u[p] * scaleX - half;
    const Y = v[p] * scaleY - half;
    const l0x = Math.ceil(X);
    const l0y = Math.ceil(Y);
    fracX[k] = l0x - X;
    fracY[k] = l0y - Y;
    cell[k] = (l0y & maskY) * nfx + (l0x & maskX);
  }
}

/**
 * Kernel weights of sorted points kStart … kEnd − 1 from their fractions: point k gets its
 * width x-weights then width y-weights at (k − kStart)·2·width of `tab` (a small block table,
 * reused, so the weights stay in cache between this call and the spread/interpolate that reads
 * them). Fractions are read at k − fracBase.
 */
export function fillKernelBlock(
  evaluate: KernelEvaluator,
  width: number,
  fracX: Float64Array,
  fracY: Float64Array,
  fracBase: number,
  kStart: number,
  kEnd: number,
  tab: Float64Array,
): void {
  let off = 0;
  for (let k = kStart; k < kEnd; k++) {
    evaluate(fracX[k - fracBase], tab, off);
    evaluate(fracY[k - fracBase], tab, off + width);
    off += 2 * width;
  }
}

/**
 * Interpolate the fine grid at sorted points kStart … kEnd − 1 (type 2, step 3).
 * @param outRe, outIm written at perm[k] when `scatter`, else at k (sorted order).
 */
export function interpolate(
  grid: Float64Array,
  nfx: number,
  nfy: number,
  width: number,
  cell: Int32Array,
  perm: Uint32Array,
  tab: KernelTable,
  tabBase: number,
  kStart: number,
  kEnd: number,
  outRe: Float64Array,
  outIm: Float64Array,
  scatter: boolean,
): void {
  const maskX = nfx - 1;
  const maskY = nfy - 1;
  const shiftX = Math.log2(nfx) | 0;
  const w2 = 2 * width;
  const rowLen = 2 * nfx;
  for (let k = kStart; k < kEnd; k++) {
    const c = cell[k];
    const i0 = c & maskX;
    const j0 = c >>> shiftX;
    const tx = (k - tabBase) * w2;
    const ty = tx + width;
    let sRe = 0;
    let sIm = 0;
    if (i0 + width <= nfx) {
      for (let dy = 0; dy < width; dy++) {
        let g = ((j0 + dy) & maskY) * rowLen + 2 * i0;
        let rRe = 0;
        let rIm = 0;
        for (let dx = 0; dx < width; dx++) {
          const kv = tab[tx + dx];
          rRe += kv * grid[g];
          rIm += kv * grid[g + 1];
          g += 2;
        }
        const kv = tab[ty + dy];
        sRe += kv * rRe;
        sIm += kv * rIm;
      }
    } else {
      // The patch wraps across the grid's x edge: mask every column.
      for (let dy = 0; dy < width; dy++) {
        const row = ((j0 + dy) & maskY) * rowLen;
        let rRe = 0;
        let rIm = 0;
        for (let dx = 0; dx < width; dx++) {
          const kv = tab[tx + dx];
          const g = row + 2 * ((i0 + dx) & maskX);
          rRe += kv * grid[g];
          rIm += kv * grid[g + 1];
        }
        const kv = tab[ty + dy];
        sRe += kv * rRe;
        sIm += kv * rIm;
      }
    }
    const o = scatter ? perm[k] : k;
    outRe[o] = sRe;
    outIm[o] = sIm;
  }
}

/**
 * Spread point values onto the fine grid (type 1, step 1), adding to what is there.
 * @param cRe, cIm point values read at perm[k] when `gather`, else at k − valBase; cIm null =
 *   real values.
 */
export function spread(
  grid: Float64Array,
  nfx: number,
  nfy: number,
  width: number,
  cell: Int32Array,
  perm: Uint32Array,
  tab: KernelTable,
  tabBase: number,
  kStart: number,
  kEnd: number,
  cRe: Float64Array,
  cIm: Float64Array | null,
  gather: boolean,
  valBase = 0,
): void {
  const maskX = nfx - 1;
  const maskY = nfy - 1;
  const shiftX = Math.log2(nfx) | 0;
  const w2 = 2 * width;
  const rowLen = 2 * nfx;
  for (let k = kStart; k < kEnd; k++) {
    const c = cell[k];
    const i0 = c & maskX;
    const j0 = c >>> shiftX;
    const tx = (k - tabBase) * w2;
    const ty = tx + width;
    const src = gather ? perm[k] : k - valBase;
    const vRe = cRe[src];
    const vIm = cIm === null ? 0 : cIm[src];
    if (i0 + width <= nfx) {
      for (let dy = 0; dy < width; dy++) {
        const ky = tab[ty + dy];
        const aRe = ky * vRe;
        const aIm = ky * vIm;
        let g = ((j0 + dy) & maskY) * rowLen + 2 * i0;
        for (let dx = 0; dx < width; dx++) {
          const kv = tab[tx + dx];
          grid[g] += kv * aRe;
          grid[g + 1] += kv * aIm;
          g += 2;
        }
      }
    } else {
      for (let dy = 0; dy < width; dy++) {
        const ky = tab[ty + dy];
        const aRe = ky * vRe;
        const aIm = ky * vIm;
        const row = ((j0 + dy) & maskY) * rowLen;
        for (let dx = 0; dx < width; dx++) {
          const kv = tab[tx + dx];
          const g = row + 2 * ((i0 + dx) & maskX);
          grid[g] += kv * aRe;
          grid[g + 1] += kv * aIm;
        }
      }
    }
  }
}

/**
 * Spread two sets of values of the same points at once (two type-1 transforms sharing their
 * points, as in the gridded-statistics set-up): complex a onto gridA, real b onto gridB (whose
 * imaginary parts are left untouched), with each point's weights read once. Adds to the grids.
 * @param aRe, aIm, b point values read at perm[k] when `gather`, else at k − valBase.
 */
export function spreadPair(
  gridA: Float64Array,
  gridB: Float64Array,
  nfx: number,
  nfy: number,
  width: number,
  cell: Int32Array,
  perm: Uint32Array,
  tab: KernelTable,
  tabBase: number,
  kStart: number,
  kEnd: number,
  aRe: Float64Array,
  aIm: Float64Array,
  b: Float64Array,
  gather: boolean,
  valBase = 0,
): void {
  const maskX = nfx - 1;
  const maskY = nfy - 1;
  const shiftX = Math.log2(nfx) | 0;
  const w2 = 2 * width;
  const rowLen = 2 * nfx;
  for (let k = kStart; k < kEnd; k++) {
    const c = cell[k];
    const i0 = c & maskX;
    const j0 = c >>> shiftX;
    const tx = (k - tabBase) * w2;
    const ty = tx + width;
    const src = gather ? perm[k] : k - valBase;
    const vRe = aRe[src];
    const vIm = aIm[src];
    const vB = b[src];
    const wrap = i0 + width > nfx;
    for (let dy = 0; dy < width; dy++) {
      const ky = tab[ty + dy];
      const pRe = ky * vRe;
      const pIm = ky * vIm;
      const pB = ky * vB;
      const row = ((j0 + dy) & maskY) * rowLen;
      if (!wrap) {
        let g = row + 2 * i0;
        for (let dx = 0; dx < width; dx++) {
          const kv = tab[tx + dx];
          gridA[g] += kv * pRe;
          gridA[g + 1] += kv * pIm;
          gridB[g] += kv * pB;
          g += 2;
        }
      } else {
        // The patch wraps across the grid's x edge: mask every column.
        for (let dx = 0; dx < width; dx++) {
          const kv = tab[tx + dx];
          const g = row + 2 * ((i0 + dx) & maskX);
          gridA[g] += kv * pRe;
          gridA[g + 1] += kv * pIm;
          gridB[g] += kv * pB;
        }
      }
    }
  }
}

/**
 * Counting sort of points into 16 × 16 fine-cell bins (row-major bins), so that neighbouring
 * points touch neighbouring grid cells.
 * @param perm receives the original index of each sorted point.
 * @param counts scratch of length ≥ number of bins + 1.
 */
export function sortPointsByBin(
  u: Float64Array,
  v: Float64Array,
  scaleX: number,
  scaleY: number,
  nfx: number,
  nfy: number,
  width: number,
  perm: Uint32Array,
  binOf: Int32Array,
): void {
  const half = width / 2;
  const maskX = nfx - 1;
  const maskY = nfy - 1;
  const nbx = Math.ceil(nfx / 16);
  const nby = Math.ceil(nfy / 16);
  const counts = new Int32Array(nbx * nby + 1);
  const m = u.length;
  for (let p = 0; p < m; p++) {
    const ix = Math.ceil(u[p] * scaleX - half) & maskX;
    const iy = Math.ceil(v[p] * scaleY - half) & maskY;
    const b = (iy >> 4) * nbx + (ix >> 4);
    binOf[p] = b;
    counts[b + 1]++;
  }
  for (let b = 0; b < nbx * nby; b++) counts[b + 1] += counts[b];
  for (let p = 0; p < m; p++) perm[counts[binOf[p]]++] = p;
}
