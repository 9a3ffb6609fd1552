/**
 * SVG building blocks: escaping, number formatting, and the few elements the figure modules
 * draw (text, lines, polylines, rectangles). Output is a plain string; one font family (DejaVu
 * Sans, supplied to the rasteriser as a buffer) so text renders identically everywhere.
 * Reference: SVG 1.1 (Second Edition), W3C Recommendation 2011.
 */

/** The only font family used; render.ts loads exactly this font. */
export const FONT_FAMILY = "DejaVu Sans";

/** A rectangle-sized piece of SVG, drawn with its top-left corner at (0, 0). */
export interface Panel {
  widthPx: number;
  heightPx: number;
  /** SVG elements (no <svg> wrapper), in panel coordinates [px]. */
  svg: string;
}

/** Escape text for XML content and attribute values. */
export function escapeXml(text: string): string {
  return text.replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;").replace(/"/g, "&quot;");
}

/** Format a pixel coordinate compactly (2 decimals, no trailing zeros). */
export function px(v: number): string {
  return String(Math.round(v * 100) / 100);
}

export interface TextStyle {
  sizePx?: number;
  anchor?: "start" | "middle" | "end";
  /** Vertical alignment of the baseline: "middle" centres the text on y. */
  baseline?: "alphabetic" | "middle" | "hanging";
  colour?: string;
  rotateDeg?: number;
  weight?: "normal" | "bold";
}

/** A text element; `dominant-baseline` is emulated with a dy shift (rasterisers differ in support). */
export function text(x: number, y: number, content: string, style: TextStyle = {}): string {
  const size = style.sizePx ?? 12;
  const dy = style.baseline === "middle" ? 0.35 * size : style.baseline === "hanging" ? 0.8 * size : 0;
  const rot = style.rotateDeg ? ` transform="rotate(${px(style.rotateDeg)} ${px(x)} ${px(y)})"` : "";
  const weight = style.weight === "bold" ? ` font-weight="bold"` : "";
  return `<text x="${px(x)}" y="${px(y + dy)}" font-family="${FONT_FAMILY}" font-size="${px(size)}"` +
    ` text-anchor="${style.anchor ?? "start"}" fill="${style.colour ?? "#000"}"${weight}${rot}>${escapeXml(content)}</text>`;
}

export function line(x1: number, y1: number, x2: number, y2: number, stroke = "#000", widthPx = 1, dash?: string): string {
  const d = dash ? ` stroke-dasharray="${dash}"` : "";
  return `<line x1="${px(x1)}" y1="${px(y1)}" x2="${px(x2)}" y2="${px(y2)}" stroke="${stroke}" stroke-width="${px(widthPx)}"${d}/>`;
}

export function rect(x: number, y: number, w: number, h: number, fill: string, stroke = "none", strokeWidthPx = 1): string {
  return `<rect x="${px(x)}" y="${px(y)}" width="${px(w)}" height="${px(h)}" fill="${fill}" stroke="${stroke}" stroke-width="${px(strokeWidthPx)}"/>`;
}

/**
 * Polylines through the points (xs[k], ys[k]) [px]; a non-finite coordinate breaks the line, so
 * several curves can travel in one array pair.
 */
export function polylines(xs: ArrayLike<number>, ys: ArrayLike<number>, stroke: string, widthPx = 1, dash?: string): string {
  let out = "";
  let pts: string[] = [];
  const flush = (): void => {
    if (pts.length >= 2) {
      out += `<polyline points="${pts.join(" ")}" fill="none" stroke="${stroke}" stroke-width="${px(widthPx)}"` +
        `${dash ? ` stroke-dasharray="${dash}"` : ""} stroke-linejoin="round"/>`;
    }
    pts = [];
  };
  for (let k = 0; k < xs.length; k++) {
    const x = xs[k], y = ys[k];
    if (Number.isFinite(x) && Number.isFinite(y)) pts.push(`${px(x)},${px(y)}`);
    else flush();
  }
  flush();
  return out;
}

/** Marker shapes for scatter points and overlays. */
export type MarkerShape = "circle" | "square" | "cross" | "plus" | "diamond" | "triangle";

/** One marker of size `sizePx` (full width) centred at (x, y). */
export function marker(x: number, y: number, shape: MarkerShape, sizePx: number, colour: string, filled = true): string {
  const r = sizePx / 2;
  const fill = filled ? colour : "none";
  switch (shape) {
    case "circle":
      return `<circle cx="${px(x)}" cy="${px(y)}" r="${px(r)}" fill="${fill}" stroke="${colour}"/>`;
    case "square":
      return rect(x - r, y - r, 2 * r, 2 * r, fill, colour);
    case "diamond":
      return `<polygon points="${px(x)},${px(y - r)} ${px(x + r)},${px(y)} ${px(x)},${px(y + r)} ${px(x - r)},${px(y)}" fill="${fill}" stroke="${colour}"/>`;
    case "triangle":
      return `<polygon points="${px(x)},${px(y - r)} ${px(x + r)},${px(y + 0.8 * r)} ${px(x - r)},${px(y + 0.8 * r)}" fill="${fill}" stroke="${colour}"/>`;
    case "plus":
      return line(x - r, y, x + r, y, colour, 1.5) + line(x, y - r, x, y + r, colour, 1.5);
    case "cross":
      return line(x - r, y - r, x + r, y + r, colour, 1.5) + line(x - r, y + r, x + r, y - r, colour, 1.5);
  }
}

/** Translate a panel's content to (x, y). */
export function place(panel: Panel, x: number, y: number): string {
  return `<g transform="translate(${px(x)} ${px(y)})">${panel.svg}</g>`;
}

/** Wrap content in a complete SVG document with a white background. */
export function svgDocument(widthPx: number, heightPx: number, body: string): string {
  const w = Math.ceil(widthPx), h = Math.ceil(heightPx);
  return `<svg xmlns="http://www.w3.org/2000/svg" xmlns:xlink="http://www.w3.org/1999/xlink" width="${w}" height="${h}" viewBox="0 0 ${w} ${h}">` +
    `<rect x="0" y="0" width="${w}" height="${h}" fill="#fff"/>${body}</svg>`;
}

/** A panel as a standalone SVG document. */
export function panelDocument(panel: Panel): string {
  return svgDocument(panel.widthPx, panel.heightPx, panel.svg);
}
