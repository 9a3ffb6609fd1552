/**
 * The mapping matrix L from pixelised-source values s [Jy/arcsec²] to model-image pixels
 * [Jy/pixel]: a pixel holds the mean brightness over its s² sub-rays times its area
 * (CONVENTIONS.md), and the brightness at a ray is the grid's interpolation of s, so
 *   L_pi = Δ² / s² · Σ_{rays r of pixel p} w_i(β_r).
 * Rays outside the source grid contribute nothing. Only the masked pixels have rows; row r is
 * masked pixel maskedPixels[r]. Stored in CSR (by pixel) and CSC (by source cell), in typed
 * arrays sized once for the largest possible fill and reused by every `build`.
 *
 * Reference: Warren & Dye 2003, ApJ 590, 673 (the mapping matrix of the semi-linear inversion;
 * from memory); CONVENTIONS.md (pixel = mean brightness × area).
 */
import type { SourceGrid } from "./pixelGrid.js";

export class MappingMatrix {
  /** Number of rows (masked pixels). */
  readonly rows: number;
  /** Largest number of columns (source cells) any build may use. */
  readonly maxCols: number;
  /** Columns of the last build. */
  cols = 0;
  readonly rowPtr: Int32Array;
  readonly col: Int32Array;
  readonly val: Float64Array;
  readonly colPtr: Int32Array;
  readonly colRow: Int32Array;
  readonly colVal: Float64Array;
  /** Rays that fell outside the source grid in the last build. */
  raysOutside = 0;
  private readonly acc: Float64Array;
  private readonly seen: Int32Array;
  private stamp = 0;
  private readonly touched: Int32Array;
  private readonly wIdx: Int32Array;
  private readonly wVal: Float64Array;

  /**
   * @param rows masked pixels; @param raysPerPixel s²; @param maxWeights per ray (4 bilinear,
   * 3 barycentric); @param maxCols largest K.
   */
  constructor(rows: number, raysPerPixel: number, maxWeights: number, maxCols: number) {
    this.rows = rows;
    this.maxCols = maxCols;
    const perRow = Math.min(raysPerPixel * maxWeights, maxCols);
    const cap = rows * perRow;
    this.rowPtr = new Int32Array(rows + 1);
    this.col = new Int32Array(cap);
    this.val = new Float64Array(cap);
    this.colPtr = new Int32Array(maxCols + 1);
    this.colRow = new Int32Array(cap);
    this.colVal = new Float64Array(cap);
    this.acc = new Float64Array(maxCols);
    this.seen = new Int32Array(maxCols);
    this.touched = new Int32Array(perRow);
    this.wIdx = new Int32Array(maxWeights);
    this.wVal = new Float64Array(maxWeights);
  }

  /** Stored non-zeros. */
  get nnz(): number {
    return this.rowPtr[this.rows];
  }

  /**
   * Fill L from the traced sub-rays.
   * @param betaX, betaY source positions of all sub-rays [arcsec], pixel-major (ray p·s² + k)
   * @param raysPerPixel s²; @param maskedPixels pixel index of each row
   * @param pixelAreaArcsec2 Δ² [arcsec²]
   */
  build(
    grid: SourceGrid,
    betaX: Float64Array,
    betaY: Float64Array,
    raysPerPixel: number,
    maskedPixels: Int32Array,
    pixelAreaArcsec2: number,
  ): void {
    const K = grid.cellCount;
    if (K > this.maxCols) throw new Error(`MappingMatrix: ${K} source cells exceed the capacity ${this.maxCols}`);
    this.cols = K;
    const { acc, seen, touched, wIdx, wVal, rowPtr, col, val } = this;
    const scale = pixelAreaArcsec2 / raysPerPixel;
    let nnz = 0;
    let outside = 0;
    rowPtr[0] = 0;
    for (let r = 0; r < this.rows; r++) {
      const base = maskedPixels[r] * raysPerPixel;
      const stamp = ++this.stamp;
      let nt = 0;
      for (let k = 0; k < raysPerPixel; k++) {
        const m = grid.weightsAt(betaX[base + k], betaY[base + k], wIdx, wVal);
        if (m === 0) outside++;
        for (let t = 0; t < m; t++) {
          const c = wIdx[t];
          if (seen[c] !== stamp) {
            seen[c] = stamp;
            acc[c] = 0;
            touched[nt++] = c;
          }
          acc[c] += wVal[t];
        }
      }
      for (let t = 0; t < nt; t++) {
        const c = touched[t];
        const v = acc[c] * scale;
        if (v === 0) continue;
        col[nnz] = c;
        val[nnz] = v;
        nnz++;
      }
      rowPtr[r + 1] = nnz;
    }
    this.raysOutside = outside;
    // CSC by counting sort: rows come out in increasing order within each column.
    const colPtr = this.colPtr;
    colPtr.fill(0, 0, K + 1);
    for (let p = 0; p < nnz; p++) colPtr[col[p] + 1]++;
    for (let c = 0; c < K; c++) colPtr[c + 1] += colPtr[c];
    for (let r = 0; r < this.rows; r++) {
      for (let p = rowPtr[r]; p < rowPtr[r + 1]; p++) {
        const q = colPtr[col[p]]++;
        this.colRow[q] = r;
        this.colVal[q] = val[p];
      }
    }
    for (let c = K; c > 0; c--) colPtr[c] = colPtr[c - 1];
    colPtr[0] = 0;
  }

  /** out[r] = (L s)_r [Jy/pixel] for every row (masked pixel). */
  apply(s: Float64Array, out: Float64Array): void {
    const { rowPtr, col, val } = this;
    for (let r = 0; r < this.rows; r++) {
      let sum = 0;
      for (let p = rowPtr[r]; p < rowPtr[r + 1]; p++) sum += val[p] * s[col[p]];
      out[r] = sum;
    }
  }

  /** out[c] = (Lᵀ v)_c for every column. */
  applyTranspose(v: Float64Array, out: Float64Array): void {
    const { colPtr, colRow, colVal } = this;
    for (let c = 0; c < this.cols; c++) {
      let sum = 0;
      for (let p = colPtr[c]; p < colPtr[c + 1]; p++) sum += colVal[p] * v[colRow[p]];
      out[c] = sum;
    }
  }
}
