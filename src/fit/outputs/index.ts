/**
 * The fit's output files except result.json (which the fit driver writes): FITS images, PNG
 * figures, evidence_curve.csv (pixelised source), chain.h5 and report.html. Every file is written atomically (temporary file + rename).
 * Reference: DESIGN.md ("Images written by `fit`", the `fit` command's outputs).
 */
import { mkdirSync } from "node:fs";
import { join } from "node:path";
import { writeFileAtomic } from "../../io/atomicWrite.js";
import type { FitOutcome } from "../outcome.js";
import { writeChainFile } from "./chainFile.js";
import { evidenceCurveCsv } from "./evidenceFigure.js";
import { writeFitFigures } from "./figures.js";
import { writeFitFitsImages } from "./fitsImages.js";
import { buildReportHtml } from "./report.js";

export { encodeChainFile, writeChainFile, CHAIN_FORMAT, CHAIN_FORMAT_VERSION, type ChainFileContent } from "./chainFile.js";
export { fitFigureSpecs, writeFitFigures, HESSIAN_CORNER_TITLE, type FigureSpec, type WrittenFigure } from "./figures.js";
export { encodeGridImage, writeFitFitsImages, type FitFitsOptions } from "./fitsImages.js";
export { covarianceEllipse, gaussianCornerPanel, ELLIPSE_RADII, type GaussianCornerOptions } from "./gaussianCorner.js";
export { imageExtentArcsec, joinPolylines, formatJy } from "./imageFigures.js";
export { buildReportHtml, escapeHtml, formatNumber, formatWithSigma, type ReportOptions } from "./report.js";
export { chainTraceSvg, traceParameters, TRACE_MAX_PARAMETERS } from "./traceFigure.js";
export { amplitudePhase, uvAmplitudeSvg, type AmplitudePhase } from "./uvFigure.js";

/** Options for {@link writeFitOutputs}. */
export interface FitOutputOptions {
  /** Time stamp of the FITS DATE cards and the report (default: now). */
  date?: Date;
}

/**
 * Write every output file of a fit except result.json into `dir` (created if needed):
 * FITS images, PNG figures, chain.h5 (when a chain or nested samples exist) and report.html.
 * @param dir output folder
 * @param outcome the finished fit
 * @returns paths written, relative to `dir`, in writing order (report.html last)
 * Reference: DESIGN.md; layouts in docs/chain-layout.md.
 */
export async function writeFitOutputs(dir: string, outcome: FitOutcome, options: FitOutputOptions = {}): Promise<string[]> {
  mkdirSync(dir, { recursive: true });
  const written = writeFitFitsImages(dir, outcome, { date: options.date });
  const figures = await writeFitFigures(dir, outcome);
  written.push(...figures.map((f) => f.file));
  if (outcome.evidenceCurves) {
    writeFileAtomic(join(dir, "evidence_curve.csv"), evidenceCurveCsv(outcome.evidenceCurves));
    written.push("evidence_curve.csv");
  }
  if (outcome.chain || outcome.nested) {
    await writeChainFile(join(dir, "chain.h5"), { names: outcome.names, units: outcome.units, chain: outcome.chain, nested: outcome.nested });
    written.push("chain.h5");
  }
  writeFileAtomic(join(dir, "report.html"), buildReportHtml(outcome, figures, { date: options.date }));
  written.push("report.html");
  return written;
}
