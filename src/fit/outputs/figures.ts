/**
 * The fit's PNG figures: which figures a FitOutcome calls for, their captions, and their
 * rendering and atomic writing. The PNG bytes are returned as well, so the HTML report embeds
 * exactly what was written without reading the files back.
 * Reference: DESIGN.md (files written by `fit`).
 */
import { join } from "node:path";
import { writeFileAtomic } from "../../io/atomicWrite.js";
import { cornerPlot } from "../../io/cornerPlot.js";
import { renderPng } from "../../io/render.js";
import { composeFigure } from "../../io/layout.js";
import { panelDocument } from "../../io/svg.js";
import type { FitOutcome } from "../outcome.js";
import { gaussianCornerPanel, textWidthPx } from "./gaussianCorner.js";
import {
  dataDirtySvg, dirtyComparisonSvg, modelSkySvg, residualDirtySvg, sourceSigmaSvg, sourceSvg,
} from "./imageFigures.js";
import { evidenceCurveSvg } from "./evidenceFigure.js";
import { chainTraceSvg } from "./traceFigure.js";
import { uvAmplitudeSvg } from "./uvFigure.js";

/** One figure: file name, caption for the report, and its SVG document. */
export interface FigureSpec {
  file: string;
  caption: string;
  svg: string;
}

/** A written figure. */
export interface WrittenFigure {
  file: string;
  caption: string;
  png: Buffer;
}

/** Title of the corner figure when it is drawn from the curvature rather than from samples. */
export const HESSIAN_CORNER_TITLE = "Posterior: Gaussian curvature (Hessian) approximation at the maximum";

/**
 * The figures this outcome calls for, in report order.
 * Reference: DESIGN.md (output files); captions are this module's own wording.
 */
export function fitFigureSpecs(o: FitOutcome): FigureSpec[] {
  const out: FigureSpec[] = [
    {
      file: "dirty_comparison.png",
      caption: "Natural-weighted dirty images of the data, the best-fit model and the residual (data − model) of the first dataset, on one symmetric colour scale, so structure left in the residual can be judged against the data. Critical curves are drawn on the model; the ellipse in the lower-left corner is the synthesised beam (FWHM).",
      svg: dirtyComparisonSvg(o),
    },
    {
      file: "model_sky.png",
      caption: "Best-fit lensed sky brightness (Jy/pixel, before primary-beam attenuation) with the critical curves of the best-fit lens. North up, East left.",
      svg: modelSkySvg(o),
    },
    {
      file: "source.png",
      caption: "Reconstructed source in the source plane (Jy/arcsec²) with the caustics of the best-fit lens. Axes are source-plane offsets.",
      svg: sourceSvg(o),
    },
  ];
  const sigmaSvg = sourceSigmaSvg(o);
  if (sigmaSvg) {
    out.push({ file: "source_sigma.png", caption: "1σ uncertainty of the pixelised source reconstruction (Jy/arcsec²).", svg: sigmaSvg });
  }
  if (o.evidenceCurves) {
    out.push({
      file: "evidence_curve.png",
      caption:
        "Log-evidence of the pixelised source at the best-fit lens, relative to its maximum, against the regularisation strength λ" +
        (o.evidenceCurves.scaleArcsec ? " (kernel correlation length held) and against the kernel's correlation length ℓ (λ re-optimised at each)" : "") +
        "; dashed: the values used. A change of 1 in log E is a likelihood ratio of e. The values are in evidence_curve.csv.",
      svg: evidenceCurveSvg(o.evidenceCurves),
    });
  }
  out.push(
    {
      file: "data_dirty.png",
      caption: "Natural-weighted dirty image of the data (first dataset), Jy/beam, with the synthesised beam.",
      svg: dataDirtySvg(o),
    },
    {
      file: "residual_dirty.png",
      caption: `Dirty image of the residual visibilities (data − model), Jy/beam, on a symmetric scale; rms ${o.images.residualRmsJyPerBeam.toPrecision(3)} Jy/beam. Critical curves are drawn over it for orientation.`,
      svg: residualDirtySvg(o),
    },
  );
  if (o.uvBins.length > 0) {
    out.push({
      file: "uv_amplitude.png",
      caption: "Visibilities averaged in bins of uv distance: amplitude and phase of the data (points, ±1σ of the bin mean) and of the best-fit model (line). The model matches the data where the points scatter about the line within their error bars.",
      svg: uvAmplitudeSvg(o.uvBins, o.datasets.map((d) => d.name)),
    });
  }
  const corner = cornerSpec(o);
  if (corner) out.push(corner);
  if (o.chain) {
    out.push({
      file: "chain_trace.png",
      caption: "Walker positions against step for the parameters with the longest autocorrelation times. After the burn-in (dashed line) the walkers should wander about one common level with no trend.",
      svg: chainTraceSvg(o.chain, o.names),
    });
  }
  return out;
}

