/**
 * The forward FFT of a real, kernel-corrected model image placed on the fine grid, using the
 * two symmetries of real data to halve the work of the SIMD FFTs (fftWasm.ts via PlanMemory):
 * - Rows: two real rows a, b travel as one complex row z = a + i·b; after one FFT,
 *   A_k = (Z_k + conj Z_{n−k})/2 and B_k = (Z_k − conj Z_{n−k})/(2i), so the nonzero rows cost
 *   half as many FFTs.
 * - Columns: each transformed row is Hermitian (A_{n−k} = conj A_k), hence the 2D result obeys
 *   G[ky][nfx − kx] = conj G[(nfy − ky) mod nfy][kx]: only columns 0 … nfx/2 are transformed,
 *   the others are copied from them.
 * Result: the fine grid holds Σ_{r,l} g[r][l] e^{−2πi(l·kx/nfx + r·ky/nfy)} (g the placed image),
 * as a full complex 2D FFT would.
 * The adjoint direction needs only the real part of a backward transform, which is the backward
 * transform of the Hermitian part H = (G + conj G(−k))/2: fold G onto its Hermitian part in
 * columns 0 … nfx/2, transform those columns, then two rows at a time (A + i·B of two
 * Hermitian rows transforms to a + i·b with a, b real).
 *
 * Reference: Brigham, The Fast Fourier Transform and its Applications (1988), §9.4 (two real
 * transforms with one complex FFT); Press et al., Numerical Recipes 3rd ed. (2007), §12.3.
 */
import type { PlanMemory } from "./planMemory.js";

/** Where the image goes on the fine grid and the kernel correction of every pixel. */
export interface RealImagePlacement {
  nx: number;
  ny: number;
  /**
   * Fine-grid column of image column i, fine-grid row of image row j; the rows must fill
   * [0, ny/2) and [nfy − ny/2, nfy) (pixel offsets centred on the phase centre, as NufftPlan
   * places them), since the rows in between are zeroed without looking.
   */
  fineColOfI: Int32Array;
  fineRowOfJ: Int32Array;
  /** Separable correction factors (the pixel value is multiplied by corrX[i]·corrY[j]). */
  corrX: Float64Array;
  corrY: Float64Array;
}

/**
 * Place image·corrX·corrY on the fine grid of `mem` (zero elsewhere) and transform it forward
 * in place. Requires mem.simd, nx and ny even, and every image row on a distinct fine row.
 * @param image real values, row-major ny × nx (any unit; the grid gets the same unit).
 * Reference: module comment.
 */
export function forwardRealImage(mem: PlanMemory, p: RealImagePlacement, image: Float64Array, nfx: number, nfy: number): void {
  const grid = mem.grid;
  const { nx, ny, fineColOfI, fineRowOfJ, corrX, corrY } = p;
  const rowLen = 2 * nfx;
  const half = ny / 2;
  // Rows with no image pixel stay zero.
  grid.fill(0, rowLen * half, rowLen * (nfy - half));
  for (let j = 0; j < ny; j += 2) {
    const ra = fineRowOfJ[j];
    const rb = fineRowOfJ[j + 1];
    const offA = rowLen * ra;
    grid.fill(0, offA, offA + rowLen);
    const cyA = corrY[j];
    const cyB = corrY[j + 1];
    const baseA = j * nx;
    const baseB = baseA + nx;
    for (let i = 0; i < nx; i++) {
      const f = offA + 2 * fineColOfI[i];
      grid[f] = image[baseA + i] * corrX[i] * cyA;
      grid[f + 1] = image[baseB + i] * corrX[i] * cyB;
    }
    mem.fftRows(ra, ra + 1, false);
    unpackPair(grid, offA, rowLen * rb, nfx);
  }
  mem.fftColumns(0, nfx / 2 + 1, false);
  mirrorColumns(grid, nfx, nfy);
}

/**
 * Split the FFT Z of a + i·b (at offZ) into A (written over Z) and B (at offB).
 * Reads Z_k and Z_{n−k} before writing either, so the update is in place.
 */
function unpackPair(grid: Float64Array, offZ: number, offB: number, n: number): void {
  const mask = n - 1;
  for (let k = 0; k <= n / 2; k++) {
    const km = (n - k) & mask;
    const zr = grid[offZ + 2 * k];
    const zi = grid[offZ + 2 * k + 1];
    const mr = grid[offZ + 2 * km];
    const mi = grid[offZ + 2 * km + 1];
    const ar = 0.5 * (zr + mr);
    const ai = 0.5 * (zi - mi);
    const br = 0.5 * (zi + mi);
    const bi = 0.5 * (mr - zr);
    grid[offZ + 2 * k] = ar;
    grid[offZ + 2 * k + 1] = ai;
    grid[offB + 2 * k] = br;
    grid[offB + 2 * k + 1] = bi;
    // A and B are Hermitian: the values at n − k are the conjugates.
    grid[offZ + 2 * km] = ar;
    grid[offZ + 2 * km + 1] = -ai;
    grid[offB + 2 * km] = br;
    grid[offB + 2 * km + 1] = -bi;
  }
}

