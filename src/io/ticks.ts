/**
 * Axis scales and tick positions: linear "nice" ticks (steps of 1, 2, 2.5 or 5 × 10^k) and
 * decade ticks for logarithmic axes, with compact labels.
 * Reference: Heckbert 1990, "Nice numbers for graph labels", Graphics Gems I, 61–63.
 */

/** Maps data values to pixels along one axis; `start` may exceed `end` (reversed axis). */
export interface AxisScale {
  /** Data range mapped to [pxStart, pxEnd]. */
  domain: [number, number];
  range: [number, number];
  log: boolean;
}

/** Pixel position of a data value (NaN for non-positive values on a log axis). */
export function scaleToPx(s: AxisScale, v: number): number {
  const [d0, d1] = s.domain;
  const [r0, r1] = s.range;
  if (s.log) {
    if (!(v > 0)) return NaN;
    return r0 + ((Math.log10(v) - Math.log10(d0)) / (Math.log10(d1) - Math.log10(d0))) * (r1 - r0);
  }
  return r0 + ((v - d0) / (d1 - d0)) * (r1 - r0);
}

/** Tick values covering [lo, hi] (either order), about `target` of them, at nice steps. */
export function niceTicks(lo: number, hi: number, target = 5): number[] {
  const a = Math.min(lo, hi), b = Math.max(lo, hi);
  if (!(b > a) || !Number.isFinite(a) || !Number.isFinite(b)) return Number.isFinite(a) ? [a] : [];
  const step = niceStep((b - a) / Math.max(1, target));
  const first = Math.ceil(a / step - 1e-9);
  const last = Math.floor(b / step + 1e-9);
  const out: number[] = [];
  for (let k = first; k <= last; k++) out.push(k * step);
  return out;
}

/** The nice step (1, 2, 2.5, 5 × 10^k) nearest above `raw`. */
export function niceStep(raw: number): number {
  const p = Math.pow(10, Math.floor(Math.log10(raw)));
  const f = raw / p;
  const m = f <= 1 ? 1 : f <= 2 ? 2 : f <= 2.5 ? 2.5 : f <= 5 ? 5 : 10;
  return m * p;
}

/** Extend [lo, hi] outward to the enclosing nice steps (for axes that start on a tick). */
export function niceDomain(lo: number, hi: number, target = 5): [number, number] {
  if (!(hi > lo)) return padDegenerate(lo, hi);
  const step = niceStep((hi - lo) / target);
  return [Math.floor(lo / step) * step, Math.ceil(hi / step) * step];
}

/** A usable range when all values are equal or absent: ±1 (or ±10%) around the value. */
export function padDegenerate(lo: number, hi: number): [number, number] {
  if (!Number.isFinite(lo) || !Number.isFinite(hi)) return [0, 1];
  if (hi > lo) return [lo, hi];
  const d = lo === 0 ? 1 : Math.abs(lo) * 0.1;
  return [lo - d, lo + d];
}

/** Decade ticks 10^k within [lo, hi] (lo, hi > 0); adds 2× and 5× when fewer than 3 decades. */
export function logTicks(lo: number, hi: number): number[] {
  const a = Math.min(lo, hi), b = Math.max(lo, hi);
  const k0 = Math.floor(Math.log10(a)), k1 = Math.ceil(Math.log10(b));
  const mult = k1 - k0 < 3 ? [1, 2, 5] : [1];
  const out: number[] = [];
  for (let k = k0; k <= k1; k++) {
    for (const m of mult) {
      const v = m * Math.pow(10, k);
      if (v >= a * (1 - 1e-9) && v <= b * (1 + 1e-9)) out.push(v);
    }
  }
  return out;
}

/** Compact tick label: trims float noise (0.30000000000000004 → "0.3"), exponent form for extremes. */
export function formatTick(v: number): string {
  if (v === 0) return "0";
  const a = Math.abs(v);
  if (a >= 1e5 || a < 1e-3) {
    const [m, e] = v.toExponential(2).split("e");
    return `${String(Number(m))}e${Number(e)}`.replace(/-/g, "−");
  }
  return String(Number(v.toPrecision(6))).replace("-", "−");
}
