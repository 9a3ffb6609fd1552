/**
 * Corner-style figure of a multivariate Gaussian (the curvature, or Hessian, approximation of the
 * posterior at its maximum): normal densities on the diagonal, and below it the ellipses that
 * enclose 39.3% and 86.5% of the probability of each 2-D marginal — the same levels as the sample
 * corner plot of src/io, so the two read alike.
 *
 * The marginal of a Gaussian over two parameters is the Gaussian with the 2×2 sub-block C of the
 * covariance. Its density contour Δᵀ C⁻¹ Δ = s² encloses 1 − e^{−s²/2} of the probability
 * (s = 1 → 39.3%, s = 2 → 86.5%); with C = L Lᵀ (Cholesky), Δ(t) = s·L·(cos t, sin t) traces it.
 * Reference: Press et al., Numerical Recipes 3rd ed. (2007), §15.6.5 (confidence ellipses from
 * the covariance); the 2-D χ² enclosed probability 1 − e^{−s²/2} is the χ² CDF with 2 degrees of freedom.
 */
import { drawFrame } from "../../io/axes.js";
import { line, marker, polylines, text, type Panel } from "../../io/svg.js";
import { padDegenerate, scaleToPx, type AxisScale } from "../../io/ticks.js";

export interface GaussianCornerOptions {
  names: string[];
  /** Centre (maximum a posteriori), one per parameter. */
  mean: ArrayLike<number>;
  /** dim × dim covariance, row-major. */
  covariance: ArrayLike<number>;
  truths?: ArrayLike<number>;
  title: string;
  /** Size of one cell [px] (default from the dimension: smaller cells for many parameters). */
  cellPx?: number;
  fontPx?: number;
}

/** Mahalanobis radii of the drawn contours: 39.3% and 86.5% of a 2-D Gaussian. */
export const ELLIPSE_RADII = [1, 2] as const;
const HALF_WIDTH_SIGMA = 4;
const ELLIPSE_POINTS = 97;
const CURVE_POINTS = 121;
const COLOUR = "#0072B2";
const TRUTH = "#D55E00";

/**
 * Points of the ellipse Δᵀ C⁻¹ Δ = s² about (mx, my) for C = [[cxx, cxy], [cxy, cyy]], closed
 * (first point repeated). A degenerate C (not positive definite) gives an empty result.
 * @param s Mahalanobis radius (1 → 39.3%, 2 → 86.5% of a 2-D Gaussian)
 * Reference: see the module comment (Cholesky parametrisation of the ellipse).
 */
export function covarianceEllipse(mx: number, my: number, cxx: number, cxy: number, cyy: number, s: number, nPoints = ELLIPSE_POINTS): { x: Float64Array; y: Float64Array } {
  const l11 = Math.sqrt(cxx);
  const l21 = cxy / l11;
  const d = cyy - l21 * l21;
  if (!(cxx > 0) || !(d > 0) || !Number.isFinite(l21)) return { x: new Float64Array(0), y: new Float64Array(0) };
  const l22 = Math.sqrt(d);
  const x = new Float64Array(nPoints), y = new Float64Array(nPoints);
  for (let k = 0; k < nPoints; k++) {
    const t = (2 * Math.PI * k) / (nPoints - 1);
    const c = s * Math.cos(t), sn = s * Math.sin(t);
    x[k] = mx + l11 * c;
    y[k] = my + l21 * c + l22 * sn;
  }
  return { x, y };
}

/**
 * Build the corner-style panel of the Gaussian.
 * @returns a Panel (size in px and SVG content)
 */
