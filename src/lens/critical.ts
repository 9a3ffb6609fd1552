/**
 * Magnification maps, critical curves and caustics, the Einstein radius of a composite lens,
 * and the total magnification of a source.
 * Critical curves: marching squares (Lorensen & Cline 1987, 2D case) on the two eigenvalues of
 * the Jacobian, λ_t = 1 − κ − |γ| (its zero set is the tangential critical curve) and
 * λ_r = 1 − κ + |γ| (radial); det A = λ_t λ_r. Each edge crossing is first interpolated
 * linearly, then refined by a few regula-falsi steps on the exact λ, so the vertices lie on the
 * curve to ~1e-10″ and the polygon area is limited only by its chords (relative area deficit
 * ≈ ℓ²/(6R²) for chords ℓ on a curve of radius R). Caustics are the curves mapped through
 * β = θ − α. Einstein radius: sqrt(A_t/π), A_t the area inside the largest closed tangential
 * curve (CONVENTIONS.md). Saddle cells are resolved by the value at the cell centre.
 * Reference: Schneider, Ehlers & Falco (1992) §6.2 (critical curves, caustics; from memory).
 */
import type { AnalyticSource } from "../source/analytic.js";
import type { Lens } from "./lens.js";
import type { RayTracePlan } from "./raytrace.js";

/** A regular grid of sample points: node (i, j) at x = (N/2 − i)Δ, y = (j − N/2)Δ (CONVENTIONS.md). */
export interface GridSpec {
  n: number;
  cellArcsec: number;
}

/** A polyline [arcsec]; closed curves repeat no point (closure is implied by `closed`). */
export interface Polyline {
  xArcsec: number[];
  yArcsec: number[];
  closed: boolean;
}

export interface CriticalCurves {
  tangential: Polyline[];
  radial: Polyline[];
}

function gridPoints(g: GridSpec): { x: Float64Array; y: Float64Array } {
  const n = g.n;
  const x = new Float64Array(n * n);
  const y = new Float64Array(n * n);
  for (let j = 0; j < n; j++) {
    for (let i = 0; i < n; i++) {
      x[j * n + i] = (n / 2 - i) * g.cellArcsec;
      y[j * n + i] = (j - n / 2) * g.cellArcsec;
    }
  }
  return { x, y };
}

/** Signed magnification μ = 1/det A at the grid nodes (pixel centres), p = j·N + i. */
export function magnificationMap(lens: Lens, grid: GridSpec): Float64Array {
  const { x, y } = gridPoints(grid);
  const out = new Float64Array(grid.n * grid.n);
  lens.magnification(x, y, out);
  return out;
}

/** Convergence κ at the grid nodes. */
export function convergenceMap(lens: Lens, grid: GridSpec): Float64Array {
  const { x, y } = gridPoints(grid);
  const out = new Float64Array(grid.n * grid.n);
  lens.convergence(x, y, out);
  return out;
}

/** Tangential and radial critical curves of the lens sampled on a grid. */
export function criticalCurves(lens: Lens, grid: GridSpec): CriticalCurves {
  const { x, y } = gridPoints(grid);
  const m = grid.n * grid.n;
  const lt = new Float64Array(m);
  const lr = new Float64Array(m);
  lens.jacobian(x, y, null, lt, lr);
  return {
    tangential: contourZero(lt, grid, lens, "t"),
    radial: contourZero(lr, grid, lens, "r"),
  };
}

/** Map polylines through the lens equation β = θ − α (caustics from critical curves). */
export function mapToSourcePlane(lens: Lens, curves: Polyline[]): Polyline[] {
  return curves.map((c) => {
    const x = Float64Array.from(c.xArcsec);
    const y = Float64Array.from(c.yArcsec);
    const bx = new Float64Array(x.length);
    const by = new Float64Array(x.length);
    lens.sourcePositions(x, y, bx, by);
    return { xArcsec: Array.from(bx), yArcsec: Array.from(by), closed: c.closed };
  });
}

