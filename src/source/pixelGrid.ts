/**
 * Pixelised source grids: the interface every source-plane discretisation offers to the mapping
 * matrix and the regularisation, and the regular grid.
 *
 * A source is a set of K values s_i (surface brightness [Jy/arcsec²]) at nodes β_i; the
 * brightness at any source-plane point is a linear interpolation of the node values,
 * S(β) = Σ_i w_i(β) s_i, with weights that sum to 1 inside the grid and are all 0 outside it.
 * The regular grid has √K × √K nodes on square cells over a box set from the traced sub-rays
 * of the masked image pixels, with bilinear interpolation inside each square of four nodes; it is
 * surrounded by a ring of implicit nodes held at zero, so S fades linearly to 0 over one cell
 * beyond the box. Why the fade: without it a ray that crosses the box's edge as the lens moves
 * would switch from full weight on the edge nodes to none, a jump in the model image and in the
 * evidence that the finite-difference curvature turns into a spuriously tiny σ.
 *
 * Reference: Warren & Dye 2003, ApJ 590, 673 (semi-linear inversion on a regular source grid;
 * from memory); bilinear interpolation is common practice, no source.
 */
import { InputError } from "../errors.js";

/** Kinds of source grid (the model file's `grid` of a `pixelised` component). */
export type SourceGridKind = "regular" | "adaptive";

/** What the mapping matrix and the outputs need from a source-plane discretisation. */
export interface SourceGrid {
  readonly kind: SourceGridKind;
  /** Number of nodes K in use (values s_0 … s_{K−1}). */
  readonly cellCount: number;
  /** Largest number of non-zero interpolation weights of one point. */
  readonly maxWeights: number;
  /** Node positions [arcsec] (first cellCount entries valid; x East, y North). */
  readonly xArcsec: Float64Array;
  readonly yArcsec: Float64Array;
  /** Bounding box of the grid [arcsec]. */
  readonly xMinArcsec: number;
  readonly xMaxArcsec: number;
  readonly yMinArcsec: number;
  readonly yMaxArcsec: number;
  /**
   * Interpolation weights at (x, y) [arcsec]: writes node ids to outIdx and weights
   * (dimensionless, summing to 1 inside the grid, less in a regular grid's fade ring) to outW;
   * returns how many (0 when the point is outside).
   */
  weightsAt(xArcsec: number, yArcsec: number, outIdx: Int32Array, outW: Float64Array): number;
  /** out_i = ∫ w_i(β) d²β [arcsec²], so that ∫ S d²β = Σ_i out_i s_i (overwrites out[0 … K)). */
  integrationWeights(out: Float64Array): void;
}

/** Largest √K of a regular grid: the dense K × K normal matrix must fit in memory. */
export const MAX_GRID_CELLS = 6400;

/**
 * A regular √K × √K grid of nodes with bilinear interpolation. Node (a, b) (a along x, b along y)
 * has id b·side + a and lies at x = xMin + a·dx, y = yMin + b·dy; x increases with a (the
 * source-plane images for FITS are resampled by inversionOutput, which flips to East-left).
 * The box is set per lens by `setBounds` (no allocation).
 */
export class RegularSourceGrid implements SourceGrid {
  readonly kind = "regular" as const;
  readonly maxWeights = 4;
  /** Nodes per side. */
  readonly side: number;
  readonly cellCount: number;
  readonly xArcsec: Float64Array;
  readonly yArcsec: Float64Array;
  xMinArcsec = -1;
  xMaxArcsec = 1;
  yMinArcsec = -1;
  yMaxArcsec = 1;
  /** Node spacing [arcsec]. */
  dxArcsec = 1;
  dyArcsec = 1;

  /**
   * @param cells requested number of nodes; the grid has round(√cells)² of them (≥ 3 per side,
   *   so that curvature regularisation has interior nodes).
   */
  constructor(cells: number) {
    if (!Number.isFinite(cells) || cells < 9 || cells > MAX_GRID_CELLS) {
      throw new InputError(
        `pixelised source: cells = ${cells}; a regular grid needs between 9 and ${MAX_GRID_CELLS} cells (the K × K normal matrix is dense)`,
      );
    }
    this.side = Math.max(3, Math.round(Math.sqrt(cells)));
    this.cellCount = this.side * this.side;
    this.xArcsec = new Float64Array(this.cellCount);
    this.yArcsec = new Float64Array(this.cellCount);
    this.setBounds(-1, 1, -1, 1);
  }

