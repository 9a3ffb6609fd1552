/**
 * Regularisation matrices H of a pixelised source (the prior P(s) ∝ exp(−½ λ sᵀHs)), built as
 * H = RᵀR from a difference operator R, and stored sparse and symmetric.
 *
 * Regular grid (finite differences in node-index units, so H does not depend on the box):
 *   zeroth    R = I;
 *   gradient  one row s_a − s_b for every pair of horizontally or vertically adjacent nodes;
 *   curvature one row s_{a−1} − 2s_a + s_{a+1} for every node with both neighbours along x, and
 *             the same along y.
 * Boundary treatment: differences are taken only between nodes that exist (no terms across the
 * edge, no implicit zero outside), so gradient H annihilates constants and curvature H annihilates
 * constants, x and y ramps (and the bilinear xy). H is then singular; the inversion adds a small
 * zeroth-order term (see src/fit/inversion.ts).
 * Adaptive mesh:
 *   gradient  one row s_i − s_j for every Delaunay edge (the graph Laplacian; null space: constants);
 *   curvature one row s_i − Σ_j λ_ij s_j for every interior node, λ_ij its mean-value coordinates
 *             over its ring of neighbours, which reproduce linear functions exactly (null space:
 *             constants and linear ramps); nodes on the hull (the box corners) get no row.
 *
 * Reference: Suyu et al. 2006, MNRAS 371, 983, §2 and appendix A (zeroth/gradient/curvature forms on
 * regular grids; from memory — their boundary treatment differs, see above); Floater 2003,
 * Comput. Aided Geom. Des. 20, 19 (mean value coordinates; from memory).
 */
import type { AdaptiveSourceMesh } from "./mesh.js";

/** Orders of regularisation (the model file's `regularisation`). */
export type RegularisationOrder = "zeroth" | "gradient" | "curvature";

export const REGULARISATION_ORDERS: readonly RegularisationOrder[] = ["zeroth", "gradient", "curvature"];

/**
 * A sparse symmetric K × K matrix in CSR form with both triangles stored, assembled as a sum of
 * outer products r rᵀ of short rows. Buffers grow on demand and are reused by later assemblies.
 */
export class SparseSymmetric {
  size = 0;
  rowPtr = new Int32Array(1);
  col = new Int32Array(0);
  val = new Float64Array(0);
  private tRow = new Int32Array(0);
  private tCol = new Int32Array(0);
  private tVal = new Float64Array(0);
  private nTrip = 0;
  private band = new Float64Array(0);

  /** Number of stored non-zeros. */
  get nnz(): number {
    return this.rowPtr[this.size];
  }

  /** Start an assembly of a K × K matrix. */
  begin(size: number): void {
    this.size = size;
    this.nTrip = 0;
  }

  /** Add r rᵀ, r having m non-zeros (idx[t], coef[t]). */
  addOuter(idx: Int32Array, coef: Float64Array, m: number): void {
    this.reserve(this.nTrip + m * m);
    for (let a = 0; a < m; a++) {
      for (let b = 0; b < m; b++) {
        this.tRow[this.nTrip] = idx[a];
        this.tCol[this.nTrip] = idx[b];
        this.tVal[this.nTrip] = coef[a] * coef[b];
        this.nTrip++;
      }
    }
  }

  /** Add value at (i, j) only (the caller keeps symmetry). */
  add(i: number, j: number, value: number): void {
    this.reserve(this.nTrip + 1);
    this.tRow[this.nTrip] = i;
    this.tCol[this.nTrip] = j;
    this.tVal[this.nTrip] = value;
    this.nTrip++;
  }

  private reserve(n: number): void {
    if (this.tRow.length >= n) return;
    const cap = Math.max(n, 2 * this.tRow.length, 1024);
    const r = new Int32Array(cap);
    const c = new Int32Array(cap);
    const v = new Float64Array(cap);
    r.set(this.tRow.subarray(0, this.nTrip));
    c.set(this.tCol.subarray(0, this.nTrip));
    v.set(this.tVal.subarray(0, this.nTrip));
    this.tRow = r;
    this.tCol = c;
    this.tVal = v;
  }

  /** Sum duplicate triplets into CSR (rows sorted by column). */
  finish(): void {
    const K = this.size;
    const n = this.nTrip;
    if (this.rowPtr.length < K + 1) this.rowPtr = new Int32Array(K + 1);
    if (this.col.length < n) {
      this.col = new Int32Array(n);
      this.val = new Float64Array(n);
    }
    const ptr = this.rowPtr;
    ptr.fill(0, 0, K + 1);
    for (let t = 0; t < n; t++) ptr[this.tRow[t] + 1]++;
    for (let i = 0; i < K; i++) ptr[i + 1] += ptr[i];
    // scatter (ptr is advanced, then shifted back)
    for (let t = 0; t < n; t++) {
      const p = ptr[this.tRow[t]]++;
      this.col[p] = this.tCol[t];
      this.val[p] = this.tVal[t];
    }
    for (let i = K; i > 0; i--) ptr[i] = ptr[i - 1];
    ptr[0] = 0;
    // sort each row by column (insertion sort: rows are short) and merge duplicates in place
    let w = 0;
    let rowStart = 0;
    for (let i = 0; i < K; i++) {
      const a = rowStart;
      const b = ptr[i + 1];
      rowStart = b;
      for (let p = a + 1; p < b; p++) {
        const c = this.col[p];
        const v = this.val[p];
        let q = p - 1;
        while (q >= a && this.col[q] > c) {
          this.col[q + 1] = this.col[q];
          this.val[q + 1] = this.val[q];
          q--;
        }
        this.col[q + 1] = c;
        this.val[q + 1] = v;
      }
      const rowOut = w;
      for (let p = a; p < b; p++) {
        if (w > rowOut && this.col[w - 1] === this.col[p]) this.val[w - 1] += this.val[p];
        else {
          this.col[w] = this.col[p];
          this.val[w] = this.val[p];
          w++;
        }
      }
      ptr[i] = rowOut;
    }
    ptr[K] = w;
  }

