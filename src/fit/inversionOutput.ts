/**
 * Source-plane images of a pixelised reconstruction for FITS/PNG: the reconstruction (and its
 * 1σ) interpolated onto a regular grid centred on the source-plane origin, laid out as a model
 * grid (CONVENTIONS.md: column i at x = (N/2 − i)Δ, East to the left; row j at y = (j − N/2)Δ), so
 * that the fit driver writes it with the same offset WCS as the model images.
 * The σ map interpolates the nodes' σ with the same weights: exact at the nodes, an approximation
 * between them (the exact value would need the off-diagonal covariance).
 *
 * Reference: CONVENTIONS.md (model grids); the interpolation is that of the source grid.
 */
import { InputError } from "../errors.js";
import type { InversionPlan, InversionResult } from "./inversion.js";

/** A source-plane image in model-grid layout. */
export interface SourcePlaneImage {
  /** Pixels per side (even). */
  n: number;
  /** Pixel size [arcsec]. */
  cellArcsec: number;
  /** Surface brightness [Jy/arcsec²], n², 0 outside the source grid. */
  value: Float64Array;
  /** 1σ [Jy/arcsec²], n², 0 outside (null when the result has no σ). */
  sigma: Float64Array | null;
  /** 1 where the pixel centre lies inside the source grid. */
  coverage: Uint8Array;
}

/** Largest side of the source-plane image. */
const MAX_SIDE = 512;

/**
 * Resample the reconstruction of `result` (which must come from the plan's current lens).
 * @param options.n, options.cellArcsec default: a cell of half the mean node spacing and a side
 *   covering the grid's box around the origin (even, ≤ 512).
 */
export function sourcePlaneImage(
  plan: InversionPlan,
  result: InversionResult,
  options: { n?: number; cellArcsec?: number } = {},
): SourcePlaneImage {
  if (result.lensVersion !== plan.lensVersion) {
    throw new Error("sourcePlaneImage: the plan has moved to another lens since this result; resample before the next setLens");
  }
  const grid = plan.sourceGrid;
  const K = grid.cellCount;
  const reach = Math.max(Math.abs(grid.xMinArcsec), Math.abs(grid.xMaxArcsec), Math.abs(grid.yMinArcsec), Math.abs(grid.yMaxArcsec));
  const area = (grid.xMaxArcsec - grid.xMinArcsec) * (grid.yMaxArcsec - grid.yMinArcsec);
  let cell = options.cellArcsec ?? 0.5 * Math.sqrt(area / K);
  if (!(cell > 0) || !Number.isFinite(cell)) {
    throw new InputError(`source-plane image: cell = ${cell} arcsec; must be a positive number`);
  }
  let n = options.n ?? 2 * Math.ceil(reach / cell);
  if (options.n === undefined && n > MAX_SIDE) {
    n = MAX_SIDE;
    cell = (2 * reach) / n;
  }
  if (!Number.isInteger(n) || n < 2 || n % 2 !== 0) {
    throw new InputError(`source-plane image: n = ${n}; the side must be an even integer ≥ 2`);
  }
  const value = new Float64Array(n * n);
  const sigma = result.sigma ? new Float64Array(n * n) : null;
  const coverage = new Uint8Array(n * n);
  const idx = new Int32Array(grid.maxWeights);
  const w = new Float64Array(grid.maxWeights);
  for (let j = 0; j < n; j++) {
    const y = (j - n / 2) * cell;
    for (let i = 0; i < n; i++) {
      const x = (n / 2 - i) * cell;
      const m = grid.weightsAt(x, y, idx, w);
      if (m === 0) continue;
      let v = 0;
      let sg = 0;
      for (let t = 0; t < m; t++) {
        v += w[t] * result.s[idx[t]];
        if (result.sigma) sg += w[t] * result.sigma[idx[t]];
      }
      const p = j * n + i;
      value[p] = v;
      if (sigma) sigma[p] = sg;
      coverage[p] = 1;
    }
  }
  return { n, cellArcsec: cell, value, sigma, coverage };
}