  /**
   * Place the grid over a square holding [xMin, xMax] × [yMin, yMax] [arcsec] (same centre, side
   * the longer of the two widened by a relative 2e-9 so that the extreme rays fall inside).
   */
  setBounds(xMinArcsec: number, xMaxArcsec: number, yMinArcsec: number, yMaxArcsec: number): void {
    if (!(xMaxArcsec >= xMinArcsec && yMaxArcsec >= yMinArcsec) || !Number.isFinite(xMinArcsec + xMaxArcsec + yMinArcsec + yMaxArcsec)) {
      throw new InputError(
        `pixelised source: the traced rays span x ∈ [${xMinArcsec}, ${xMaxArcsec}]″, y ∈ [${yMinArcsec}, ${yMaxArcsec}]″; the lens model gives non-finite source positions`,
      );
    }
    // Square cells over the longer side, centred on the box: the regularisation compares
    // neighbours along x and y with equal weight, which is isotropic on the sky only if dx = dy.
    // (With a box that follows the rays, unequal sides would make the prior's anisotropy depend
    // on the lens's ellipticity and shear, and the evidence would favour some shapes for it.)
    const w = Math.max(xMaxArcsec - xMinArcsec, yMaxArcsec - yMinArcsec, 1e-6) * (1 + 2e-9);
    const xc = 0.5 * (xMinArcsec + xMaxArcsec);
    const yc = 0.5 * (yMinArcsec + yMaxArcsec);
    this.xMinArcsec = xc - 0.5 * w;
    this.xMaxArcsec = xc + 0.5 * w;
    this.yMinArcsec = yc - 0.5 * w;
    this.yMaxArcsec = yc + 0.5 * w;
    const n = this.side;
    this.dxArcsec = w / (n - 1);
    this.dyArcsec = this.dxArcsec;
    for (let b = 0; b < n; b++) {
      for (let a = 0; a < n; a++) {
        this.xArcsec[b * n + a] = this.xMinArcsec + a * this.dxArcsec;
        this.yArcsec[b * n + a] = this.yMinArcsec + b * this.dyArcsec;
      }
    }
  }

  weightsAt(xArcsec: number, yArcsec: number, outIdx: Int32Array, outW: Float64Array): number {
    const n = this.side;
    const fx = (xArcsec - this.xMinArcsec) / this.dxArcsec;
    const fy = (yArcsec - this.yMinArcsec) / this.dyArcsec;
    // inside the box or its fade ring (one cell of implicit zero nodes all round)
    if (!(fx > -1 && fx < n && fy > -1 && fy < n)) return 0;
    const a = Math.floor(fx);
    const b = Math.floor(fy);
    const tx = fx - a;
    const ty = fy - b;
    let m = 0;
    // corners (a, b), (a+1, b), (a, b+1), (a+1, b+1); those in the ring are zero and skipped
    for (let cb = 0; cb < 2; cb++) {
      const jb = b + cb;
      if (jb < 0 || jb >= n) continue;
      const wy = cb === 0 ? 1 - ty : ty;
      for (let ca = 0; ca < 2; ca++) {
        const ia = a + ca;
        if (ia < 0 || ia >= n) continue;
        const wv = (ca === 0 ? 1 - tx : tx) * wy;
        if (wv === 0) continue;
        outIdx[m] = jb * n + ia;
        outW[m] = wv;
        m++;
      }
    }
    return m;
  }

  /**
   * ∫ w_i d²β = Δ² for every node: each node's bilinear hat is whole, the edge nodes' reaching
   * into the fade ring (the exact integral of the interpolant with its fade).
   */
  integrationWeights(out: Float64Array): void {
    out.fill(this.dxArcsec * this.dyArcsec, 0, this.cellCount);
  }
}
