/**
 * Adaptive source mesh: a Delaunay triangulation of source-plane points (the traced centres of a
 * subset of the masked image pixels, so that the node density follows the magnification), with
 * linear (barycentric) interpolation inside each triangle.
 *
 * The triangulation is built here by the Bowyer–Watson algorithm: points are inserted one at a
 * time into a large enclosing ("super") triangle; the triangle holding the new point is found by
 * a visibility walk, the cavity of triangles whose circumcircle contains the point is grown from
 * it through the neighbour links, and re-triangulated as a fan around the point. The super
 * triangle is kept: a point that lands in a triangle with a super vertex is outside the mesh.
 * The four corners of the (slightly enlarged) bounding box are added as nodes so that every traced
 * ray of the masked pixels lies inside the mesh.
 *
 * Robustness: coordinates are normalised to the unit box before the predicates; points closer
 * than 1e-10 of the box to an earlier point are dropped; a cavity that is not star-shaped from
 * the new point (round-off in the in-circle test) is shrunk until it is.
 *
 * Reference: Bowyer 1981, Comput. J. 24, 162; Watson 1981, Comput. J. 24, 167 (insertion
 * algorithm); Devillers, Pion & Teillaud 2002, Int. J. Found. Comput. Sci. 13, 181 (visibility
 * walk); Dye & Warren 2005, ApJ 623, 31 and Vegetti & Koopmans 2009, MNRAS 392, 945 (adaptive
 * source grids that follow the magnification) — all from memory.
 */
import { InputError } from "../errors.js";
import type { SourceGrid } from "./pixelGrid.js";

/** Inradius of the super triangle in units of the normalised (unit) box. */
const SUPER_RADIUS = 100;
/**
 * Margin added around the bounding box of the rays, as a fraction of its size: the box corners
 * are mesh nodes, and real nodes must stay clear of the box edges so that those edges are
 * Delaunay edges with a super triangle of finite size (the circle through two corners and a
 * super vertex bulges into the box by ≈ 1/(8·SUPER_RADIUS) ≈ 1e-3 of its size).
 */
export const MESH_BOX_MARGIN = 0.02;

/** Bowyer–Watson Delaunay triangulation of up to `capacity` points, with neighbour links. */
export class DelaunayTriangulation {
  readonly capacity: number;
  /** Number of real points; super vertices are nPoints, nPoints + 1, nPoints + 2. */
  nPoints = 0;
  /** Normalised point coordinates (capacity + 3). */
  readonly px: Float64Array;
  readonly py: Float64Array;
  /** Vertices of triangle t: tv[3t … 3t+2], counter-clockwise. */
  readonly tv: Int32Array;
  /** tn[3t + k]: the triangle across the edge opposite vertex k (−1: none). */
  readonly tn: Int32Array;
  nTri = 0;
  private readonly mark: Int32Array;
  private stamp = 0;
  private readonly cavity: Int32Array;
  private readonly startOf: Int32Array;
  private readonly endOf: Int32Array;
  private readonly eA: Int32Array;
  private readonly eB: Int32Array;
  private readonly eN: Int32Array;
  private readonly eK: Int32Array;
  private last = 0;
  private walkSteps = 0;

  constructor(capacity: number) {
    this.capacity = capacity;
    this.px = new Float64Array(capacity + 3);
    this.py = new Float64Array(capacity + 3);
    const maxTri = 2 * capacity + 4;
    this.tv = new Int32Array(3 * maxTri);
    this.tn = new Int32Array(3 * maxTri);
    this.mark = new Int32Array(maxTri);
    this.cavity = new Int32Array(maxTri);
    this.eA = new Int32Array(maxTri + 2);
    this.eB = new Int32Array(maxTri + 2);
    this.eN = new Int32Array(maxTri + 2);
    this.eK = new Int32Array(maxTri + 2);
    this.startOf = new Int32Array(capacity + 3);
    this.endOf = new Int32Array(capacity + 3);
  }

