/**
 * Diagnostic figures of a visibility table: the uv coverage (each sampled (u, v) and its
 * Hermitian mirror (−u, −v), which the data also sample since V(−u, −v) = V(u, v)* for a real
 * sky) and the visibility amplitude against uv distance. Axes in kλ.
 *
 * Large tables (10⁵ points) would make a huge SVG of overlapping markers; points are therefore
 * thinned to one per figure cell of `THIN_CELLS` per axis span (lossless at the plotted
 * resolution, since markers closer than a fraction of a screen pixel overlap anyway).
 *
 * Reference: Thompson, Moran & Swenson 2017, §4.3 (Hermitian symmetry of the visibility of a
 * real brightness distribution) and ch. 5 (uv coverage); common practice for both plots.
 */
import { composeFigure } from "./layout.js";
import { scatterPanel, type Series } from "./xyPanel.js";

/** Thinning resolution: distinct positions kept per axis span. */
const THIN_CELLS = 1200;

/** Keep one point per (x, y) cell of size span/THIN_CELLS; returns the kept coordinates. */
function thin(x: ArrayLike<number>, y: ArrayLike<number>, xRange: [number, number], yRange: [number, number]): { x: Float64Array; y: Float64Array } {
  const n = Math.min(x.length, y.length);
  const sx = THIN_CELLS / Math.max(xRange[1] - xRange[0], 1e-300);
  const sy = THIN_CELLS / Math.max(yRange[1] - yRange[0], 1e-300);
  const seen = new Set<number>();
  const ox: number[] = [];
  const oy: number[] = [];
  for (let k = 0; k < n; k++) {
    const a = x[k];
    const b = y[k];
    if (!Number.isFinite(a) || !Number.isFinite(b)) continue;
    const cx = Math.floor((a - xRange[0]) * sx);
    const cy = Math.floor((b - yRange[0]) * sy);
    const key = cy * (THIN_CELLS + 2) + cx;
    if (seen.has(key)) continue;
    seen.add(key);
    ox.push(a);
    oy.push(b);
  }
  return { x: Float64Array.from(ox), y: Float64Array.from(oy) };
}

/**
 * uv-coverage figure: (u, v) and (−u, −v) in kλ on equal, symmetric axes.
 * @param uLambda, vLambda sampled baselines [wavelengths]
 * @param title figure title (e.g. the file name)
 * @returns a complete SVG document
 * Reference: see the module comment.
 */
export function uvCoverageFigure(uLambda: ArrayLike<number>, vLambda: ArrayLike<number>, title?: string): string {
  const n = Math.min(uLambda.length, vLambda.length);
  let maxK = 0;
  for (let k = 0; k < n; k++) maxK = Math.max(maxK, Math.abs(uLambda[k]), Math.abs(vLambda[k]));
  maxK = (maxK / 1e3) * 1.05 || 1;
  const u = new Float64Array(2 * n);
  const v = new Float64Array(2 * n);
  for (let k = 0; k < n; k++) {
    u[k] = uLambda[k] / 1e3;
    v[k] = vLambda[k] / 1e3;
    u[n + k] = -u[k];
    v[n + k] = -v[k];
  }
  const range: [number, number] = [-maxK, maxK];
  const pts = thin(u, v, range, range);
  const series: Series[] = [{ x: pts.x, y: pts.y, style: "points", sizePx: 2, colour: "#0072B2", label: "(u, v) and (−u, −v)" }];
  const panel = scatterPanel({
    series, xRange: range, yRange: range, xLabel: "u [kλ]", yLabel: "v [kλ]",
    widthPx: 460, heightPx: 460, legend: "top-right", title: "uv coverage",
  });
  return composeFigure([panel], { title });
}

/**
 * Amplitude against uv distance, with the weighted mean amplitude in bins of uv distance.
 * @param uLambda, vLambda [wavelengths]; reJy, imJy [Jy]; weight [Jy⁻²]
 * @param title figure title
 * @returns a complete SVG document
 * Reference: see the module comment.
 */
export function ampVsUvDistFigure(
  uLambda: ArrayLike<number>, vLambda: ArrayLike<number>, reJy: ArrayLike<number>, imJy: ArrayLike<number>,
  weight: ArrayLike<number>, title?: string,
): string {
  const n = uLambda.length;
  const r = new Float64Array(n);
  const amp = new Float64Array(n);
  let rMax = 0;
  let aMax = 0;
  for (let k = 0; k < n; k++) {
    r[k] = Math.hypot(uLambda[k], vLambda[k]) / 1e3;
    amp[k] = Math.hypot(reJy[k], imJy[k]);
    if (r[k] > rMax) rMax = r[k];
    if (amp[k] > aMax) aMax = amp[k];
  }
  rMax = rMax * 1.02 || 1;
  aMax = aMax * 1.05 || 1;
  const pts = thin(r, amp, [0, rMax], [0, aMax]);
  // Binned mean of the complex visibility's amplitude |Σ w V / Σ w| would average a resolved
  // source's phases away; the mean of the amplitudes is what the scatter shows, so bin that.
  const nBins = 24;
  const sw = new Float64Array(nBins);
  const swa = new Float64Array(nBins);
  for (let k = 0; k < n; k++) {
    const b = Math.min(nBins - 1, Math.floor((r[k] / rMax) * nBins));
    sw[b] += weight[k];
    swa[b] += weight[k] * amp[k];
  }
  const bx: number[] = [];
  const by: number[] = [];
  for (let b = 0; b < nBins; b++) {
    if (sw[b] > 0) {
      bx.push(((b + 0.5) * rMax) / nBins);
      by.push(swa[b] / sw[b]);
    }
  }
  const series: Series[] = [
    { x: pts.x, y: pts.y, style: "points", sizePx: 2, colour: "#56B4E9", label: "visibilities" },
    { x: bx, y: by, style: "line", colour: "#D55E00", widthPx: 2, label: "weighted mean in bins" },
  ];
  const panel = scatterPanel({
    series, xRange: [0, rMax], yRange: [0, aMax], xLabel: "uv distance [kλ]", yLabel: "amplitude [Jy]",
    widthPx: 560, heightPx: 380, legend: "top-right", title: "amplitude vs uv distance",
  });
  return composeFigure([panel], { title });
}