/** Caustics: the critical curves mapped to the source plane. */
export function caustics(lens: Lens, curves: CriticalCurves): CriticalCurves {
  return { tangential: mapToSourcePlane(lens, curves.tangential), radial: mapToSourcePlane(lens, curves.radial) };
}

/** Area enclosed by a closed polyline [arcsec²] (shoelace formula, absolute value). */
export function polygonArea(c: Polyline): number {
  const n = c.xArcsec.length;
  let s = 0;
  for (let k = 0; k < n; k++) {
    const k1 = (k + 1) % n;
    s += c.xArcsec[k] * c.yArcsec[k1] - c.xArcsec[k1] * c.yArcsec[k];
  }
  return Math.abs(s) / 2;
}

/**
 * Einstein radius sqrt(A_t/π) [arcsec] from the largest closed tangential critical curve, or
 * null if there is none (CONVENTIONS.md).
 */
export function einsteinRadiusFromCurves(curves: CriticalCurves): number | null {
  let best = 0;
  for (const c of curves.tangential) if (c.closed) best = Math.max(best, polygonArea(c));
  return best > 0 ? Math.sqrt(best / Math.PI) : null;
}

/**
 * Total magnification of a source: lensed flux / intrinsic flux, from a traced plan (its field
 * must contain every image).
 */
export function totalMagnification(plan: RayTracePlan, source: AnalyticSource, freqHz?: number): number {
  const img = new Float64Array(plan.nPixels);
  plan.render(source, img, freqHz);
  let s = 0;
  for (let p = 0; p < img.length; p++) s += img[p];
  return s / source.totalFluxJy(freqHz);
}

// ---------------------------------------------------------------------------------------------

/** Zero contour of f on the grid, as polylines with refined vertices. */
function contourZero(f: Float64Array, grid: GridSpec, lens: Lens, which: "t" | "r"): Polyline[] {
  const n = grid.n;
  const d = grid.cellArcsec;
  const nodeX = (i: number) => (n / 2 - i) * d;
  const nodeY = (j: number) => (j - n / 2) * d;
  const hEdge = (i: number, j: number) => j * n + i; // (i, j)–(i+1, j)
  const vEdge = (i: number, j: number) => n * n + j * n + i; // (i, j)–(i, j+1)
  const refiner = new EdgeRefiner(lens, which);
  const points = new Map<number, [number, number]>();
  const point = (edge: number): void => {
    if (points.has(edge)) return;
    let i: number;
    let j: number;
    let di = 0;
    let dj = 0;
    if (edge < n * n) {
      i = edge % n;
      j = (edge - i) / n;
      di = 1;
    } else {
      const e = edge - n * n;
      i = e % n;
      j = (e - i) / n;
      dj = 1;
    }
    const f0 = f[j * n + i];
    const f1 = f[(j + dj) * n + i + di];
    points.set(edge, refiner.refine(nodeX(i), nodeY(j), nodeX(i + di), nodeY(j + dj), f0, f1));
  };
  const segments: [number, number][] = [];
  for (let j = 0; j + 1 < n; j++) {
    for (let i = 0; i + 1 < n; i++) {
      const v0 = f[j * n + i];
      const v1 = f[j * n + i + 1];
      const v2 = f[(j + 1) * n + i + 1];
      const v3 = f[(j + 1) * n + i];
      if (!Number.isFinite(v0) || !Number.isFinite(v1) || !Number.isFinite(v2) || !Number.isFinite(v3)) continue;
      const s0 = v0 > 0;
      const s1 = v1 > 0;
      const s2 = v2 > 0;
      const s3 = v3 > 0;
      const e0 = hEdge(i, j); // v0–v1
      const e1 = vEdge(i + 1, j); // v1–v2
      const e2 = hEdge(i, j + 1); // v3–v2
      const e3 = vEdge(i, j); // v0–v3
      const crossed: number[] = [];
      if (s0 !== s1) crossed.push(e0);
      if (s1 !== s2) crossed.push(e1);
      if (s2 !== s3) crossed.push(e2);
      if (s3 !== s0) crossed.push(e3);
      if (crossed.length === 2) {
        segments.push([crossed[0], crossed[1]]);
      } else if (crossed.length === 4) {
        const centre = 0.25 * (v0 + v1 + v2 + v3) > 0;
        if (centre === s0) {
          // v0 and v2 connected through the centre: cut off v1 and v3
          segments.push([e0, e1], [e2, e3]);
        } else {
          segments.push([e3, e0], [e1, e2]);
        }
      }
    }
  }
  for (const [a, b] of segments) {
    point(a);
    point(b);
  }
  return chain(segments, points);
}

