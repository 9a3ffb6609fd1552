/**
 * The normal equations of a pixelised-source inversion from its mapping matrix and the exact
 * dirty-beam lag tables (inversion.ts builds the inputs once per plan).
 *
 * Reference: Warren & Dye 2003, ApJ 590, 673 (the normal equations of the semi-linear inversion;
 * from memory); DESIGN.md (gridded statistics).
 */
import type { MappingMatrix } from "../source/mapping.js";

/** A group of terms sharing one primary beam. */
export interface BeamGroup {
  /** Beam at the masked pixels (null: 1). */
  beamMasked: Float64Array | null;
  /** Summed lag table of the group's terms. */
  lag: Float64Array;
  /** Summed D of the group's terms at the masked pixels. */
  dMasked: Float64Array;
}

/** Runs of consecutive masked pixels along image rows, with their lag-table offsets. */
export interface MaskRuns {
  runStart: Int32Array;
  runLen: Int32Array;
  runLagBase: Int32Array;
  /** Lag-table offset of each masked pixel. */
  lagOff: Int32Array;
}

/** Columns of M formed per pass (T is BLOCK × masked pixels). */
export const BLOCK = 8;

/**
 * M = Σ_g Lᵀ P_g B_g P_g L and b = Σ_g Lᵀ P_g D_g (see inversion.ts).
 * With A = P L and B the masked-pixel dirty-beam matrix split as B = U + Uᵀ − B(0)·I (U its upper
 * triangle with the diagonal, in mask order), M = X + Xᵀ − B(0)·AᵀA with X = Aᵀ U A: forming
 * U A costs half of B A, and AᵀA is a cheap sparse product.
 */
export function buildNormalEquations(
  K: number,
  n: number,
  mapping: MappingMatrix,
  groups: readonly BeamGroup[],
  runs: MaskRuns,
  M: Float64Array,
  b: Float64Array,
  T: Float64Array,
): number {
  const nm = mapping.rows;
  const { colPtr, colRow, colVal, rowPtr, col, val } = mapping;
  const { runStart, runLen, runLagBase, lagOff } = runs;
  const nRuns = runStart.length;
  const w = 2 * n - 1;
  const zeroLag = (n - 1) * w + (n - 1);
  M.fill(0, 0, K * K);
  b.fill(0, 0, K);
  for (const g of groups) {
    const P = g.beamMasked;
    const B = g.lag;
    const D = g.dMasked;
    const b0 = B[zeroLag];
    for (let c = 0; c < K; c++) {
      let s = 0;
      for (let p = colPtr[c]; p < colPtr[c + 1]; p++) {
        const r = colRow[p];
        s += colVal[p] * (P ? P[r] : 1) * D[r];
      }
      b[c] += s;
    }
    for (let c0 = 0; c0 < K; c0 += BLOCK) {
      const nb = Math.min(BLOCK, K - c0);
      T.fill(0, 0, nb * nm);
      // T_j = U (P L e_{c0+j}) at the masked pixels: T_j[p] = Σ_{q ≥ p} B(p − q) A_qc
      for (let j = 0; j < nb; j++) {
        const c = c0 + j;
        const tj = j * nm;
        for (let p = colPtr[c]; p < colPtr[c + 1]; p++) {
          const q = colRow[p];
          const coef = colVal[p] * (P ? P[q] : 1);
          const off = lagOff[q];
          for (let run = 0; run < nRuns; run++) {
            const start = runStart[run];
            if (start > q) break;
            const base = runLagBase[run] - off;
            const t0 = tj + start;
            const len = Math.min(runLen[run], q - start + 1);
            for (let e = 0; e < len; e++) T[t0 + e] += coef * B[base + e];
          }
        }
      }
      // X[a, c0 … c0+nb) = Σ_r A_ra T_j[r], stored in M (transposed and summed below)
      for (let r = 0; r < nm; r++) {
        const pr = P ? P[r] : 1;
        for (let p = rowPtr[r]; p < rowPtr[r + 1]; p++) {
          const wv = val[p] * pr;
          const o = col[p] * K + c0;
          for (let j = 0; j < nb; j++) M[o + j] += wv * T[j * nm + r];
        }
      }
    }
    // − B(0)·AᵀA, once per group (its rows are short)
    for (let r = 0; r < nm; r++) {
      const pr = P ? P[r] : 1;
      for (let p = rowPtr[r]; p < rowPtr[r + 1]; p++) {
        const wa = b0 * val[p] * pr * pr;
        const o = col[p] * K;
        for (let q = rowPtr[r]; q < rowPtr[r + 1]; q++) M[o + col[q]] -= 0.5 * wa * val[q];
      }
    }
  }
  // M ← X + Xᵀ (the −½B(0)AᵀA above is symmetric, so it is counted twice here)
  let tr = 0;
  for (let a = 0; a < K; a++) {
    M[a * K + a] *= 2;
    tr += M[a * K + a];
    for (let c = a + 1; c < K; c++) {
      const s = M[a * K + c] + M[c * K + a];
      M[a * K + c] = s;
      M[c * K + a] = s;
    }
  }
  return tr;
}
