/**
 * Multi-panel figures: panels placed on a grid (row by row), an optional title, and a helper that
 * draws several images on one shared colour scale (e.g. data, model and residual side by side).
 */
import { colourRange, imagePanel, type ImagePanelOptions } from "./imagePanel.js";
import { finiteRange } from "./colormap.js";
import { place, svgDocument, text, type Panel } from "./svg.js";

export interface FigureOptions {
  /** Panels per row (default: all in one row). */
  columns?: number;
  gapPx?: number;
  title?: string;
  fontPx?: number;
}

/**
 * Arrange panels on a grid; each cell is as large as the largest panel in its row/column.
 * @returns a complete SVG document
 */
export function composeFigure(panels: Panel[], o: FigureOptions = {}): string {
  const cols = Math.max(1, o.columns ?? panels.length);
  const gap = o.gapPx ?? 10;
  const font = o.fontPx ?? 14;
  const rows = Math.ceil(panels.length / cols);
  const colW = new Array<number>(cols).fill(0);
  const rowH = new Array<number>(rows).fill(0);
  panels.forEach((p, k) => {
    colW[k % cols] = Math.max(colW[k % cols], p.widthPx);
    rowH[Math.floor(k / cols)] = Math.max(rowH[Math.floor(k / cols)], p.heightPx);
  });
  const top = o.title ? font * 2 : 0;
  let body = "";
  let y = top + gap;
  for (let r = 0; r < rows; r++) {
    let x = gap;
    for (let c = 0; c < cols; c++) {
      const p = panels[r * cols + c];
      if (p) body += place(p, x, y);
      x += colW[c] + gap;
    }
    y += rowH[r] + gap;
  }
  const width = colW.reduce((a, b) => a + b, 0) + gap * (cols + 1);
  if (o.title) body += text(width / 2, font * 1.4, o.title, { sizePx: font, anchor: "middle", weight: "bold" });
  return svgDocument(width, y, body);
}

/**
 * Image panels on one shared colour scale: the range covers all images (symmetric when asked), and
 * only the last panel carries the colour bar unless `colourBarEach`.
 */
export function sharedScaleImages(images: ImagePanelOptions[], common: { symmetric?: boolean; vmin?: number; vmax?: number; colourBarEach?: boolean } = {}): Panel[] {
  let lo = Infinity, hi = -Infinity;
  for (const im of images) {
    const [a, b] = finiteRange(im.data);
    if (a < lo) lo = a;
    if (b > hi) hi = b;
  }
  const [vmin, vmax] = colourRange(Number.isFinite(lo) ? [lo, hi] : [], { symmetric: common.symmetric, vmin: common.vmin, vmax: common.vmax });
  return images.map((im, k) => imagePanel({ ...im, vmin, vmax, colourBar: common.colourBarEach || k === images.length - 1 }));
}
