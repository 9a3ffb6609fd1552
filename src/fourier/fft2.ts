/**
 * Two-dimensional complex FFT passes over an interleaved (re, im) row-major grid, built on the
 * 1D radix-4 fft.js transform (sizes must be powers of two). Row and column passes are
 * separate so that callers can skip rows that are known to be zero or not needed.
 * All scratch is allocated at construction; the passes allocate nothing.
 *
 * Sign conventions: `forward` is Σ_l x_l e^{−2πi lk/n}; `backward` is Σ_l x_l e^{+2πi lk/n}
 * UNSCALED (fft.js scales its inverse by 1/n; the factor n is put back here).
 *
 * Reference: Cooley & Tukey 1965, Math. Comp. 19, 297 (row–column decomposition of a 2D DFT).
 */
import FFT from "fft.js";

/** Columns gathered per pass: one cache line of complex doubles is 4 columns. */
const COLUMN_BLOCK = 8;

/** Column and row FFTs on an nCols × nRows interleaved complex grid. */
export class Fft2 {
  readonly nCols: number;
  readonly nRows: number;
  private readonly rowFft: FFT;
  private readonly colFft: FFT;
  private readonly rowIn: Float64Array;
  private readonly rowOut: Float64Array;
  private readonly block: number;
  private readonly colIn: Float64Array[];
  private readonly colOut: Float64Array[];

  constructor(nCols: number, nRows: number) {
    this.nCols = nCols;
    this.nRows = nRows;
    this.rowFft = new FFT(nCols);
    this.colFft = nRows === nCols ? this.rowFft : new FFT(nRows);
    this.rowIn = new Float64Array(2 * nCols);
    this.rowOut = new Float64Array(2 * nCols);
    this.block = Math.min(COLUMN_BLOCK, nCols);
    this.colIn = [];
    this.colOut = [];
    for (let b = 0; b < this.block; b++) {
      this.colIn.push(new Float64Array(2 * nRows));
      this.colOut.push(new Float64Array(2 * nRows));
    }
  }

  /** Scratch row (length 2·nCols) callers may fill before `rowFromScratch`. */
  get scratchRow(): Float64Array {
    return this.rowIn;
  }

  /** Transform the scratch row and write it into grid row `row`. */
  rowFromScratch(grid: Float64Array, row: number, inverse: boolean): void {
    this.transform1(this.rowFft, this.rowOut, this.rowIn, inverse, this.nCols);
    grid.set(this.rowOut, row * 2 * this.nCols);
  }

  /** Transform grid row `row` into the returned scratch row (grid unchanged). */
  rowToScratch(grid: Float64Array, row: number, inverse: boolean): Float64Array {
    const n2 = 2 * this.nCols;
    const off = row * n2;
    const rin = this.rowIn;
    for (let i = 0; i < n2; i++) rin[i] = grid[off + i];
    this.transform1(this.rowFft, this.rowOut, rin, inverse, this.nCols);
    return this.rowOut;
  }

  /** Transform grid row `row` in place. */
  rowInPlace(grid: Float64Array, row: number, inverse: boolean): void {
    const out = this.rowToScratch(grid, row, inverse);
    grid.set(out, row * 2 * this.nCols);
  }

  /** Transform every column in colStart … colEnd − 1 in place. */
  columns(grid: Float64Array, inverse: boolean, colStart = 0, colEnd = this.nCols): void {
    const nRows = this.nRows;
    const rowLen = 2 * this.nCols;
    for (let c0 = colStart; c0 < colEnd; c0 += this.block) {
      const nb = Math.min(this.block, colEnd - c0);
      // Gather nb adjacent columns in one sweep down the rows (contiguous reads per row).
      for (let r = 0; r < nRows; r++) {
        const g = r * rowLen + 2 * c0;
        const r2 = 2 * r;
        for (let b = 0; b < nb; b++) {
          const col = this.colIn[b];
          col[r2] = grid[g + 2 * b];
          col[r2 + 1] = grid[g + 2 * b + 1];
        }
      }
      for (let b = 0; b < nb; b++) this.transform1(this.colFft, this.colOut[b], this.colIn[b], inverse, nRows);
      for (let r = 0; r < nRows; r++) {
        const g = r * rowLen + 2 * c0;
        const r2 = 2 * r;
        for (let b = 0; b < nb; b++) {
          const col = this.colOut[b];
          grid[g + 2 * b] = col[r2];
          grid[g + 2 * b + 1] = col[r2 + 1];
        }
      }
    }
  }

  private transform1(fft: FFT, out: Float64Array, data: Float64Array, inverse: boolean, n: number): void {
    if (!inverse) {
      fft.transform(out, data);
      return;
    }
    // Unscaled backward transform as conj(FFT(conj x)): avoids fft.js's 1/n pass and our
    // ×n pass, and keeps one code path.
    const n2 = 2 * n;
    for (let i = 1; i < n2; i += 2) data[i] = -data[i];
    fft.transform(out, data);
    for (let i = 1; i < n2; i += 2) {
      out[i] = -out[i];
      data[i] = -data[i];
    }
  }
}
