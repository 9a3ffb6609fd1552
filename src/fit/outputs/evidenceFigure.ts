/**
 * The evidence curves of a pixelised source: log E − max against λ and, for a kernel prior,
 * against its correlation length ℓ, on logarithmic abscissae; and the same numbers as CSV.
 * Reference: Suyu et al. 2006, MNRAS 371, 983, fig. of log E against λ (from memory); the layout
 * is this project's own.
 */
import { composeFigure } from "../../io/layout.js";
import { PALETTE, xyPanel } from "../../io/xyPanel.js";
import type { FitOutcome } from "../outcome.js";

type Curves = NonNullable<FitOutcome["evidenceCurves"]>;

function relative(logE: Float64Array): Float64Array {
  let max = -Infinity;
  for (const v of logE) if (v > max) max = v;
  return Float64Array.from(logE, (v) => (Number.isFinite(v) ? v - max : NaN));
}

/** Down to 50 below the maximum at most: far from the peak the curve drops by thousands and would flatten it. */
function yRange(rel: Float64Array): [number, number] | undefined {
  let min = 0;
  for (const v of rel) if (v < min) min = v;
  return min < -50 ? [-50, 2] : undefined;
}

function yLabel(rel: Float64Array): string {
  return yRange(rel) ? "log E − max (clipped at −50)" : "log E − max";
}

/** The figure (one panel per hyperparameter), as an SVG document. */
export function evidenceCurveSvg(c: Curves): string {
  const relLambda = relative(c.lambda.logEvidence);
  const relScale = c.scaleArcsec ? relative(c.scaleArcsec.logEvidence) : new Float64Array(0);
  const panels = [
    xyPanel({
      title: "log E against λ",
      xLabel: "λ (regularisation strength)",
      yLabel: yLabel(relLambda),
      xLog: true,
      series: [{ x: c.lambda.x, y: relLambda, style: "line", colour: PALETTE[0] }],
      yRange: yRange(relLambda),
      vLines: [{ x: c.lambda.best, colour: "#000", dash: "6 4" }],
      legend: "none",
      widthPx: 420, heightPx: 300,
    }),
  ];
  if (c.scaleArcsec) {
    panels.push(
      xyPanel({
        title: "log E against ℓ",
        xLabel: "ℓ (kernel correlation length, arcsec)",
        yLabel: yLabel(relScale),
        xLog: true,
        series: [{ x: c.scaleArcsec.x, y: relScale, style: "line", colour: PALETTE[1] }],
        yRange: yRange(relScale),
        vLines: [{ x: c.scaleArcsec.best, colour: "#000", dash: "6 4" }],
        legend: "none",
        widthPx: 420, heightPx: 300,
      }),
    );
  }
  return composeFigure(panels, { columns: panels.length, title: "Bayesian evidence of the pixelised source at the best-fit lens" });
}

/** CSV: header `hyperparameter,value,log_evidence`, rows for λ then ℓ, each sorted by value. */
export function evidenceCurveCsv(c: Curves): string {
  const rows = ["hyperparameter,value,log_evidence"];
  const add = (name: string, x: Float64Array, y: Float64Array) => {
    for (let i = 0; i < x.length; i++) rows.push(`${name},${x[i]},${Number.isFinite(y[i]) ? y[i] : "nan"}`);
  };
  add("lambda", c.lambda.x, c.lambda.logEvidence);
  if (c.scaleArcsec) add("scale_arcsec", c.scaleArcsec.x, c.scaleArcsec.logEvidence);
  return rows.join("\n") + "\n";
}