  /**
   * Triangulate n points given in normalised coordinates (roughly the unit box; the caller
   * normalises). Points are inserted in the given order. Returns false if some point could not be
   * inserted (coincident with an earlier one); such points belong to no triangle.
   */
  triangulate(x: Float64Array, y: Float64Array, n: number): boolean {
    if (n > this.capacity) throw new Error(`DelaunayTriangulation: ${n} points exceed the capacity ${this.capacity}`);
    this.nPoints = n;
    const { px, py, tv, tn } = this;
    for (let i = 0; i < n; i++) {
      px[i] = x[i];
      py[i] = y[i];
    }
    // Super triangle: equilateral, inradius SUPER_RADIUS, centred on the unit box, counter-clockwise.
    for (let k = 0; k < 3; k++) {
      const ang = Math.PI / 2 + (2 * Math.PI * k) / 3;
      px[n + k] = 0.5 + 2 * SUPER_RADIUS * Math.cos(ang);
      py[n + k] = 0.5 + 2 * SUPER_RADIUS * Math.sin(ang);
    }
    tv[0] = n;
    tv[1] = n + 1;
    tv[2] = n + 2;
    tn[0] = tn[1] = tn[2] = -1;
    this.nTri = 1;
    this.last = 0;
    this.mark.fill(0);
    this.stamp = 0;
    let all = true;
    for (let i = 0; i < n; i++) if (!this.insert(i)) all = false;
    return all;
  }

  /** Orientation of (a, b, p): > 0 when p is to the left of a → b. */
  private orient(a: number, b: number, x: number, y: number): number {
    const { px, py } = this;
    return (px[b] - px[a]) * (y - py[a]) - (py[b] - py[a]) * (x - px[a]);
  }

  /** > 0 when (x, y) is inside the circumcircle of the counter-clockwise triangle t. */
  private inCircle(t: number, x: number, y: number): number {
    const { px, py, tv } = this;
    const a = tv[3 * t];
    const b = tv[3 * t + 1];
    const c = tv[3 * t + 2];
    const adx = px[a] - x;
    const ady = py[a] - y;
    const bdx = px[b] - x;
    const bdy = py[b] - y;
    const cdx = px[c] - x;
    const cdy = py[c] - y;
    return (
      (adx * adx + ady * ady) * (bdx * cdy - cdx * bdy) +
      (bdx * bdx + bdy * bdy) * (cdx * ady - adx * cdy) +
      (cdx * cdx + cdy * cdy) * (adx * bdy - bdx * ady)
    );
  }

  /**
   * Triangle containing (x, y) by a visibility walk from `start` (the edge tested first rotates
   * each step, which prevents the cycles a fixed order can fall into); −1 outside every triangle.
   */
  locate(x: number, y: number, start: number): number {
    const { tv, tn } = this;
    let t = start >= 0 && start < this.nTri ? start : 0;
    const maxSteps = 4 * this.nTri + 16;
    for (let step = 0; step < maxSteps; step++) {
      let moved = false;
      for (let kk = 0; kk < 3; kk++) {
        const k = (kk + step) % 3;
        const a = tv[3 * t + ((k + 1) % 3)];
        const b = tv[3 * t + ((k + 2) % 3)];
        if (this.orient(a, b, x, y) < 0) {
          const nb = tn[3 * t + k];
          if (nb < 0) return -1;
          t = nb;
          moved = true;
          break;
        }
      }
      if (!moved) {
        this.walkSteps += step;
        return t;
      }
    }
    // Round-off can make a walk circle; a scan of every triangle settles it.
    for (let s = 0; s < this.nTri; s++) {
      const a = tv[3 * s];
      const b = tv[3 * s + 1];
      const c = tv[3 * s + 2];
      if (this.orient(a, b, x, y) >= 0 && this.orient(b, c, x, y) >= 0 && this.orient(c, a, x, y) >= 0) return s;
    }
    return -1;
  }

