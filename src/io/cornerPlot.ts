/**
 * Corner plot of posterior samples: 1-D histograms on the diagonal, 2-D histograms below it with
 * contours enclosing 39.3% and 86.5% of the samples (the 1σ and 2σ regions of a 2-D Gaussian,
 * 1 − e^{−s²/2}), optional truth lines, and the parameter names on the outer axes.
 * Contours by marching squares on the bin-centre grid with linear interpolation along cell edges.
 * Reference: Lorensen & Cline 1987 (marching cubes; its 2-D case); Foreman-Mackey 2016, JOSS 1, 24
 * (the corner-plot layout for MCMC samples).
 */
import { InputError } from "../errors.js";
import { drawFrame } from "./axes.js";
import { colourMap, imageToRgba } from "./colormap.js";
import { encodePng } from "./png.js";
import { line, px, polylines, text, type Panel } from "./svg.js";
import { padDegenerate, scaleToPx, type AxisScale } from "./ticks.js";

export interface CornerPlotOptions {
  /** One array of samples per parameter, all the same length. */
  samples: ArrayLike<number>[];
  names: string[];
  /** Optional per-sample weights (e.g. nested-sampling importance weights). */
  weights?: ArrayLike<number>;
  truths?: Array<number | undefined>;
  /** Per-parameter plot ranges; default the finite sample range padded by 5%. */
  ranges?: Array<[number, number] | undefined>;
  bins?: number;
  /** Size of one cell [px] (default 130). */
  cellPx?: number;
  fontPx?: number;
  colour?: string;
}

const LEVELS = [1 - Math.exp(-0.5), 1 - Math.exp(-2)]; // 0.393, 0.865

/**
 * Build a corner plot.
 * @returns a Panel
 */
export function cornerPlot(o: CornerPlotOptions): Panel {
  const k = o.samples.length;
  if (k === 0 || o.names.length !== k) {
    throw new InputError(`corner plot: ${k} sample arrays and ${o.names.length} names; give one name per parameter (at least one)`);
  }
  const nS = o.samples[0].length;
  const bins = o.bins ?? 30;
  const cell = o.cellPx ?? 130;
  const font = o.fontPx ?? 11;
  const gap = 8;
  const left = font * 5.5, bottom = font * 5, top = 10, right = 12;
  const colour = o.colour ?? "#0072B2";
  const weights = o.weights;
  const ranges: Array<[number, number]> = o.samples.map((s, p) => o.ranges?.[p] ?? paddedRange(s));

  let svg = "";
  for (let r = 0; r < k; r++) {
    for (let c = 0; c <= r; c++) {
      const x0 = left + c * (cell + gap), y0 = top + r * (cell + gap);
      const xs: AxisScale = { domain: ranges[c], range: [x0, x0 + cell], log: false };
      const onBottom = r === k - 1, onLeft = c === 0 && r > 0;
      if (r === c) {
        const h = histogram1d(o.samples[c], weights, ranges[c], bins);
        let hMax = 0;
        for (const v of h) hMax = Math.max(hMax, v);
        const ys: AxisScale = { domain: [0, hMax > 0 ? hMax * 1.1 : 1], range: [y0 + cell, y0], log: false };
        const pxs = new Float64Array(2 * bins + 2), pys = new Float64Array(2 * bins + 2);
        const bw = (ranges[c][1] - ranges[c][0]) / bins;
        pxs[0] = scaleToPx(xs, ranges[c][0]);
        pys[0] = y0 + cell;
        for (let b = 0; b < bins; b++) {
          pxs[2 * b + 1] = scaleToPx(xs, ranges[c][0] + b * bw);
          pxs[2 * b + 2] = scaleToPx(xs, ranges[c][0] + (b + 1) * bw);
          pys[2 * b + 1] = pys[2 * b + 2] = scaleToPx(ys, h[b]);
        }
        pxs[2 * bins + 1] = scaleToPx(xs, ranges[c][1]);
        pys[2 * bins + 1] = y0 + cell;
        svg += polylines(pxs, pys, colour, 1.3);
        svg += drawFrame({ x: xs, y: { ...ys, domain: [0, 1] }, ticks: 4, fontPx: font, xTickLabels: onBottom, yTickLabels: false, xLabel: onBottom ? o.names[c] : undefined });
        const t = o.truths?.[c];
        if (t !== undefined && Number.isFinite(t)) svg += line(scaleToPx(xs, t), y0, scaleToPx(xs, t), y0 + cell, "#D55E00", 1.2);
      } else {
        const ys: AxisScale = { domain: ranges[r], range: [y0 + cell, y0], log: false };
        const h2 = histogram2d(o.samples[c], o.samples[r], weights, ranges[c], ranges[r], bins);
        let hMax = 0;
        for (const v of h2) hMax = Math.max(hMax, v);
        const png = encodePng(imageToRgba(h2, bins, bins, 0, hMax > 0 ? hMax : 1, colourMap("blues")), bins, bins, 4);
        svg += `<image x="${px(x0)}" y="${px(y0)}" width="${px(cell)}" height="${px(cell)}" preserveAspectRatio="none" href="data:image/png;base64,${png.toString("base64")}"/>`;
        for (const f of LEVELS) {
          const level = massLevel(h2, f);
          if (level > 0) svg += contourPath(h2, bins, bins, level, x0, y0 + cell, cell / bins, -cell / bins, "#08306b");
        }
        const tx = o.truths?.[c], ty = o.truths?.[r];
        if (tx !== undefined && Number.isFinite(tx)) svg += line(scaleToPx(xs, tx), y0, scaleToPx(xs, tx), y0 + cell, "#D55E00", 1);
        if (ty !== undefined && Number.isFinite(ty)) svg += line(x0, scaleToPx(ys, ty), x0 + cell, scaleToPx(ys, ty), "#D55E00", 1);
        svg += drawFrame({
          x: xs, y: ys, ticks: 4, fontPx: font, xTickLabels: onBottom, yTickLabels: onLeft,
          xLabel: onBottom ? o.names[c] : undefined, yLabel: onLeft ? o.names[r] : undefined,
        });
      }
    }
  }
  const size = k * cell + (k - 1) * gap;
  svg += text(left + size, top + font, `${nS} samples`, { sizePx: font, anchor: "end", baseline: "hanging" });
  return { widthPx: left + size + right, heightPx: top + size + bottom, svg };
}

