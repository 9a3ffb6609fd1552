/**
 * Walker traces of an ensemble chain: for a few parameters, every walker's value against step,
 * with the end of the burn-in marked. The parameters shown are those with the longest
 * integrated autocorrelation time, because they are the slowest to mix and so the ones whose
 * traces say most about convergence. Long chains are thinned for drawing only.
 * Reference: common practice for ensemble samplers (Foreman-Mackey et al. 2013, PASP 125, 306, §6,
 * on autocorrelation time and burn-in).
 */
import { composeFigure } from "../../io/layout.js";
import { PALETTE, xyPanel, type Series } from "../../io/xyPanel.js";
import type { ChainOutput } from "../outcome.js";

/** At most this many parameters, walkers and drawn points per walker. */
export const TRACE_MAX_PARAMETERS = 4;
const MAX_WALKERS = 16;
const MAX_POINTS = 500;

/**
 * Indices of the parameters to show: up to `max`, longest autocorrelation time first (non-finite
 * τ counts as longest — an unmeasured τ is the least reassuring), ties by index.
 */
export function traceParameters(tau: Float64Array, dim: number, max = TRACE_MAX_PARAMETERS): number[] {
  const key = (p: number): number => (Number.isFinite(tau[p]) ? tau[p] : Infinity);
  const idx = Array.from({ length: dim }, (_, p) => p);
  idx.sort((a, b) => key(b) - key(a) || a - b);
  return idx.slice(0, Math.min(max, dim)).sort((a, b) => a - b);
}

/**
 * The trace figure.
 * @param chain ensemble output (steps × walkers × dim)
 * @param names parameter names, one per dimension
 * @returns a complete SVG document
 */
export function chainTraceSvg(chain: ChainOutput, names: readonly string[]): string {
  const { nSteps, nWalkers, dim } = chain;
  const stride = Math.max(1, Math.ceil(nSteps / MAX_POINTS));
  const nDraw = Math.ceil(nSteps / stride);
  const walkers = Math.min(nWalkers, MAX_WALKERS);
  const steps = new Float64Array(nDraw);
  for (let s = 0; s < nDraw; s++) steps[s] = s * stride;
  const panels = traceParameters(chain.tau, dim).map((p) => {
    const series: Series[] = [];
    for (let w = 0; w < walkers; w++) {
      const y = new Float64Array(nDraw);
      for (let s = 0; s < nDraw; s++) y[s] = chain.chain[(s * stride * nWalkers + w) * dim + p];
      series.push({ x: steps, y, style: "line", widthPx: 0.8, colour: PALETTE[w % 6] });
    }
    const tau = chain.tau[p];
    return xyPanel({
      title: `${names[p] ?? `parameter ${p}`} (τ ≈ ${Number.isFinite(tau) ? tau.toPrecision(3) : "?"} steps)`,
      xLabel: "step",
      yLabel: "value",
      series,
      vLines: chain.burnIn > 0 ? [{ x: chain.burnIn, colour: "#000", dash: "6 4" }] : [],
      legend: "none",
      widthPx: 820, heightPx: 210,
    });
  });
  const shown = walkers < nWalkers ? `${walkers} of ${nWalkers} walkers` : `${nWalkers} walkers`;
  return composeFigure(panels, { columns: 1, title: `Walker traces (${shown}); dashed line: end of burn-in at step ${chain.burnIn}` });
}