  private insert(ip: number): boolean {
    const { px, py, tv, tn, mark, cavity } = this;
    const x = px[ip];
    const y = py[ip];
    const t0 = this.locate(x, y, this.last);
    if (t0 < 0) return false;
    for (let k = 0; k < 3; k++) {
      const v = tv[3 * t0 + k];
      const dx = px[v] - x;
      const dy = py[v] - y;
      if (dx * dx + dy * dy < 1e-20) return false; // coincident point
    }
    const stamp = ++this.stamp;
    let cav = 0;
    cavity[cav++] = t0;
    mark[t0] = stamp;
    for (let head = 0; head < cav; head++) {
      const c = cavity[head];
      for (let k = 0; k < 3; k++) {
        const nb = tn[3 * c + k];
        if (nb < 0 || mark[nb] === stamp) continue;
        if (this.inCircle(nb, x, y) > 0) {
          mark[nb] = stamp;
          cavity[cav++] = nb;
        }
      }
    }
    // Boundary edges of the cavity; each must see the new point on its inner side.
    let ne = 0;
    for (;;) {
      ne = 0;
      let ok = true;
      for (let q = 0; q < cav && ok; q++) {
        const c = cavity[q];
        if (mark[c] !== stamp) continue;
        for (let k = 0; k < 3; k++) {
          const nb = tn[3 * c + k];
          if (nb >= 0 && mark[nb] === stamp) continue;
          const a = tv[3 * c + ((k + 1) % 3)];
          const b = tv[3 * c + ((k + 2) % 3)];
          if (this.orient(a, b, x, y) <= 0) {
            ok = false;
            if (c !== t0) {
              mark[c] = -1; // drop this triangle from the cavity
            } else if (nb >= 0) {
              mark[nb] = stamp; // the point lies on an edge of its own triangle: take the other side too
              cavity[cav++] = nb;
            } else {
              return false;
            }
            break;
          }
          this.eA[ne] = a;
          this.eB[ne] = b;
          this.eN[ne] = nb;
          ne++;
        }
      }
      if (ok) break;
    }
    // Position of the back-link in each outer neighbour, before any slot is reused.
    for (let e = 0; e < ne; e++) {
      const nb = this.eN[e];
      this.eK[e] = -1;
      if (nb < 0) continue;
      const a = this.eA[e];
      const b = this.eB[e];
      for (let k = 0; k < 3; k++) {
        // the neighbour holds the edge as (b, a)
        if (tv[3 * nb + ((k + 1) % 3)] === b && tv[3 * nb + ((k + 2) % 3)] === a) this.eK[e] = k;
      }
    }
    // New triangles (a, b, p): reuse the cavity's slots, then append.
    let q = 0;
    for (let e = 0; e < ne; e++) {
      let s = -1;
      while (q < cav) {
        const c = cavity[q++];
        if (mark[c] === stamp) {
          s = c;
          break;
        }
      }
      if (s < 0) s = this.nTri++;
      mark[s] = 0;
      const a = this.eA[e];
      const b = this.eB[e];
      tv[3 * s] = a;
      tv[3 * s + 1] = b;
      tv[3 * s + 2] = ip;
      const nb = this.eN[e];
      tn[3 * s + 2] = nb;
      if (nb >= 0 && this.eK[e] >= 0) tn[3 * nb + this.eK[e]] = s;
      this.startOf[a] = s;
      this.endOf[b] = s;
      this.eN[e] = s; // remember the slot for the linking pass
    }
    for (let e = 0; e < ne; e++) {
      const s = this.eN[e];
      tn[3 * s] = this.startOf[this.eB[e]]; // across (b, p): the new triangle that starts at b
      tn[3 * s + 1] = this.endOf[this.eA[e]]; // across (p, a): the new triangle that ends at a
    }
    this.last = this.eN[0];
    return true;
  }
}

/**
 * The adaptive source mesh: Delaunay nodes at given source-plane points plus the four corners of
 * their enlarged bounding box, with barycentric interpolation. Buffers are sized once for up to
 * `maxPoints` points and reused by every `build`.
 */
export class AdaptiveSourceMesh implements SourceGrid {
  readonly kind = "adaptive" as const;
  readonly maxWeights = 3;
  readonly maxPoints: number;
  cellCount = 0;
  readonly xArcsec: Float64Array;
  readonly yArcsec: Float64Array;
  xMinArcsec = 0;
  xMaxArcsec = 0;
  yMinArcsec = 0;
  yMaxArcsec = 0;
  readonly triangulation: DelaunayTriangulation;
  private readonly order: Int32Array;
  private readonly sortKey: Float64Array;
  private readonly nx: Float64Array;
  private readonly ny: Float64Array;
  /** One triangle containing each vertex (for ring traversal). */
  private readonly vertexTri: Int32Array;
  /** Input index of each node but the corners (set by build, used by moveNodes). */
  private readonly kept: Int32Array;
  private nKept = 0;
  private nInput = -1;
  private lastFound = 0;

