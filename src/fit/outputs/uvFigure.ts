/**
 * Binned visibilities against uv distance: amplitude and phase of the data (with 1σ error bars)
 * and of the best-fit model, one row of two panels per dataset.
 *
 * Amplitude and phase of a binned mean V = re + i·im with independent 1σ = σ on each part: to first
 * order, σ_|V| = σ and σ_φ = σ/|V| rad. When |V| ≲ σ the phase is not constrained and its error bar
 * is capped at 180°. (At low signal-to-noise |V| is biased high by noise; the bars are a guide.)
 * Reference: Thompson, Moran & Swenson 2017, §6.2 and §9.3 (amplitude and phase of a noisy
 * visibility; the first-order errors are the linearisation of |V| and arg V).
 */
import { composeFigure } from "../../io/layout.js";
import { xyPanel } from "../../io/xyPanel.js";
import { RAD_TO_DEG } from "../../units.js";
import type { UvBins } from "../outcome.js";

/** Amplitude [Jy], phase [deg] and their first-order 1σ errors of binned visibilities. */
export interface AmplitudePhase {
  amplitudeJy: Float64Array;
  amplitudeErrJy: Float64Array;
  phaseDeg: Float64Array;
  phaseErrDeg: Float64Array;
}

/**
 * Amplitude and phase (and 1σ errors, see the module comment) of complex values.
 * Bins with count 0 (or non-finite values) give NaN, which the plots skip.
 * @param re, im real and imaginary parts [Jy]
 * @param sigmaJy 1σ of each part [Jy] (omit for a model: errors NaN)
 * @param count samples per bin (omit to take every entry as filled)
 * Reference: see the module comment.
 */
export function amplitudePhase(re: Float64Array, im: Float64Array, sigmaJy?: Float64Array, count?: Int32Array): AmplitudePhase {
  const n = re.length;
  const out: AmplitudePhase = {
    amplitudeJy: new Float64Array(n), amplitudeErrJy: new Float64Array(n),
    phaseDeg: new Float64Array(n), phaseErrDeg: new Float64Array(n),
  };
  for (let k = 0; k < n; k++) {
    const empty = count !== undefined && !(count[k] > 0);
    const a = Math.hypot(re[k], im[k]);
    const s = sigmaJy ? sigmaJy[k] : NaN;
    out.amplitudeJy[k] = empty ? NaN : a;
    out.phaseDeg[k] = empty ? NaN : Math.atan2(im[k], re[k]) * RAD_TO_DEG;
    out.amplitudeErrJy[k] = empty ? NaN : s;
    out.phaseErrDeg[k] = empty ? NaN : a > 0 ? Math.min(180, (s / a) * RAD_TO_DEG) : 180;
  }
  return out;
}

/**
 * The figure: per dataset, amplitude vs uv distance and phase vs uv distance, data as points with
 * error bars, the model as a line.
 * @param bins one entry per dataset
 * @param names dataset names, for the panel titles
 * @returns a complete SVG document
 */
export function uvAmplitudeSvg(bins: readonly UvBins[], names: readonly string[]): string {
  const panels = [];
  for (let d = 0; d < bins.length; d++) {
    const b = bins[d];
    const data = amplitudePhase(b.dataRe, b.dataIm, b.sigmaJy, b.count);
    const model = amplitudePhase(b.modelRe, b.modelIm, undefined, b.count);
    const label = bins.length > 1 ? `${names[d] ?? `dataset ${d}`}: ` : "";
    panels.push(xyPanel({
      title: `${label}amplitude`,
      xLabel: "uv distance [kλ]",
      yLabel: "amplitude [Jy]",
      series: [
        { x: b.uvDistKlambda, y: data.amplitudeJy, yErr: data.amplitudeErrJy, style: "points", marker: "circle", label: "data (binned, ±1σ)" },
        { x: b.uvDistKlambda, y: model.amplitudeJy, style: "line", label: "best-fit model" },
      ],
      widthPx: 440, heightPx: 300,
    }));
    panels.push(xyPanel({
      title: `${label}phase`,
      xLabel: "uv distance [kλ]",
      yLabel: "phase [deg]",
      yRange: [-200, 200],
      hLines: [{ y: 0 }],
      series: [
        { x: b.uvDistKlambda, y: data.phaseDeg, yErr: data.phaseErrDeg, style: "points", marker: "circle", label: "data (binned, ±1σ)" },
        { x: b.uvDistKlambda, y: model.phaseDeg, style: "line", label: "best-fit model" },
      ],
      widthPx: 440, heightPx: 300,
    }));
  }
  return composeFigure(panels, { columns: 2, title: "Binned visibilities: data and best-fit model" });
}