export function gaussianCornerPanel(o: GaussianCornerOptions): Panel {
  const k = o.names.length;
  const cell = o.cellPx ?? Math.max(70, Math.min(130, Math.floor(1500 / Math.max(1, k))));
  const font = o.fontPx ?? 11;
  const gap = 8;
  const left = font * 5.5, bottom = font * 5, top = font * 2.6;
  // The last x label is centred under the last cell and may overhang it; the title may be wider still.
  const right = Math.max(12, textWidthPx(o.names[k - 1] ?? "", font) / 2 - cell / 2 + 8);
  const sd = new Float64Array(k);
  const ranges: Array<[number, number]> = [];
  for (let p = 0; p < k; p++) {
    sd[p] = Math.sqrt(o.covariance[p * k + p]);
    const m = o.mean[p];
    ranges.push(sd[p] > 0 ? [m - HALF_WIDTH_SIGMA * sd[p], m + HALF_WIDTH_SIGMA * sd[p]] : padDegenerate(m, m));
    // Keep a known truth in view even when it lies beyond 4σ.
    const t = o.truths?.[p];
    if (t !== undefined && Number.isFinite(t)) {
      const pad = 0.05 * (ranges[p][1] - ranges[p][0]);
      ranges[p] = [Math.min(ranges[p][0], t - pad), Math.max(ranges[p][1], t + pad)];
    }
  }
  let svg = "";
  for (let r = 0; r < k; r++) {
    for (let c = 0; c <= r; c++) {
      const x0 = left + c * (cell + gap), y0 = top + r * (cell + gap);
      const xs: AxisScale = { domain: ranges[c], range: [x0, x0 + cell], log: false };
      const onBottom = r === k - 1, onLeft = c === 0 && r > 0;
      const tx = o.truths?.[c], ty = o.truths?.[r];
      if (r === c) {
        const ys: AxisScale = { domain: [0, 1.1], range: [y0 + cell, y0], log: false };
        svg += densityCurve(o.mean[c], sd[c], xs, ys);
        svg += drawFrame({ x: xs, y: ys, ticks: 4, fontPx: font, xTickLabels: onBottom, yTickLabels: false, xLabel: onBottom ? o.names[c] : undefined });
        if (tx !== undefined && Number.isFinite(tx)) svg += line(scaleToPx(xs, tx), y0, scaleToPx(xs, tx), y0 + cell, TRUTH, 1.2);
      } else {
        const ys: AxisScale = { domain: ranges[r], range: [y0 + cell, y0], log: false };
        for (const s of ELLIPSE_RADII) {
          const e = covarianceEllipse(o.mean[c], o.mean[r], o.covariance[c * k + c], o.covariance[c * k + r], o.covariance[r * k + r], s);
          const pxs = new Float64Array(e.x.length), pys = new Float64Array(e.y.length);
          for (let q = 0; q < e.x.length; q++) {
            pxs[q] = scaleToPx(xs, e.x[q]);
            pys[q] = scaleToPx(ys, e.y[q]);
          }
          svg += polylines(pxs, pys, COLOUR, s === 1 ? 1.6 : 1, s === 1 ? undefined : "5 3");
        }
        svg += marker(scaleToPx(xs, o.mean[c]), scaleToPx(ys, o.mean[r]), "plus", 7, COLOUR);
        if (tx !== undefined && Number.isFinite(tx)) svg += line(scaleToPx(xs, tx), y0, scaleToPx(xs, tx), y0 + cell, TRUTH, 1);
        if (ty !== undefined && Number.isFinite(ty)) svg += line(x0, scaleToPx(ys, ty), x0 + cell, scaleToPx(ys, ty), TRUTH, 1);
        svg += drawFrame({
          x: xs, y: ys, ticks: 4, fontPx: font, xTickLabels: onBottom, yTickLabels: onLeft,
          xLabel: onBottom ? o.names[c] : undefined, yLabel: onLeft ? o.names[r] : undefined,
        });
      }
    }
  }
  const size = k * cell + (k - 1) * gap;
  const width = Math.max(left + size + right, textWidthPx(o.title, font * 1.2) + 24);
  svg += text(width / 2, font * 1.5, o.title, { sizePx: font * 1.2, anchor: "middle", weight: "bold" });
  // Legend in the empty upper-right triangle (there is none with a single parameter).
  if (k > 1) {
    const lx = left + size - font * 17, ly = top + font;
    svg += line(lx, ly, lx + 20, ly, COLOUR, 1.6) + text(lx + 26, ly, "39.3% (1σ in 2-D)", { sizePx: font, baseline: "middle" });
    svg += line(lx, ly + font * 1.5, lx + 20, ly + font * 1.5, COLOUR, 1, "5 3") + text(lx + 26, ly + font * 1.5, "86.5% (2σ in 2-D)", { sizePx: font, baseline: "middle" });
    if (o.truths) svg += line(lx, ly + font * 3, lx + 20, ly + font * 3, TRUTH, 1.2) + text(lx + 26, ly + font * 3, "truth", { sizePx: font, baseline: "middle" });
  }
  return { widthPx: width, heightPx: top + size + bottom, svg };
}

/** The normal density scaled to peak 1, or a vertical line when σ is 0 or unknown. */
function densityCurve(mean: number, sd: number, xs: AxisScale, ys: AxisScale): string {
  if (!(sd > 0)) {
    const xp = scaleToPx(xs, mean);
    return line(xp, ys.range[0], xp, scaleToPx(ys, 1), COLOUR, 1.3);
  }
  const pxs = new Float64Array(CURVE_POINTS), pys = new Float64Array(CURVE_POINTS);
  const [a, b] = xs.domain;
  for (let q = 0; q < CURVE_POINTS; q++) {
    const x = a + ((b - a) * q) / (CURVE_POINTS - 1);
    const z = (x - mean) / sd;
    pxs[q] = scaleToPx(xs, x);
    pys[q] = scaleToPx(ys, Math.exp(-0.5 * z * z));
  }
  return polylines(pxs, pys, COLOUR, 1.3);
}

/**
 * Estimated width of a line of text [px]: 0.62 em per character, a little above the mean advance
 * of DejaVu Sans (the only font the renderer loads) for mixed lower-case text and punctuation.
 */
export function textWidthPx(textContent: string, fontPx: number): number {
  return 0.62 * fontPx * [...textContent].length;
}
