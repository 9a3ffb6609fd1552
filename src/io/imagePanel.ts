/**
 * Image panel: a 2-D map with sky orientation (North up, East LEFT: the x axis increases to the
 * left), axes ticked in arcsec, a colour bar with units, an optional beam ellipse in the lower-left
 * corner, and overlays (polylines such as critical curves, and markers). The map is embedded as a
 * PNG data URI drawn with nearest-neighbour scaling, so each data pixel stays a sharp square.
 * NaN pixels are transparent over a light grey background; constant images get a padded range.
 * Reference: orientation per CONVENTIONS.md (Greisen & Calabretta 2002); beam position angle
 * North through East (FITS BPA convention).
 */
import { clipRect, drawFrame } from "./axes.js";
import { colourMap, finiteRange, imageToRgba, type ColourMapName } from "./colormap.js";
import { encodePng } from "./png.js";
import { line, marker, polylines, px, rect, text, type MarkerShape, type Panel } from "./svg.js";
import { formatTick, niceTicks, padDegenerate, scaleToPx, type AxisScale } from "./ticks.js";

export interface ImageOverlayLine {
  /** Offsets [arcsec], x East, y North; NaN breaks the line. */
  xArcsec: ArrayLike<number>;
  yArcsec: ArrayLike<number>;
  colour?: string;
  widthPx?: number;
  dash?: string;
  label?: string;
}

export interface ImageMarker {
  xArcsec: number;
  yArcsec: number;
  shape?: MarkerShape;
  colour?: string;
  sizePx?: number;
  label?: string;
}

export interface ImagePanelOptions {
  /** nx·ny values, column fastest; column 0 at the LEFT (East) edge, row 0 at the BOTTOM (South). */
  data: ArrayLike<number>;
  nx: number;
  ny: number;
  /** Outer pixel edges [arcsec]: [x at left edge, x at right edge, y at bottom, y at top]; left > right for East-left. */
  extentArcsec: [number, number, number, number];
  title?: string;
  xLabel?: string;
  yLabel?: string;
  colourMap?: ColourMapName;
  /** Colour range; default the finite data range (symmetric about 0 when `symmetric`). */
  vmin?: number;
  vmax?: number;
  symmetric?: boolean;
  /** Colour-bar label, e.g. 'Jy/beam'. */
  unit?: string;
  colourBar?: boolean;
  beam?: { bmajArcsec: number; bminArcsec: number; bpaDeg: number };
  lines?: ImageOverlayLine[];
  markers?: ImageMarker[];
  /** Width of the map area [px] (default 300); the height follows the extent's aspect ratio. */
  mapWidthPx?: number;
  fontPx?: number;
}

/** Pixel-edge extent of a CONVENTIONS.md model grid (N×N, cell Δ): column i at x = (N/2 − i)Δ. */
export function gridExtentArcsec(n: number, cellArcsec: number): [number, number, number, number] {
  return [(n / 2 + 0.5) * cellArcsec, (-n / 2 + 0.5) * cellArcsec, (-n / 2 - 0.5) * cellArcsec, (n / 2 - 0.5) * cellArcsec];
}

/** The colour range an image panel would use for these values and options. */
export function colourRange(data: ArrayLike<number>, o: { vmin?: number; vmax?: number; symmetric?: boolean }): [number, number] {
  let [lo, hi] = finiteRange(data);
  if (o.symmetric) {
    const m = Math.max(Math.abs(lo), Math.abs(hi));
    [lo, hi] = [-m, m];
  }
  if (o.vmin !== undefined) lo = o.vmin;
  if (o.vmax !== undefined) hi = o.vmax;
  return padDegenerate(lo, hi);
}

/** An image panel, with the position of its map area inside the panel [px]. */
export interface ImagePanel extends Panel {
  mapBoxPx: { x: number; y: number; width: number; height: number };
}

/**
 * Build an image panel.
 * @returns a Panel (size in px and SVG content) and its map box
 * Reference: see the module comment.
 */