/** The corner figure: from samples when there are some, else from the covariance (or σ alone). */
function cornerSpec(o: FitOutcome): FigureSpec | undefined {
  const dim = o.names.length;
  if (dim === 0) return undefined;
  const truths = o.truth ? Array.from(o.truth, (t) => (Number.isFinite(t) ? t : undefined)) : undefined;
  const ps = o.posteriorSamples;
  if (ps && ps.n > 0) {
    const columns: Float64Array[] = [];
    for (let p = 0; p < dim; p++) {
      const col = new Float64Array(ps.n);
      for (let s = 0; s < ps.n; s++) col[s] = ps.samples[s * dim + p];
      columns.push(col);
    }
    const cell = Math.max(70, Math.min(130, Math.floor(1500 / dim)));
    // About √n samples per bin edge keeps histograms of short runs from being mostly empty bins.
    const bins = Math.max(10, Math.min(30, Math.round(Math.sqrt(ps.n) / 1.5)));
    const panel = cornerPlot({
      samples: columns, names: o.names, weights: ps.weights, truths, ranges: columns.map((c, p) => rangeWithTruth(c, truths?.[p])),
      cellPx: cell, bins,
    });
    const source = o.uncertaintyMethod === "nested" ? "nested-sampling (weighted)" : "ensemble-sampler";
    const title = `Posterior from ${ps.n} ${source} samples`;
    // The cornerPlot panel leaves 12 px right of its last cell; a long last name overhangs it.
    const overhang = Math.max(0, textWidthPx(o.names[dim - 1], 11) / 2 - cell / 2 - 4);
    const wide = { ...panel, widthPx: Math.max(panel.widthPx + overhang, textWidthPx(title, 14) + 10) };
    return {
      file: "corner.png",
      caption: `${title}: 1-D histograms on the diagonal; below it, 2-D histograms with contours enclosing 39.3% and 86.5% of the samples.${truths ? " Orange lines mark the true values." : ""}`,
      svg: composeFigure([wide], { title }),
    };
  }
  let cov = o.covariance;
  let note = "";
  if (!cov) {
    if (!Array.from(o.sigma).some((s) => s > 0)) return undefined;
    cov = new Float64Array(dim * dim);
    for (let p = 0; p < dim; p++) cov[p * dim + p] = o.sigma[p] * o.sigma[p];
    note = " No covariance was available, so the ellipses ignore correlations.";
  }
  const panel = gaussianCornerPanel({ names: o.names, mean: o.value, covariance: cov, truths: o.truth, title: HESSIAN_CORNER_TITLE });
  return {
    file: "corner.png",
    caption: `No posterior samples were drawn: this is the curvature (Hessian) approximation, a Gaussian centred on the maximum with the covariance from the curvature there. Diagonal: normal densities; below: ellipses enclosing 39.3% (solid) and 86.5% (dashed) of each 2-D marginal. It can be misleading for skewed or multi-modal posteriors; run with sampling for a faithful picture.${note}${o.truth ? " Orange lines mark the true values." : ""}`,
    svg: panelDocument(panel),
  };
}

/** Finite sample range padded by 5%, widened to show the truth when there is one. */
function rangeWithTruth(values: Float64Array, truth: number | undefined): [number, number] {
  let lo = Infinity, hi = -Infinity;
  for (let k = 0; k < values.length; k++) {
    const v = values[k];
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  if (truth !== undefined) {
    lo = Math.min(lo, truth);
    hi = Math.max(hi, truth);
  }
  if (!(hi > lo)) {
    const d = Number.isFinite(lo) && lo !== 0 ? Math.abs(lo) * 0.1 : 1;
    return Number.isFinite(lo) ? [lo - d, lo + d] : [0, 1];
  }
  const pad = 0.05 * (hi - lo);
  return [lo - pad, hi + pad];
}

/**
 * Render every figure to PNG and write it into `dir` atomically.
 * @returns the written figures (file name, caption, PNG bytes) in report order
 */
export async function writeFitFigures(dir: string, o: FitOutcome): Promise<WrittenFigure[]> {
  const out: WrittenFigure[] = [];
  for (const f of fitFigureSpecs(o)) {
    const png = await renderPng(f.svg);
    writeFileAtomic(join(dir, f.file), png);
    out.push({ file: f.file, caption: f.caption, png });
  }
  return out;
}
