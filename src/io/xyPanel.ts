/**
 * x–y panel: points (with optional error bars), lines and step histograms on linear or log axes,
 * with a legend. `scatterPanel` and `linePanel` are this panel with a default series style.
 * Large point sets are drawn as one path of small squares to keep the SVG compact.
 * Default colours: the Okabe–Ito palette (Okabe & Ito 2008, "Color Universal Design"), chosen to
 * stay distinguishable under common colour-vision deficiencies.
 * Reference: Heckbert 1990 (ticks); Okabe & Ito 2008 (palette).
 */
import { clipRect, drawFrame } from "./axes.js";
import { line, marker, polylines, px, rect, text, type MarkerShape, type Panel } from "./svg.js";
import { niceDomain, padDegenerate, scaleToPx, type AxisScale } from "./ticks.js";

export const PALETTE = ["#0072B2", "#D55E00", "#009E73", "#CC79A7", "#E69F00", "#56B4E9", "#F0E442", "#000000"];

export interface Series {
  x: ArrayLike<number>;
  y: ArrayLike<number>;
  /** Symmetric 1σ error bars in y (same units). */
  yErr?: ArrayLike<number>;
  /** 'points' (default for scatterPanel), 'line' (default for linePanel) or 'steps' (histogram). */
  style?: "points" | "line" | "steps";
  colour?: string;
  label?: string;
  marker?: MarkerShape;
  sizePx?: number;
  widthPx?: number;
  dash?: string;
}

export interface XYPanelOptions {
  series: Series[];
  xLabel?: string;
  yLabel?: string;
  title?: string;
  xLog?: boolean;
  yLog?: boolean;
  /** Axis ranges; default: the finite data range (positive values only on log axes), padded. */
  xRange?: [number, number];
  yRange?: [number, number];
  /** Horizontal / vertical reference lines. */
  hLines?: Array<{ y: number; colour?: string; dash?: string }>;
  vLines?: Array<{ x: number; colour?: string; dash?: string }>;
  legend?: "top-right" | "top-left" | "none";
  widthPx?: number;
  heightPx?: number;
  fontPx?: number;
}

function dataRange(series: Series[], axis: "x" | "y", log: boolean): [number, number] {
  let lo = Infinity, hi = -Infinity;
  for (const s of series) {
    const v = axis === "x" ? s.x : s.y;
    const e = axis === "y" ? s.yErr : undefined;
    for (let k = 0; k < v.length; k++) {
      const d = e && Number.isFinite(e[k]) ? Math.abs(e[k]) : 0;
      for (const t of [v[k] - d, v[k] + d]) {
        if (!Number.isFinite(t) || (log && !(t > 0))) continue;
        if (t < lo) lo = t;
        if (t > hi) hi = t;
      }
    }
  }
  if (!(lo <= hi)) return log ? [1, 10] : [0, 1];
  if (log) return hi > lo ? [lo, hi] : [lo / 2, lo * 2];
  return padDegenerate(lo, hi);
}

/**
 * Build an x–y panel.
 * @returns a Panel
 */
export function xyPanel(o: XYPanelOptions): Panel {
  const font = o.fontPx ?? 12;
  const W = o.widthPx ?? 380, H = o.heightPx ?? 280;
  const left = 14 + font * 4.6, right = 14, top = o.title ? font * 2.2 : 10, bottom = font * 3.6;
  let [xa, xb] = o.xRange ?? dataRange(o.series, "x", !!o.xLog);
  let [ya, yb] = o.yRange ?? dataRange(o.series, "y", !!o.yLog);
  if (!o.xRange && !o.xLog) [xa, xb] = niceDomain(xa, xb);
  if (!o.yRange && !o.yLog) [ya, yb] = niceDomain(ya, yb);
  const xs: AxisScale = { domain: [xa, xb], range: [left, W - right], log: !!o.xLog };
  const ys: AxisScale = { domain: [ya, yb], range: [H - bottom, top], log: !!o.yLog };
  const clip = clipRect(left, top, W - right - left, H - bottom - top);

  let body = "";
  for (const h of o.hLines ?? []) {
    const yp = scaleToPx(ys, h.y);
    if (Number.isFinite(yp)) body += line(left, yp, W - right, yp, h.colour ?? "#888", 1, h.dash ?? "4 3");
  }
  for (const v of o.vLines ?? []) {
    const xp = scaleToPx(xs, v.x);
    if (Number.isFinite(xp)) body += line(xp, top, xp, H - bottom, v.colour ?? "#888", 1, v.dash ?? "4 3");
  }
  o.series.forEach((s, idx) => {
    body += drawSeries(s, s.colour ?? PALETTE[idx % PALETTE.length], xs, ys);
  });

  let svg = `<defs>${clip.def}</defs><g clip-path="url(#${clip.id})">${body}</g>`;
  svg += drawFrame({ x: xs, y: ys, xLabel: o.xLabel, yLabel: o.yLabel, fontPx: font });
  if (o.title) svg += text((left + W - right) / 2, top - font * 0.7, o.title, { sizePx: font * 1.1, anchor: "middle" });
  if (o.legend !== "none") svg += legendBox(o.series, o.legend ?? "top-right", left, W - right, top, font);
  return { widthPx: W, heightPx: H, svg };
}