  constructor(maxPoints: number) {
    if (!Number.isInteger(maxPoints) || maxPoints < 3) {
      throw new InputError(`pixelised source: an adaptive mesh needs at least 3 nodes; got ${maxPoints}`);
    }
    this.maxPoints = maxPoints;
    const cap = maxPoints + 4;
    this.xArcsec = new Float64Array(cap);
    this.yArcsec = new Float64Array(cap);
    this.order = new Int32Array(maxPoints);
    this.sortKey = new Float64Array(maxPoints);
    this.nx = new Float64Array(cap);
    this.ny = new Float64Array(cap);
    this.vertexTri = new Int32Array(cap + 3);
    this.kept = new Int32Array(maxPoints);
    this.triangulation = new DelaunayTriangulation(cap);
  }

  /**
   * Build the mesh on n points (x, y) [arcsec] inside the box [xMin, xMax] × [yMin, yMax]
   * [arcsec] (the rays' bounding box), which is enlarged by MESH_BOX_MARGIN; its corners become
   * nodes. Nodes are numbered in order of increasing x (this keeps the regularisation matrix
   * banded), duplicates within 1e-10 of the box are dropped.
   */
  build(x: Float64Array, y: Float64Array, n: number, xMinArcsec: number, xMaxArcsec: number, yMinArcsec: number, yMaxArcsec: number): void {
    if (n > this.maxPoints) throw new Error(`AdaptiveSourceMesh: ${n} points exceed maxPoints ${this.maxPoints}`);
    if (!Number.isFinite(xMinArcsec + xMaxArcsec + yMinArcsec + yMaxArcsec)) {
      throw new InputError(`pixelised source: the traced rays have non-finite source positions; check the lens model`);
    }
    this.setBox(xMinArcsec, xMaxArcsec, yMinArcsec, yMaxArcsec);
    const sx = 1 / (this.xMaxArcsec - this.xMinArcsec);
    const sy = 1 / (this.yMaxArcsec - this.yMinArcsec);
    // Sort by x (typed-array sort of keys carrying the index in their low bits is not exact;
    // sort an index array with a comparator once per build — n log n, outside the hot loops).
    const order = this.order;
    for (let i = 0; i < n; i++) {
      order[i] = i;
      this.sortKey[i] = x[i];
    }
    const key = this.sortKey;
    const view = order.subarray(0, n);
    view.sort((a, b) => key[a] - key[b] || y[a] - y[b]);
    let k = 0;
    const tol = 1e-10;
    for (let r = 0; r < n; r++) {
      const i = order[r];
      const xn = (x[i] - this.xMinArcsec) * sx;
      const yn = (y[i] - this.yMinArcsec) * sy;
      if (!(xn > 0 && xn < 1 && yn > 0 && yn < 1)) continue; // outside the box (cannot happen for traced centres)
      let dup = false;
      for (let back = k - 1; back >= 0 && xn - this.nx[back] < tol; back--) {
        if (Math.abs(yn - this.ny[back]) < tol) {
          dup = true;
          break;
        }
      }
      if (dup) continue;
      this.nx[k] = xn;
      this.ny[k] = yn;
      this.xArcsec[k] = x[i];
      this.yArcsec[k] = y[i];
      this.kept[k] = i;
      k++;
    }
    this.nKept = k;
    this.nInput = n;
    // Box corners.
    const cx = [0, 1, 0, 1];
    const cy = [0, 0, 1, 1];
    for (let c = 0; c < 4; c++) {
      this.nx[k] = cx[c];
      this.ny[k] = cy[c];
      this.xArcsec[k] = cx[c] === 0 ? this.xMinArcsec : this.xMaxArcsec;
      this.yArcsec[k] = cy[c] === 0 ? this.yMinArcsec : this.yMaxArcsec;
      k++;
    }
    this.cellCount = k;
    this.triangulation.triangulate(this.nx, this.ny, k);
    const tri = this.triangulation;
    this.vertexTri.fill(-1);
    for (let t = 0; t < tri.nTri; t++) {
      for (let j = 0; j < 3; j++) this.vertexTri[tri.tv[3 * t + j]] = t;
    }
    this.lastFound = 0;
  }

