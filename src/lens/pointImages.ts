/**
 * Images of a point source: candidates by triangle mapping of an image-plane grid (each grid
 * cell split into two triangles, mapped through β = θ − α; a triangle whose image contains the
 * source position holds an image), then Newton iteration on the lens equation with the
 * analytic Jacobian, θ ← θ + A⁻¹(β_s − β(θ)). Only converged roots are kept, which drops the
 * spurious candidates of cells straddling a singular centre (where β jumps); duplicates from
 * neighbouring triangles are merged. The magnification is μ = 1/det A at the root.
 * Reference: Schneider, Ehlers & Falco (1992) §11.2 (triangle mapping, from memory);
 * Keeton (2001) (Newton refinement of image positions, common practice).
 */
import type { Lens } from "./lens.js";

/** Images of one point source. */
export interface PointImages {
  xArcsec: number[];
  yArcsec: number[];
  /** Signed magnification of each image. */
  magnification: number[];
}

/** A regular node grid in the image plane with its source-plane map. */
export interface NodeGrid {
  /** Nodes per side. */
  nNodes: number;
  /** x of node column c: x0 − c·step; y of node row r: y0 + r·step [arcsec]. */
  x0Arcsec: number;
  y0Arcsec: number;
  stepArcsec: number;
  /** β at each node, index r·nNodes + c [arcsec]. */
  betaX: Float64Array;
  betaY: Float64Array;
}

/** Scratch for the Newton steps (one point at a time). */
class NewtonWorkspace {
  x = new Float64Array(1);
  y = new Float64Array(1);
  bx = new Float64Array(1);
  by = new Float64Array(1);
  hxx = new Float64Array(1);
  hxy = new Float64Array(1);
  hyy = new Float64Array(1);
}

const NEWTON_MAX_ITER = 30;
/** Lens-equation residual accepted as converged [arcsec]. */
const NEWTON_TOL_ARCSEC = 1e-10;

/**
 * Find the images of a point source at (betaX, betaY) [arcsec] inside a node grid.
 * @returns positions [arcsec] and signed magnifications
 */
export function findPointImages(lens: Lens, grid: NodeGrid, betaXArcsec: number, betaYArcsec: number): PointImages {
  const { nNodes, x0Arcsec, y0Arcsec, stepArcsec, betaX, betaY } = grid;
  const ws = new NewtonWorkspace();
  const out: PointImages = { xArcsec: [], yArcsec: [], magnification: [] };
  const mergeDist = 1e-6 * stepArcsec;
  for (let r = 0; r + 1 < nNodes; r++) {
    for (let c = 0; c + 1 < nNodes; c++) {
      const i00 = r * nNodes + c;
      const i10 = i00 + 1; // next column
      const i01 = i00 + nNodes; // next row
      const i11 = i01 + 1;
      // two triangles per cell: (00, 10, 11) and (00, 11, 01)
      for (let tri = 0; tri < 2; tri++) {
        const ib = tri === 0 ? i10 : i11;
        const ic = tri === 0 ? i11 : i01;
        const w = barycentric(
          betaX[i00], betaY[i00], betaX[ib], betaY[ib], betaX[ic], betaY[ic], betaXArcsec, betaYArcsec,
        );
        if (w === null) continue;
        // image-plane start: the same barycentric weights on the triangle's nodes
        const cb = tri === 0 ? c + 1 : c + 1;
        const rb = tri === 0 ? r : r + 1;
        const cc = tri === 0 ? c + 1 : c;
        const rc = r + 1;
        const xs = x0Arcsec - stepArcsec * (w[0] * c + w[1] * cb + w[2] * cc);
        const ys = y0Arcsec + stepArcsec * (w[0] * r + w[1] * rb + w[2] * rc);
        const root = newton(lens, ws, xs, ys, betaXArcsec, betaYArcsec, 2 * stepArcsec);
        if (root === null) continue;
        let dup = false;
        for (let k = 0; k < out.xArcsec.length; k++) {
          if (Math.abs(out.xArcsec[k] - root[0]) < mergeDist && Math.abs(out.yArcsec[k] - root[1]) < mergeDist) dup = true;
        }
        if (dup) continue;
        out.xArcsec.push(root[0]);
        out.yArcsec.push(root[1]);
        out.magnification.push(root[2]);
      }
    }
  }
  return out;
}

/** Barycentric weights of P in triangle ABC, or null if outside (with a tiny tolerance). */
function barycentric(
  ax: number, ay: number, bx: number, by: number, cx: number, cy: number, px: number, py: number,
): [number, number, number] | null {
  const det = (bx - ax) * (cy - ay) - (cx - ax) * (by - ay);
  if (det === 0 || !Number.isFinite(det)) return null;
  const wb = ((px - ax) * (cy - ay) - (cx - ax) * (py - ay)) / det;
  const wc = ((bx - ax) * (py - ay) - (px - ax) * (by - ay)) / det;
  const wa = 1 - wb - wc;
  const eps = -1e-9; // accept points on shared edges (duplicates are merged later)
  if (wa < eps || wb < eps || wc < eps) return null;
  return [wa, wb, wc];
}

/** Newton on β(θ) = β_s from (x, y); returns [x, y, μ] if it converges within maxMove of the start. */
function newton(
  lens: Lens,
  ws: NewtonWorkspace,
  xStart: number,
  yStart: number,
  bxT: number,
  byT: number,
  maxMove: number,
): [number, number, number] | null {
  let x = xStart;
  let y = yStart;
  for (let it = 0; it < NEWTON_MAX_ITER; it++) {
    ws.x[0] = x;
    ws.y[0] = y;
    lens.sourcePositions(ws.x, ws.y, ws.bx, ws.by, 1);
    lens.hessian(ws.x, ws.y, ws.hxx, ws.hxy, ws.hyy, 1);
    const a11 = 1 - ws.hxx[0];
    const a22 = 1 - ws.hyy[0];
    const a12 = -ws.hxy[0];
    const det = a11 * a22 - a12 * a12;
    const rx = bxT - ws.bx[0];
    const ry = byT - ws.by[0];
    if (!Number.isFinite(det) || det === 0) return null;
    if (Math.abs(rx) < NEWTON_TOL_ARCSEC && Math.abs(ry) < NEWTON_TOL_ARCSEC) {
      return [x, y, 1 / det];
    }
    x += (a22 * rx - a12 * ry) / det;
    y += (a11 * ry - a12 * rx) / det;
    if (Math.abs(x - xStart) > maxMove || Math.abs(y - yStart) > maxMove) return null;
  }
  return null;
}