function paddedRange(s: ArrayLike<number>): [number, number] {
  let lo = Infinity, hi = -Infinity;
  for (let i = 0; i < s.length; i++) {
    if (s[i] < lo) lo = s[i];
    if (s[i] > hi) hi = s[i];
  }
  const [a, b] = padDegenerate(lo, hi);
  const pad = 0.05 * (b - a);
  return [a - pad, b + pad];
}

/** Weighted 1-D histogram on [lo, hi) with `bins` bins (values outside are dropped). */
export function histogram1d(s: ArrayLike<number>, w: ArrayLike<number> | undefined, [lo, hi]: [number, number], bins: number): Float64Array {
  const h = new Float64Array(bins);
  const inv = bins / (hi - lo);
  for (let i = 0; i < s.length; i++) {
    const b = Math.floor((s[i] - lo) * inv);
    if (b >= 0 && b < bins) h[b] += w ? w[i] : 1;
  }
  return h;
}

/** Weighted 2-D histogram, x bin fastest, y bin 0 at the bottom. */
export function histogram2d(sx: ArrayLike<number>, sy: ArrayLike<number>, w: ArrayLike<number> | undefined, rx: [number, number], ry: [number, number], bins: number): Float64Array {
  const h = new Float64Array(bins * bins);
  const ix = bins / (rx[1] - rx[0]), iy = bins / (ry[1] - ry[0]);
  for (let i = 0; i < sx.length; i++) {
    const bx = Math.floor((sx[i] - rx[0]) * ix), by = Math.floor((sy[i] - ry[0]) * iy);
    if (bx >= 0 && bx < bins && by >= 0 && by < bins) h[by * bins + bx] += w ? w[i] : 1;
  }
  return h;
}

/** The histogram value above which the highest bins hold the fraction `f` of the total. */
export function massLevel(h: Float64Array, f: number): number {
  const sorted = Float64Array.from(h).sort().reverse();
  let total = 0;
  for (const v of sorted) total += v;
  let acc = 0;
  for (const v of sorted) {
    acc += v;
    if (acc >= f * total) return v;
  }
  return 0;
}

/**
 * Marching-squares contour of `z` (nx×ny, values at bin centres) at `level`, as one SVG path.
 * Bin (i, j) centre maps to pixel (ox + (i + 0.5)·sx, oy + (j + 0.5)·sy).
 */
export function contourPath(z: Float64Array, nx: number, ny: number, level: number, ox: number, oy: number, sx: number, sy: number, stroke: string): string {
  let d = "";
  const P = (i: number, j: number): [number, number] => [ox + (i + 0.5) * sx, oy + (j + 0.5) * sy];
  const lerp = (a: [number, number], b: [number, number], za: number, zb: number): [number, number] => {
    const t = (level - za) / (zb - za);
    return [a[0] + t * (b[0] - a[0]), a[1] + t * (b[1] - a[1])];
  };
  for (let j = 0; j < ny - 1; j++) {
    for (let i = 0; i < nx - 1; i++) {
      const z00 = z[j * nx + i], z10 = z[j * nx + i + 1], z01 = z[(j + 1) * nx + i], z11 = z[(j + 1) * nx + i + 1];
      const pts: Array<[number, number]> = [];
      // Edges in order: bottom (00–10), right (10–11), top (01–11), left (00–01).
      const edges: Array<[number, number, [number, number], [number, number]]> = [
        [z00, z10, P(i, j), P(i + 1, j)], [z10, z11, P(i + 1, j), P(i + 1, j + 1)],
        [z01, z11, P(i, j + 1), P(i + 1, j + 1)], [z00, z01, P(i, j), P(i, j + 1)],
      ];
      for (const [za, zb, a, b] of edges) if ((za >= level) !== (zb >= level)) pts.push(lerp(a, b, za, zb));
      // Two crossings: one segment; four (saddle): pair them in edge order.
      for (let q = 0; q + 1 < pts.length; q += 2) d += `M${px(pts[q][0])} ${px(pts[q][1])}L${px(pts[q + 1][0])} ${px(pts[q + 1][1])}`;
    }
  }
  return d ? `<path d="${d}" fill="none" stroke="${stroke}" stroke-width="1"/>` : "";
}