  /** The box [arcsec] of build: the rays' box enlarged by MESH_BOX_MARGIN of its larger side. */
  private setBox(xMinArcsec: number, xMaxArcsec: number, yMinArcsec: number, yMaxArcsec: number): void {
    const w = Math.max(xMaxArcsec - xMinArcsec, yMaxArcsec - yMinArcsec, 1e-6);
    const m = MESH_BOX_MARGIN * w;
    this.xMinArcsec = xMinArcsec - m;
    this.xMaxArcsec = Math.max(xMaxArcsec, xMinArcsec + 1e-6) + m;
    this.yMinArcsec = yMinArcsec - m;
    this.yMaxArcsec = Math.max(yMaxArcsec, yMinArcsec + 1e-6) + m;
  }

  /**
   * Move the nodes to new positions of the points build was given (same n, same order; the
   * corners follow the new box) and keep every triangle: no re-triangulation. Why: a Delaunay
   * mesh rebuilt for each lens flips edges as the nodes move, and the mapping and the
   * regularisation, hence the evidence, jump by several units at each flip; with the topology
   * held they change continuously. Returns false — call build — when the point count differs, a
   * node leaves the box, or a triangle would turn over (zero or negative area).
   */
  moveNodes(x: Float64Array, y: Float64Array, n: number, xMinArcsec: number, xMaxArcsec: number, yMinArcsec: number, yMaxArcsec: number): boolean {
    if (n !== this.nInput || this.cellCount === 0) return false;
    if (!Number.isFinite(xMinArcsec + xMaxArcsec + yMinArcsec + yMaxArcsec)) return false;
    this.setBox(xMinArcsec, xMaxArcsec, yMinArcsec, yMaxArcsec);
    const sx = 1 / (this.xMaxArcsec - this.xMinArcsec);
    const sy = 1 / (this.yMaxArcsec - this.yMinArcsec);
    const tri = this.triangulation;
    const { px, py } = tri;
    for (let k = 0; k < this.nKept; k++) {
      const i = this.kept[k];
      const xn = (x[i] - this.xMinArcsec) * sx;
      const yn = (y[i] - this.yMinArcsec) * sy;
      if (!(xn > 0 && xn < 1 && yn > 0 && yn < 1)) return false;
      this.nx[k] = px[k] = xn;
      this.ny[k] = py[k] = yn;
      this.xArcsec[k] = x[i];
      this.yArcsec[k] = y[i];
    }
    // the corners keep their normalised positions (0 or 1); their sky positions follow the box
    for (let k = this.nKept; k < this.cellCount; k++) {
      this.xArcsec[k] = px[k] === 0 ? this.xMinArcsec : this.xMaxArcsec;
      this.yArcsec[k] = py[k] === 0 ? this.yMinArcsec : this.yMaxArcsec;
    }
    for (let t = 0; t < tri.nTri; t++) {
      const a = tri.tv[3 * t];
      const b = tri.tv[3 * t + 1];
      const c = tri.tv[3 * t + 2];
      if (!((px[b] - px[a]) * (py[c] - py[a]) - (py[b] - py[a]) * (px[c] - px[a]) > 0)) return false;
    }
    this.lastFound = 0;
    return true;
  }

  weightsAt(xArcsec: number, yArcsec: number, outIdx: Int32Array, outW: Float64Array): number {
    const xn = (xArcsec - this.xMinArcsec) / (this.xMaxArcsec - this.xMinArcsec);
    const yn = (yArcsec - this.yMinArcsec) / (this.yMaxArcsec - this.yMinArcsec);
    if (!(xn >= 0 && xn <= 1 && yn >= 0 && yn <= 1)) return 0;
    const tri = this.triangulation;
    const t = tri.locate(xn, yn, this.lastFound);
    if (t < 0) return 0;
    this.lastFound = t;
    const a = tri.tv[3 * t];
    const b = tri.tv[3 * t + 1];
    const c = tri.tv[3 * t + 2];
    const K = this.cellCount;
    if (a >= K || b >= K || c >= K) return 0; // a super triangle: outside the mesh
    const { px, py } = tri;
    // Barycentric coordinates are affine invariant, so the normalised coordinates serve.
    const det = (px[b] - px[a]) * (py[c] - py[a]) - (py[b] - py[a]) * (px[c] - px[a]);
    const wa = ((px[b] - xn) * (py[c] - yn) - (py[b] - yn) * (px[c] - xn)) / det;
    const wb = ((px[c] - xn) * (py[a] - yn) - (py[c] - yn) * (px[a] - xn)) / det;
    outIdx[0] = a;
    outW[0] = wa;
    outIdx[1] = b;
    outW[1] = wb;
    outIdx[2] = c;
    outW[2] = 1 - wa - wb;
    return 3;
  }

