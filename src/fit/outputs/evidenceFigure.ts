/**
 * The evidence curves of a pixelised source: log E − max against λ and, for a kernel prior,
 * against its correlation length ℓ, on logarithmic abscissae; and the same numbers as CSV.
 * Reference: Suyu et al. 2006, MNRAS 371, 983 (λ at the maximum of the evidence; from memory);
 * the figure's layout is this project's own.
 */
import { composeFigure } from "../../io/layout.js";
import type { Panel } from "../../io/svg.js";
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

/** One panel: log E − max against a hyperparameter on a log axis, the value in use dashed. */
function curvePanel(title: string, xLabel: string, x: Float64Array, logE: Float64Array, best: number, colour: string): Panel {
  const rel = relative(logE);
  return xyPanel({
    title,
    xLabel,
    yLabel: yLabel(rel),
    xLog: true,
    series: [{ x, y: rel, style: "line", colour }],
    yRange: yRange(rel),
    vLines: [{ x: best, colour: "#000", dash: "6 4" }],
    legend: "none",
    widthPx: 420, heightPx: 300,
  });
}

/** The figure (one panel per hyperparameter), as an SVG document. */
export function evidenceCurveSvg(c: Curves): string {
  const panels = [curvePanel("log E against λ", "λ (regularisation strength)", c.lambda.x, c.lambda.logEvidence, c.lambda.best, PALETTE[0])];
  if (c.scaleArcsec) {
    const sc = c.scaleArcsec;
    panels.push(curvePanel("log E against ℓ", "ℓ (kernel correlation length, arcsec)", sc.x, sc.logEvidence, sc.best, PALETTE[1]));
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