/** G[ky][kx] = conj G[(nfy − ky) mod nfy][nfx − kx] for kx = nfx/2 + 1 … nfx − 1. */
function mirrorColumns(grid: Float64Array, nfx: number, nfy: number): void {
  const rowLen = 2 * nfx;
  const maskY = nfy - 1;
  for (let ky = 0; ky < nfy; ky++) {
    const dst = ky * rowLen;
    const src = ((nfy - ky) & maskY) * rowLen;
    for (let kx = nfx / 2 + 1; kx < nfx; kx++) {
      const s = src + 2 * (nfx - kx);
      grid[dst + 2 * kx] = grid[s];
      grid[dst + 2 * kx + 1] = -grid[s + 1];
    }
  }
}

/**
 * Real part of the backward transform of the fine grid of `mem` at the image pixels, times the
 * corrections: out[j·nx + i] = corrX[i]·corrY[j]·Re Σ_{ky,kx} G[ky][kx] e^{+2πi(l·kx/nfx + r·ky/nfy)}
 * with l = fineColOfI[i], r = fineRowOfJ[j]. The grid is overwritten. Requires mem.simd.
 * Reference: module comment.
 */
export function adjointRealImage(mem: PlanMemory, p: RealImagePlacement, out: Float64Array, nfx: number, nfy: number): void {
  const grid = mem.grid;
  const { nx, ny, fineColOfI, fineRowOfJ, corrX, corrY } = p;
  const rowLen = 2 * nfx;
  foldHermitian(grid, nfx, nfy);
  mem.fftColumns(0, nfx / 2 + 1, true);
  for (let j = 0; j < ny; j += 2) {
    const ra = fineRowOfJ[j];
    const offA = rowLen * ra;
    packPair(grid, offA, rowLen * fineRowOfJ[j + 1], nfx);
    mem.fftRows(ra, ra + 1, true);
    const cyA = corrY[j];
    const cyB = corrY[j + 1];
    const baseA = j * nx;
    const baseB = baseA + nx;
    for (let i = 0; i < nx; i++) {
      const f = offA + 2 * fineColOfI[i];
      out[baseA + i] = grid[f] * corrX[i] * cyA;
      out[baseB + i] = grid[f + 1] * corrX[i] * cyB;
    }
  }
}

/**
 * H[ky][kx] = (G[ky][kx] + conj G[−ky][−kx])/2 for kx = 0 … nfx/2 (indices mod the grid size).
 * Columns 0 and nfx/2 pair with themselves, so their entries are updated two at a time.
 */
function foldHermitian(grid: Float64Array, nfx: number, nfy: number): void {
  const rowLen = 2 * nfx;
  const maskY = nfy - 1;
  for (let ky = 0; ky < nfy; ky++) {
    const row = ky * rowLen;
    const mirror = ((nfy - ky) & maskY) * rowLen;
    for (let kx = 1; kx < nfx / 2; kx++) {
      const a = row + 2 * kx;
      const b = mirror + 2 * (nfx - kx);
      grid[a] = 0.5 * (grid[a] + grid[b]);
      grid[a + 1] = 0.5 * (grid[a + 1] - grid[b + 1]);
    }
  }
  for (const kx of [0, nfx / 2]) {
    for (let ky = 0; ky <= nfy / 2; ky++) {
      const a = ky * rowLen + 2 * kx;
      const b = ((nfy - ky) & maskY) * rowLen + 2 * kx;
      const re = 0.5 * (grid[a] + grid[b]);
      const im = 0.5 * (grid[a + 1] - grid[b + 1]);
      grid[a] = re;
      grid[a + 1] = im;
      grid[b] = re;
      grid[b + 1] = -im;
    }
  }
}

/**
 * Z = A + i·B over the whole row (at offA), from the Hermitian rows A (at offA) and B (at
 * offB), of which only entries 0 … n/2 are read: A_{n−k} = conj A_k, likewise B.
 */
function packPair(grid: Float64Array, offA: number, offB: number, n: number): void {
  for (let k = 0; k <= n / 2; k++) {
    const ar = grid[offA + 2 * k];
    const ai = grid[offA + 2 * k + 1];
    const br = grid[offB + 2 * k];
    const bi = grid[offB + 2 * k + 1];
    const km = (n - k) & (n - 1);
    // Z_{n−k} first: at k = 0 and k = n/2 the two slots coincide, and A, B are real there.
    grid[offA + 2 * km] = ar + bi;
    grid[offA + 2 * km + 1] = br - ai;
    grid[offA + 2 * k] = ar - bi;
    grid[offA + 2 * k + 1] = ai + br;
  }
}