/** Join segments sharing edge points into polylines. */
function chain(segments: [number, number][], points: Map<number, [number, number]>): Polyline[] {
  const byEdge = new Map<number, number[]>();
  segments.forEach(([a, b], k) => {
    for (const e of [a, b]) {
      const l = byEdge.get(e);
      if (l) l.push(k);
      else byEdge.set(e, [k]);
    }
  });
  const used = new Uint8Array(segments.length);
  const lines: Polyline[] = [];
  const other = (k: number, e: number) => (segments[k][0] === e ? segments[k][1] : segments[k][0]);
  const nextSeg = (e: number, from: number): number => {
    for (const k of byEdge.get(e) ?? []) if (k !== from && !used[k]) return k;
    return -1;
  };
  for (let k0 = 0; k0 < segments.length; k0++) {
    if (used[k0]) continue;
    used[k0] = 1;
    const forward: number[] = [segments[k0][0], segments[k0][1]];
    // extend forward from the second end
    let closed = false;
    let seg = k0;
    let e = segments[k0][1];
    for (;;) {
      const k = nextSeg(e, seg);
      if (k < 0) break;
      used[k] = 1;
      e = other(k, e);
      seg = k;
      if (e === forward[0]) {
        closed = true;
        break;
      }
      forward.push(e);
    }
    if (!closed) {
      // extend backward from the first end
      seg = k0;
      e = segments[k0][0];
      for (;;) {
        const k = nextSeg(e, seg);
        if (k < 0) break;
        used[k] = 1;
        e = other(k, e);
        seg = k;
        forward.unshift(e);
      }
    }
    const xs: number[] = [];
    const ys: number[] = [];
    for (const edge of forward) {
      const p = points.get(edge)!;
      xs.push(p[0]);
      ys.push(p[1]);
    }
    lines.push({ xArcsec: xs, yArcsec: ys, closed });
  }
  return lines;
}

/** Regula-falsi refinement of a zero of λ_t or λ_r along a grid edge. */
class EdgeRefiner {
  private readonly x = new Float64Array(1);
  private readonly y = new Float64Array(1);
  private readonly v = new Float64Array(1);
  constructor(
    private readonly lens: Lens,
    private readonly which: "t" | "r",
  ) {}

  private evalAt(px: number, py: number): number {
    this.x[0] = px;
    this.y[0] = py;
    if (this.which === "t") this.lens.jacobian(this.x, this.y, null, this.v, null, 1);
    else this.lens.jacobian(this.x, this.y, null, null, this.v, 1);
    return this.v[0];
  }

  refine(x0: number, y0: number, x1: number, y1: number, f0: number, f1: number): [number, number] {
    // Illinois variant of regula falsi: keeps the bracket, converges superlinearly
    let a = 0;
    let b = 1;
    let fa = f0;
    let fb = f1;
    let t = fa / (fa - fb);
    let side = 0;
    for (let it = 0; it < 30; it++) {
      t = (a * fb - b * fa) / (fb - fa);
      const ft = this.evalAt(x0 + t * (x1 - x0), y0 + t * (y1 - y0));
      if (!Number.isFinite(ft)) break;
      if (Math.abs(ft) < 1e-13 || b - a < 1e-12) break;
      if (ft > 0 === fa > 0) {
        a = t;
        fa = ft;
        if (side === -1) fb *= 0.5;
        side = -1;
      } else {
        b = t;
        fb = ft;
        if (side === 1) fa *= 0.5;
        side = 1;
      }
    }
    return [x0 + t * (x1 - x0), y0 + t * (y1 - y0)];
  }
}