  /** ∫ of each node's hat function: one third of the area of every triangle it belongs to. */
  integrationWeights(out: Float64Array): void {
    const K = this.cellCount;
    out.fill(0, 0, K);
    const tri = this.triangulation;
    const sx = this.xMaxArcsec - this.xMinArcsec;
    const sy = this.yMaxArcsec - this.yMinArcsec;
    for (let t = 0; t < tri.nTri; t++) {
      const a = tri.tv[3 * t];
      const b = tri.tv[3 * t + 1];
      const c = tri.tv[3 * t + 2];
      if (a >= K || b >= K || c >= K) continue;
      const { px, py } = tri;
      const area = 0.5 * ((px[b] - px[a]) * (py[c] - py[a]) - (py[b] - py[a]) * (px[c] - px[a])) * sx * sy;
      out[a] += area / 3;
      out[b] += area / 3;
      out[c] += area / 3;
    }
  }

  /**
   * Neighbours of node i in counter-clockwise order around it; returns their number. Super
   * vertices (ids ≥ cellCount) appear for nodes on the hull. Returns 0 for a node in no triangle.
   */
  ring(i: number, out: Int32Array): number {
    const tri = this.triangulation;
    const start = this.vertexTri[i];
    if (start < 0) return 0;
    let t = start;
    let count = 0;
    do {
      let k = 0;
      while (tri.tv[3 * t + k] !== i) k++;
      // in (i, a, b) counter-clockwise, a precedes b around i; the next triangle shares (i, b)
      out[count++] = tri.tv[3 * t + ((k + 1) % 3)];
      t = tri.tn[3 * t + ((k + 1) % 3)];
      if (count > out.length - 1) break;
    } while (t >= 0 && t !== start);
    return count;
  }

  /**
   * Edges between two real nodes, each once: writes endpoints to outA/outB (capacity ≥ 3·cellCount)
   * and returns their number.
   */
  edges(outA: Int32Array, outB: Int32Array): number {
    const tri = this.triangulation;
    const K = this.cellCount;
    let ne = 0;
    for (let t = 0; t < tri.nTri; t++) {
      for (let k = 0; k < 3; k++) {
        const a = tri.tv[3 * t + ((k + 1) % 3)];
        const b = tri.tv[3 * t + ((k + 2) % 3)];
        if (a >= K || b >= K) continue;
        const nb = tri.tn[3 * t + k];
        if (nb >= 0 && nb < t) continue; // counted from the other side
        outA[ne] = a;
        outB[ne] = b;
        ne++;
      }
    }
    return ne;
  }
}

/**
 * min(cells, masked) masked pixels evenly spaced in raster order: their traced centres are the
 * mesh nodes, dense where the magnification is high.
 * @param maskedPixels pixel indices of the mask (raster order); @returns chosen pixel indices.
 */
export function selectMeshPixels(maskedPixels: Int32Array, cells: number): Int32Array {
  const nm = maskedPixels.length;
  if (!Number.isFinite(cells) || cells < 3) {
    throw new InputError(`pixelised source: cells = ${cells}; an adaptive mesh needs at least 3 cells`);
  }
  // evenly spaced in raster order, min(cells, nm) of them (a whole-number stride would take every
  // pixel whenever nm < 1.5 cells)
  const count = Math.min(Math.floor(cells), nm);
  const out = new Int32Array(count);
  for (let r = 0; r < count; r++) out[r] = maskedPixels[Math.floor((r * nm) / count)];
  return out;
}
