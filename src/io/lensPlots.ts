/**
 * Figures of a lens model: convergence and magnification maps with the critical curves drawn
 * over them, and the source plane with the caustics and the source components (centre marker,
 * and for extended components the ellipse of their circularised size: semi-axes s/√q along
 * the position angle and s·√q across it, CONVENTIONS.md ξ). Orientation as every sky map of
 * the project: North up, East left, offsets in arcsec (CONVENTIONS.md).
 * These functions draw; they compute no physics: maps and curves come from src/lens.
 * Reference: Schneider, Ehlers & Falco 1992, §6.2 (critical curves and caustics; from memory).
 */
import { gridExtentArcsec, imagePanel, type ImageMarker, type ImageOverlayLine } from "./imagePanel.js";
import { composeFigure } from "./layout.js";

/** A polyline [arcsec]; a closed one is drawn back to its first point. */
export interface CurveLike {
  xArcsec: ArrayLike<number>;
  yArcsec: ArrayLike<number>;
  closed: boolean;
}

/** Tangential and radial curves (critical curves or caustics). */
export interface CurveSet {
  tangential: CurveLike[];
  radial: CurveLike[];
}

/** A source component as drawn in the source plane. */
export interface SourceShape {
  xArcsec: number;
  yArcsec: number;
  /** Circularised size (Sérsic r_eff, Gaussian σ) [arcsec]; 0 for a point source. */
  sizeArcsec: number;
  /** Axis ratio b/a in (0, 1]. */
  q: number;
  /** Position angle of the major axis, North through East [deg]. */
  paDeg: number;
  label: string;
}

/** A map on a CONVENTIONS.md model grid (N×N, column 0 East, row 0 South). */
export interface GridMap {
  data: Float64Array;
  n: number;
  cellArcsec: number;
}

const TANGENTIAL_COLOUR = "#ffffff";
const RADIAL_COLOUR = "#ff9f1c";

/** All curves of a list joined into one overlay line, broken by NaN, closed ones closed. */
function joinCurves(curves: CurveLike[]): { x: number[]; y: number[] } {
  const x: number[] = [];
  const y: number[] = [];
  for (const c of curves) {
    const m = Math.min(c.xArcsec.length, c.yArcsec.length);
    if (m === 0) continue;
    if (x.length > 0) {
      x.push(NaN);
      y.push(NaN);
    }
    for (let k = 0; k < m; k++) {
      x.push(c.xArcsec[k]);
      y.push(c.yArcsec[k]);
    }
    if (c.closed) {
      x.push(c.xArcsec[0]);
      y.push(c.yArcsec[0]);
    }
  }
  return { x, y };
}

function curveOverlays(set: CurveSet, kind: "critical curve" | "caustic", colours = [TANGENTIAL_COLOUR, RADIAL_COLOUR]): ImageOverlayLine[] {
  const lines: ImageOverlayLine[] = [];
  const t = joinCurves(set.tangential);
  if (t.x.length > 0) lines.push({ xArcsec: t.x, yArcsec: t.y, colour: colours[0], widthPx: 1.5, label: `tangential ${kind}` });
  const r = joinCurves(set.radial);
  if (r.x.length > 0) lines.push({ xArcsec: r.x, yArcsec: r.y, colour: colours[1], widthPx: 1.5, dash: "4 2", label: `radial ${kind}` });
  return lines;
}

/**
 * Convergence map, shown as log₁₀ κ (κ spans decades near a cusp), with the critical curves.
 * @param kappa κ on the grid (dimensionless)
 * @returns a complete SVG document
 */
export function convergenceFigure(kappa: GridMap, critical: CurveSet, title?: string): string {
  const m = kappa.n * kappa.n;
  const logK = new Float64Array(m);
  for (let p = 0; p < m; p++) logK[p] = kappa.data[p] > 0 ? Math.log10(kappa.data[p]) : NaN;
  const panel = imagePanel({
    data: logK, nx: kappa.n, ny: kappa.n, extentArcsec: gridExtentArcsec(kappa.n, kappa.cellArcsec),
    title: "convergence", unit: "log₁₀ κ", colourMap: "viridis", vmin: -1.5, vmax: 1,
    lines: curveOverlays(critical, "critical curve"), mapWidthPx: 380,
  });
  return composeFigure([panel], { title });
}

/**
 * Signed magnification μ = 1/det A (negative parity in blue), clipped to ±`clip` for display,
 * with the critical curves where |μ| diverges.
 * @returns a complete SVG document
 */
export function magnificationFigure(mu: GridMap, critical: CurveSet, title?: string, clip = 10): string {
  const panel = imagePanel({
    data: mu.data, nx: mu.n, ny: mu.n, extentArcsec: gridExtentArcsec(mu.n, mu.cellArcsec),
    title: `magnification μ (colours clipped at ±${clip})`, unit: "μ", colourMap: "coolwarm", vmin: -clip, vmax: clip,
    lines: curveOverlays(critical, "critical curve", ["#000000", "#2b8a3e"]), mapWidthPx: 380,
  });
  return composeFigure([panel], { title });
}

/** Points of the ellipse of a source shape (closed by repeating the first point). */
export function sourceEllipse(s: SourceShape, points = 72): { x: number[]; y: number[] } {
  const a = s.sizeArcsec / Math.sqrt(s.q);
  const b = s.sizeArcsec * Math.sqrt(s.q);
  const phi = (s.paDeg * Math.PI) / 180;
  // Major axis along (sin φ, cos φ), minor along (−cos φ, sin φ) (CONVENTIONS.md rotation).
  const mx = Math.sin(phi), my = Math.cos(phi);
  const nx = -Math.cos(phi), ny = Math.sin(phi);
  const x: number[] = [];
  const y: number[] = [];
  for (let k = 0; k <= points; k++) {
    const t = (2 * Math.PI * k) / points;
    const c = Math.cos(t), sn = Math.sin(t);
    x.push(s.xArcsec + a * c * mx + b * sn * nx);
    y.push(s.yArcsec + a * c * my + b * sn * ny);
  }
  return { x, y };
}

/**
 * The source plane: the intrinsic source brightness (if given), the caustics, and each source
 * component's centre and size ellipse.
 * @param brightness intrinsic source brightness [Jy/arcsec²] on a source-plane grid (all zero
 *   for point sources only); its grid sets the plotted extent
 * @returns a complete SVG document
 */
export function sourcePlaneFigure(caustics: CurveSet, sources: SourceShape[], brightness: GridMap, title?: string): string {
  const lines = curveOverlays(caustics, "caustic");
  const markers: ImageMarker[] = [];
  sources.forEach((s, k) => {
    markers.push({ xArcsec: s.xArcsec, yArcsec: s.yArcsec, shape: "cross", colour: "#ff4d6d", sizePx: 9, label: k === 0 ? "source centres" : undefined });
    if (s.sizeArcsec > 0) {
      const e = sourceEllipse(s);
      lines.push({ xArcsec: e.x, yArcsec: e.y, colour: "#ff4d6d", widthPx: 1.2, label: k === 0 || !lines.some((l) => l.label === "source size") ? "source size" : undefined });
    }
  });
  const panel = imagePanel({
    data: brightness.data, nx: brightness.n, ny: brightness.n,
    extentArcsec: gridExtentArcsec(brightness.n, brightness.cellArcsec),
    title: "source plane", unit: "Jy/arcsec²", colourMap: "grey", lines, markers, mapWidthPx: 380,
    xLabel: "β_x (East ←) [″]", yLabel: "β_y [″]",
  });
  return composeFigure([panel], { title });
}