/** xyPanel with points as the default style. */
export function scatterPanel(o: XYPanelOptions): Panel {
  return xyPanel({ ...o, series: o.series.map((s) => ({ style: "points", ...s })) });
}

/** xyPanel with lines as the default style. */
export function linePanel(o: XYPanelOptions): Panel {
  return xyPanel({ ...o, series: o.series.map((s) => ({ style: "line", ...s })) });
}

function drawSeries(s: Series, colour: string, xs: AxisScale, ys: AxisScale): string {
  const n = Math.min(s.x.length, s.y.length);
  const style = s.style ?? "points";
  if (style === "line" || style === "steps") {
    const m = style === "steps" ? 2 * n : n;
    const pxs = new Float64Array(m), pys = new Float64Array(m);
    for (let k = 0; k < n; k++) {
      if (style === "line") {
        pxs[k] = scaleToPx(xs, s.x[k]);
        pys[k] = scaleToPx(ys, s.y[k]);
      } else {
        // Steps: x holds the left bin edges and the next edge closes each bin (last bin mirrors the previous width).
        const x1 = k + 1 < n ? s.x[k + 1] : 2 * s.x[k] - s.x[k - 1];
        pxs[2 * k] = scaleToPx(xs, s.x[k]);
        pxs[2 * k + 1] = scaleToPx(xs, x1);
        pys[2 * k] = pys[2 * k + 1] = scaleToPx(ys, s.y[k]);
      }
    }
    return polylines(pxs, pys, colour, s.widthPx ?? 1.5, s.dash);
  }
  let out = "";
  if (s.yErr) {
    let d = "";
    for (let k = 0; k < n; k++) {
      const e = s.yErr[k];
      if (!Number.isFinite(e)) continue;
      const xp = scaleToPx(xs, s.x[k]);
      const y0 = scaleToPx(ys, s.y[k] - e), y1 = scaleToPx(ys, s.y[k] + e);
      const ya = Number.isFinite(y0) ? y0 : ys.range[0];
      if (Number.isFinite(xp) && Number.isFinite(y1)) d += `M${px(xp)} ${px(ya)}V${px(y1)}`;
    }
    if (d) out += `<path d="${d}" stroke="${colour}" stroke-width="1" fill="none"/>`;
  }
  const size = s.sizePx ?? (n > 2000 ? 2 : 5);
  if (n > 2000 || s.marker === undefined && n > 500) {
    // Compact form: one path of small squares.
    let d = "";
    for (let k = 0; k < n; k++) {
      const xp = scaleToPx(xs, s.x[k]), yp = scaleToPx(ys, s.y[k]);
      if (Number.isFinite(xp) && Number.isFinite(yp)) d += `M${px(xp - size / 2)} ${px(yp - size / 2)}h${px(size)}v${px(size)}h${px(-size)}z`;
    }
    return out + (d ? `<path d="${d}" fill="${colour}" stroke="none"/>` : "");
  }
  for (let k = 0; k < n; k++) {
    const xp = scaleToPx(xs, s.x[k]), yp = scaleToPx(ys, s.y[k]);
    if (Number.isFinite(xp) && Number.isFinite(yp)) out += marker(xp, yp, s.marker ?? "circle", size, colour);
  }
  return out;
}

function legendBox(series: Series[], where: "top-right" | "top-left", x0: number, x1: number, y0: number, font: number): string {
  const items = series.map((s, i) => ({ s, colour: s.colour ?? PALETTE[i % PALETTE.length] })).filter((it) => it.s.label);
  if (items.length === 0) return "";
  const fs = font * 0.85;
  const w = 34 + fs * 0.62 * Math.max(...items.map((it) => it.s.label!.length));
  const h = items.length * fs * 1.4 + 6;
  const x = where === "top-right" ? x1 - w - 6 : x0 + 6;
  const y = y0 + 6;
  let out = rect(x, y, w, h, "#fff", "#999");
  items.forEach((it, r) => {
    const yy = y + 3 + fs * 0.7 + r * fs * 1.4;
    const st = it.s.style ?? "points";
    out += st === "points" ? marker(x + 13, yy, it.s.marker ?? "circle", 6, it.colour) : line(x + 4, yy, x + 22, yy, it.colour, it.s.widthPx ?? 1.5, it.s.dash);
    out += text(x + 28, yy, it.s.label!, { sizePx: fs, baseline: "middle" });
  });
  return out;
}
