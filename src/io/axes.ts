/**
 * A rectangular plot frame with ticks, tick labels and axis labels, shared by the image, x–y and
 * corner panels. Data-to-pixel mapping is an AxisScale per axis; a reversed x axis (East to the
 * left on sky maps) is just a domain whose first value is the larger.
 * Reference: layout conventions are common practice; tick choice follows ticks.ts (Heckbert 1990).
 */
import { escapeXml, line, px, rect, text } from "./svg.js";
import { formatTick, logTicks, niceTicks, scaleToPx, type AxisScale } from "./ticks.js";

export interface FrameOptions {
  x: AxisScale;
  y: AxisScale;
  xLabel?: string;
  yLabel?: string;
  /** Hide tick labels (shared axes in grids). */
  xTickLabels?: boolean;
  yTickLabels?: boolean;
  /** Target number of ticks per axis (default 5). */
  ticks?: number;
  fontPx?: number;
}

/** Tick values for a scale (decades on log axes). */
export function ticksFor(s: AxisScale, target = 5): number[] {
  const [a, b] = s.domain;
  return s.log ? logTicks(a, b) : niceTicks(a, b, target);
}

/** Frame, ticks and labels around the plot area spanned by the two scales' pixel ranges. */
export function drawFrame(o: FrameOptions): string {
  const font = o.fontPx ?? 12;
  const x0 = Math.min(...o.x.range), x1 = Math.max(...o.x.range);
  const y0 = Math.min(...o.y.range), y1 = Math.max(...o.y.range);
  let s = rect(x0, y0, x1 - x0, y1 - y0, "none", "#000", 1);
  const tick = 5;
  for (const v of ticksFor(o.x, o.ticks)) {
    const xp = scaleToPx(o.x, v);
    if (!(xp >= x0 - 0.5 && xp <= x1 + 0.5)) continue;
    s += line(xp, y1, xp, y1 + tick) + line(xp, y0, xp, y0 + tick * 0.6);
    if (o.xTickLabels !== false) s += text(xp, y1 + tick + 2, formatTick(v), { sizePx: font * 0.9, anchor: "middle", baseline: "hanging" });
  }
  for (const v of ticksFor(o.y, o.ticks)) {
    const yp = scaleToPx(o.y, v);
    if (!(yp >= y0 - 0.5 && yp <= y1 + 0.5)) continue;
    s += line(x0 - tick, yp, x0, yp) + line(x1, yp, x1 - tick * 0.6, yp);
    if (o.yTickLabels !== false) s += text(x0 - tick - 3, yp, formatTick(v), { sizePx: font * 0.9, anchor: "end", baseline: "middle" });
  }
  if (o.xLabel) s += text((x0 + x1) / 2, y1 + tick + 4 + font * 1.6, o.xLabel, { sizePx: font, anchor: "middle" });
  if (o.yLabel) {
    const xl = x0 - tick - 8 - font * 2.6;
    s += text(xl, (y0 + y1) / 2, o.yLabel, { sizePx: font, anchor: "middle", rotateDeg: -90 });
  }
  return s;
}

/** A clip path id derived from the rectangle, so identical panels share identical definitions. */
export function clipRect(x: number, y: number, w: number, h: number): { id: string; def: string } {
  const id = `clip-${px(x)}-${px(y)}-${px(w)}-${px(h)}`.replace(/\./g, "_");
  return { id, def: `<clipPath id="${escapeXml(id)}">${rect(x, y, w, h, "#fff")}</clipPath>` };
}