  /** Σ_i H_ii. */
  trace(): number {
    let s = 0;
    for (let i = 0; i < this.size; i++) {
      for (let p = this.rowPtr[i]; p < this.rowPtr[i + 1]; p++) if (this.col[p] === i) s += this.val[p];
    }
    return s;
  }

  /** out = H x. */
  multiply(x: Float64Array, out: Float64Array): void {
    for (let i = 0; i < this.size; i++) {
      let s = 0;
      for (let p = this.rowPtr[i]; p < this.rowPtr[i + 1]; p++) s += this.val[p] * x[this.col[p]];
      out[i] = s;
    }
  }

  /** xᵀ H x. */
  quadratic(x: Float64Array): number {
    let s = 0;
    for (let i = 0; i < this.size; i++) {
      let r = 0;
      for (let p = this.rowPtr[i]; p < this.rowPtr[i + 1]; p++) r += this.val[p] * x[this.col[p]];
      s += x[i] * r;
    }
    return s;
  }

  /** dense[i·K + j] += scale·H_ij (dense is K × K row-major). */
  addToDense(dense: Float64Array, scale: number): void {
    const K = this.size;
    for (let i = 0; i < K; i++) {
      for (let p = this.rowPtr[i]; p < this.rowPtr[i + 1]; p++) dense[i * K + this.col[p]] += scale * this.val[p];
    }
  }

  /** Largest |i − j| over the stored entries. */
  bandwidth(): number {
    let bw = 0;
    for (let i = 0; i < this.size; i++) {
      for (let p = this.rowPtr[i]; p < this.rowPtr[i + 1]; p++) bw = Math.max(bw, Math.abs(this.col[p] - i));
    }
    return bw;
  }

  /**
   * log det(H + shift·I) by a banded Cholesky factorisation (cost K·bw²). Returns NaN when the
   * shifted matrix is not positive definite.
   * Reference: Golub & Van Loan, Matrix Computations, 4th ed., §4.3.5 (band Cholesky; from memory).
   */
  logDetShifted(shift: number): number {
    const K = this.size;
    const bw = this.bandwidth();
    const w = bw + 1;
    if (this.band.length < K * w) this.band = new Float64Array(K * w);
    const L = this.band;
    L.fill(0, 0, K * w);
    // row i holds columns i − bw … i at offsets 0 … bw
    for (let i = 0; i < K; i++) {
      for (let p = this.rowPtr[i]; p < this.rowPtr[i + 1]; p++) {
        const j = this.col[p];
        if (j <= i) L[i * w + (j - i + bw)] += this.val[p];
      }
      L[i * w + bw] += shift;
    }
    let logDet = 0;
    for (let i = 0; i < K; i++) {
      const j0 = Math.max(0, i - bw);
      for (let j = j0; j <= i; j++) {
        let s = L[i * w + (j - i + bw)];
        const m0 = Math.max(j0, j - bw);
        for (let m = m0; m < j; m++) s -= L[i * w + (m - i + bw)] * L[j * w + (m - j + bw)];
        if (j === i) {
          if (!(s > 0)) return NaN;
          const d = Math.sqrt(s);
          L[i * w + bw] = d;
          logDet += 2 * Math.log(d);
        } else {
          L[i * w + (j - i + bw)] = s / L[j * w + bw];
        }
      }
    }
    return logDet;
  }
}

const ONE = new Float64Array([1]);

/**
 * H of a regular side × side grid (node id b·side + a) into `out`.
 * Reference: see the module comment.
 */