export function imagePanel(o: ImagePanelOptions): ImagePanel {
  const font = o.fontPx ?? 12;
  const [xl, xr, yb, yt] = o.extentArcsec;
  const mapW = o.mapWidthPx ?? 300;
  const mapH = Math.max(20, mapW * Math.abs((yt - yb) / (xl - xr)));
  const showBar = o.colourBar !== false;
  const left = 12 + font * 4.6, top = o.title ? font * 2.2 : 10, bottom = font * 3.6;
  const right = showBar ? 28 + font * 5.5 : 12;
  const map = colourMap(o.colourMap ?? "viridis");
  const [vmin, vmax] = colourRange(o.data, o);

  const xs: AxisScale = { domain: [xl, xr], range: [left, left + mapW], log: false };
  const ys: AxisScale = { domain: [yb, yt], range: [top + mapH, top], log: false };
  const png = encodePng(imageToRgba(o.data, o.nx, o.ny, vmin, vmax, map), o.nx, o.ny, 4);
  const clip = clipRect(left, top, mapW, mapH);

  let s = `<defs>${clip.def}</defs>`;
  s += rect(left, top, mapW, mapH, "#d9d9d9");
  s += `<image x="${px(left)}" y="${px(top)}" width="${px(mapW)}" height="${px(mapH)}" preserveAspectRatio="none"` +
    ` image-rendering="optimizeSpeed" href="data:image/png;base64,${png.toString("base64")}"/>`;

  let overlay = "";
  for (const l of o.lines ?? []) {
    const n = Math.min(l.xArcsec.length, l.yArcsec.length);
    const pxs = new Float64Array(n), pys = new Float64Array(n);
    for (let k = 0; k < n; k++) {
      pxs[k] = scaleToPx(xs, l.xArcsec[k]);
      pys[k] = scaleToPx(ys, l.yArcsec[k]);
    }
    overlay += polylines(pxs, pys, l.colour ?? "#fff", l.widthPx ?? 1.5, l.dash);
  }
  for (const m of o.markers ?? []) {
    overlay += marker(scaleToPx(xs, m.xArcsec), scaleToPx(ys, m.yArcsec), m.shape ?? "plus", m.sizePx ?? 10, m.colour ?? "#fff", false);
  }
  if (o.beam) overlay += beamEllipse(o.beam, left, top + mapH, mapW / Math.abs(xl - xr));
  s += `<g clip-path="url(#${clip.id})">${overlay}</g>`;
  s += legend(o, left + 6, top + 6, font);

  s += drawFrame({
    x: xs, y: ys, fontPx: font,
    xLabel: o.xLabel ?? "ΔRA (East ←) [″]",
    yLabel: o.yLabel ?? "ΔDec [″]",
  });
  if (o.title) s += text(left + mapW / 2, top - font * 0.7, o.title, { sizePx: font * 1.1, anchor: "middle" });
  if (showBar) s += colourBar(left + mapW + 14, top, 14, mapH, vmin, vmax, o.colourMap ?? "viridis", o.unit, font);
  return { widthPx: left + mapW + right, heightPx: top + mapH + bottom, svg: s, mapBoxPx: { x: left, y: top, width: mapW, height: mapH } };
}

/**
 * The beam as an ellipse in the lower-left corner of the map. A major axis at position angle φ
 * (North through East) points along sky (sin φ, cos φ); with East left and y down on screen that
 * is the screen direction ±(sin φ, cos φ), i.e. an SVG rotation of 90° − φ of the x-aligned ellipse.
 */
function beamEllipse(b: { bmajArcsec: number; bminArcsec: number; bpaDeg: number }, x0: number, yBottom: number, pxPerArcsec: number): string {
  const rx = (b.bmajArcsec / 2) * pxPerArcsec, ry = (b.bminArcsec / 2) * pxPerArcsec;
  const pad = 6 + rx;
  const cx = x0 + pad, cy = yBottom - pad;
  return `<ellipse cx="0" cy="0" rx="${px(rx)}" ry="${px(ry)}" fill="#ffffff" fill-opacity="0.6" stroke="#000" stroke-width="1"` +
    ` transform="translate(${px(cx)} ${px(cy)}) rotate(${px(90 - b.bpaDeg)})"/>`;
}

function legend(o: ImagePanelOptions, x: number, y: number, font: number): string {
  const items: string[] = [];
  let row = 0;
  const fs = font * 0.85;
  for (const l of o.lines ?? []) {
    if (!l.label) continue;
    const yy = y + fs * 0.6 + row * fs * 1.4;
    items.push(line(x + 4, yy, x + 22, yy, l.colour ?? "#fff", l.widthPx ?? 1.5, l.dash) + text(x + 26, yy, l.label, { sizePx: fs, baseline: "middle", colour: "#fff" }));
    row++;
  }
  for (const m of o.markers ?? []) {
    if (!m.label) continue;
    const yy = y + fs * 0.6 + row * fs * 1.4;
    items.push(marker(x + 13, yy, m.shape ?? "plus", Math.min(m.sizePx ?? 10, fs), m.colour ?? "#fff", false) + text(x + 26, yy, m.label, { sizePx: fs, baseline: "middle", colour: "#fff" }));
    row++;
  }
  if (items.length === 0) return "";
  return rect(x, y - 2, fs * 9, row * fs * 1.4 + 4, "#000", "none").replace("/>", ` fill-opacity="0.45"/>`) + items.join("");
}

/** Vertical colour bar with ticks and a rotated unit label. */
export function colourBar(x: number, y: number, w: number, h: number, vmin: number, vmax: number, mapName: ColourMapName, unit: string | undefined, font: number): string {
  const steps = 256;
  const ramp = new Float64Array(steps);
  for (let k = 0; k < steps; k++) ramp[k] = vmin + ((vmax - vmin) * (k + 0.5)) / steps;
  const png = encodePng(imageToRgba(ramp, 1, steps, vmin, vmax, colourMap(mapName)), 1, steps, 4);
  let s = `<image x="${px(x)}" y="${px(y)}" width="${px(w)}" height="${px(h)}" preserveAspectRatio="none" image-rendering="optimizeSpeed"` +
    ` href="data:image/png;base64,${png.toString("base64")}"/>`;
  s += rect(x, y, w, h, "none", "#000");
  const scale: AxisScale = { domain: [vmin, vmax], range: [y + h, y], log: false };
  for (const v of niceTicks(vmin, vmax, 5)) {
    const yp = scaleToPx(scale, v);
    s += line(x + w, yp, x + w + 4, yp) + text(x + w + 6, yp, formatTick(v), { sizePx: font * 0.85, baseline: "middle" });
  }
  if (unit) s += text(x + w + font * 4.6, y + h / 2, unit, { sizePx: font, anchor: "middle", rotateDeg: -90 });
  return s;
}