export function regularGridRegularisation(side: number, order: RegularisationOrder, out: SparseSymmetric): void {
  const K = side * side;
  out.begin(K);
  const idx = new Int32Array(3);
  const coef = new Float64Array(3);
  if (order === "zeroth") {
    for (let i = 0; i < K; i++) {
      idx[0] = i;
      out.addOuter(idx, ONE, 1);
    }
  } else if (order === "gradient") {
    coef[0] = 1;
    coef[1] = -1;
    for (let b = 0; b < side; b++) {
      for (let a = 0; a < side; a++) {
        const i = b * side + a;
        if (a + 1 < side) {
          idx[0] = i;
          idx[1] = i + 1;
          out.addOuter(idx, coef, 2);
        }
        if (b + 1 < side) {
          idx[0] = i;
          idx[1] = i + side;
          out.addOuter(idx, coef, 2);
        }
      }
    }
  } else {
    coef[0] = 1;
    coef[1] = -2;
    coef[2] = 1;
    for (let b = 0; b < side; b++) {
      for (let a = 0; a < side; a++) {
        const i = b * side + a;
        if (a >= 1 && a + 1 < side) {
          idx[0] = i - 1;
          idx[1] = i;
          idx[2] = i + 1;
          out.addOuter(idx, coef, 3);
        }
        if (b >= 1 && b + 1 < side) {
          idx[0] = i - side;
          idx[1] = i;
          idx[2] = i + side;
          out.addOuter(idx, coef, 3);
        }
      }
    }
  }
  out.finish();
}

/** Scratch of meshRegularisation, reused between calls. */
export class MeshRegularisationScratch {
  edgeA = new Int32Array(0);
  edgeB = new Int32Array(0);
  ring = new Int32Array(256);
  idx = new Int32Array(257);
  coef = new Float64Array(257);
}

/**
 * H of an adaptive mesh into `out` (see the module comment for the forms).
 * Reference: Floater 2003 (mean value coordinates: w_j = (tan(α_{j−1}/2) + tan(α_j/2)) / |v_j − v_i|,
 * α_j the angle at v_i between v_j and v_{j+1}; from memory).
 */
export function meshRegularisation(
  mesh: AdaptiveSourceMesh,
  order: RegularisationOrder,
  out: SparseSymmetric,
  scratch: MeshRegularisationScratch = new MeshRegularisationScratch(),
): void {
  const K = mesh.cellCount;
  out.begin(K);
  const { idx, coef } = scratch;
  if (order === "zeroth") {
    for (let i = 0; i < K; i++) {
      idx[0] = i;
      out.addOuter(idx, ONE, 1);
    }
  } else if (order === "gradient") {
    if (scratch.edgeA.length < 3 * K + 6) {
      scratch.edgeA = new Int32Array(3 * K + 6);
      scratch.edgeB = new Int32Array(3 * K + 6);
    }
    const ne = mesh.edges(scratch.edgeA, scratch.edgeB);
    coef[0] = 1;
    coef[1] = -1;
    for (let e = 0; e < ne; e++) {
      idx[0] = scratch.edgeA[e];
      idx[1] = scratch.edgeB[e];
      out.addOuter(idx, coef, 2);
    }
  } else {
    const x = mesh.xArcsec;
    const y = mesh.yArcsec;
    const ring = scratch.ring;
    for (let i = 0; i < K; i++) {
      const m = mesh.ring(i, ring);
      let hull = m < 3;
      for (let t = 0; t < m && !hull; t++) if (ring[t] >= K) hull = true;
      if (hull) continue;
      let wsum = 0;
      for (let t = 0; t < m; t++) {
        const jPrev = ring[(t + m - 1) % m];
        const j = ring[t];
        const jNext = ring[(t + 1) % m];
        const ex = x[j] - x[i];
        const ey = y[j] - y[i];
        const r = Math.hypot(ex, ey);
        const w = (tanHalfAngle(x[jPrev] - x[i], y[jPrev] - y[i], ex, ey) + tanHalfAngle(ex, ey, x[jNext] - x[i], y[jNext] - y[i])) / r;
        coef[t + 1] = w;
        wsum += w;
      }
      idx[0] = i;
      coef[0] = 1;
      for (let t = 0; t < m; t++) {
        idx[t + 1] = ring[t];
        coef[t + 1] = -coef[t + 1] / wsum;
      }
      out.addOuter(idx, coef, m + 1);
    }
  }
  out.finish();
}

/** tan(α/2) of the angle α between vectors a and b: |a × b| / (|a||b| + a·b). */
function tanHalfAngle(ax: number, ay: number, bx: number, by: number): number {
  const cross = Math.abs(ax * by - ay * bx);
  const dot = ax * bx + ay * by;
  return cross / (Math.hypot(ax, ay) * Math.hypot(bx, by) + dot);
}

/**
 * Factor c turning the index-unit H of a regular grid with square cells of side Δ [arcsec] into
 * one in sky units, c·sᵀHs ≈ ∫ S² d²β (zeroth, c = Δ²), ∫ |∇S|² d²β (gradient, c = 1: scale-free in
 * two dimensions), ∫ [(∂²S/∂x²)² + (∂²S/∂y²)²] d²β (curvature, c = Δ⁻²), for S [Jy/arcsec²] and β
 * [arcsec]. Why: the box of a regular grid follows the traced rays, so Δ changes with the lens;
 * with index units the prior, and hence the evidence, would change with Δ and favour some lenses.
 * Reference: finite-difference approximations of the integrals (common practice, no source).
 */
export function physicalRegularisationScale(order: RegularisationOrder, cellArcsec: number): number {
  if (order === "zeroth") return cellArcsec * cellArcsec;
  if (order === "curvature") return 1 / (cellArcsec * cellArcsec);
  return 1;
}
