/**
 * `arcfringe image FILE --out DIR`: the dirty image and dirty beam (PSF) of a visibility file,
 * for diagnostics only (no fit reads them). Writes `dirty.fits` and `psf.fits` (SIN projection
 * about the file's phase centre, East left: CDELT1 < 0; BUNIT Jy/beam; BMAJ/BMIN/BPA from a
 * Gaussian fit to the PSF main lobe) and `dirty.png`, and prints the peak, the image rms and
 * the beam.
 *
 * Correlations: by default every parallel-hand entry (RR, LL, XX, YY) and every Stokes I entry
 * is imaged as an estimate of I and cross hands are left out; with natural weighting this is
 * the same image as Stokes I formed first, since w_I·(V₁+V₂)/2 = w(V₁+V₂) for w₁ = w₂ = w
 * (CONVENTIONS.md "Stokes I"). `--stokes-i` forms Stokes I first, which also drops a lone
 * linear hand (XX alone is I + Q).
 *
 * The rms printed is 1.4826 × the median absolute deviation of all pixels (the σ of Gaussian
 * noise, robust to the source itself; common practice), next to the thermal noise the weights
 * predict.
 * Reference: src/fourier/dirty.ts (imaging), src/fourier/beamFit.ts (beam); FITS WCS: Greisen &
 * Calabretta 2002.
 */
import { InputError } from "../errors.js";
import { checkOutDir, fluxText, fmt, note, out, printJson, printTable, warn, withUnit } from "./output.js";
import type { CommandSpec } from "./spec.js";

export interface ImageOptions {
  out?: string;
  size?: number;
  cell?: number;
  weighting: "natural" | "uniform" | "briggs";
  robust: number;
  stokesI?: boolean;
  json?: boolean;
  debug?: boolean;
}

export const imageCommand: CommandSpec<ImageOptions> = {
  name: "image",
  args: "<file>",
  summary: "dirty image and dirty beam of a visibility file (diagnostics only)",
  options: [
    { flags: "--out <dir>", description: "folder for dirty.fits, psf.fits and dirty.png (required)", kind: "string" },
    { flags: "--size <pixels>", description: "image size N, even, 4–2048 (default: covers the primary beam, else 256)", kind: "int", min: 4, max: 2048 },
    {
      flags: "--cell <arcsec>", description: "pixel size (default: λ/B_max / 5)", kind: "number", min: 0,
      rangeHint: "the pixel size must be positive; about a fifth of the beam is usual",
    },
    {
      flags: "--weighting <natural | uniform | briggs>", description: "imaging weights", kind: "string",
      choices: ["natural", "uniform", "briggs"], defaultValue: "natural",
    },
    {
      flags: "--robust <R>", description: "Briggs robustness, −2 … 2 (used with --weighting briggs)", kind: "number",
      min: -2, max: 2, defaultValue: 0.5, rangeHint: "Briggs robustness must lie in [-2, 2] (-2 ≈ uniform, 2 ≈ natural); try --robust 0.5",
    },
    { flags: "--stokes-i", description: "form Stokes I from the parallel hands first (default: image each parallel hand as I)", kind: "flag" },
    { flags: "--json", description: "print peak, rms and beam as JSON on stdout", kind: "flag" },
  ],
  examples: [
    { comment: "Dirty image and PSF as FITS + PNG, default size and cell", command: "arcfringe image data.uvfits --out img" },
    { comment: "A 512-pixel Briggs-weighted image with 0.02″ pixels", command: "arcfringe image data.h5 --out img --size 512 --cell 0.02 --weighting briggs --robust 0" },
  ],
  action: runImage,
};

/** What `image` reports (also its --json output). */
export interface ImageReport {
  file: string;
  size: number;
  cellArcsec: number;
  weighting: string;
  robust: number | null;
  visibilities: number;
  phaseCentreDeg: [number, number] | null;
  peak: { valueJyPerBeam: number; xArcsec: number; yArcsec: number; pixel: [number, number]; raDeg: number | null; decDeg: number | null };
  rmsJyPerBeam: number;
  thermalNoiseJyPerBeam: number;
  beam: { bmajArcsec: number; bminArcsec: number; bpaDeg: number };
  outputs: string[];
}

async function runImage(args: string[], opts: ImageOptions): Promise<number> {
  const file = args[0];
  if (opts.out === undefined) throw new InputError("--out <dir> is required: give the folder for dirty.fits, psf.fits and dirty.png");
  checkOutDir(opts.out);
  const { readVisibilities, toStokesI } = await import("../vis/index.js");
  const { dirtyImage, defaultImaging, resolveDirtyOptions } = await import("../fourier/dirty.js");
  const { fitBeam } = await import("../fourier/beamFit.js");
  const { join, basename } = await import("node:path");

  const defaultsProbe = { size: opts.size ?? 256, cellArcsec: opts.cell ?? 1, weighting: opts.weighting, robust: opts.robust };
  resolveDirtyOptions(defaultsProbe); // option errors before reading a large file

  const read = await readVisibilities(file);
  const { vis, dropped, how } = selectForImaging(read.vis, !!opts.stokesI, toStokesI);
  if (vis.uLambda.length === 0) {
    throw new InputError(`${basename(file)}: no parallel-hand or Stokes I visibilities to image (${dropped} cross-hand entries only)`);
  }
  // Notes and warnings are printed only once everything has succeeded, so a failure is one line.
  const notes: string[] = [how];
  const warnings: string[] = [];
  const defaults = defaultImaging(read.vis);
  const size = opts.size ?? defaults.size;
  const cellArcsec = opts.cell ?? defaults.cellArcsec;
  if (opts.size === undefined) notes.push(`image ${defaults.note}`);
  if (opts.cell === undefined) notes.push(`cell ${fmt(cellArcsec, 4)}″ = λ/B_max / 5`);

  const result = dirtyImage(vis, { size, cellArcsec, weighting: opts.weighting, robust: opts.robust });
  if (result.countBeyondNyquist > 0) {
    warnings.push(`${result.countBeyondNyquist} visibilities lie beyond the Nyquist limit of a ${fmt(cellArcsec, 4)}″ cell and alias into the image; use a smaller --cell`);
  }
  const beam = fitBeam(result.psf, size, cellArcsec);
  const peak = findPeak(result.image, size, cellArcsec);
  const rms = robustRms(result.image);

  const centre = read.vis.phaseCentreDeg;
  const comments: string[] = [];
  if (!centre) {
    const msg = "the file gives no phase centre; the images use RA = 0°, Dec = 0° as a placeholder";
    warnings.push(msg);
    comments.push(msg);
  }
  const raDeg = centre ? centre[0] : 0;
  const decDeg = centre ? centre[1] : 0;
  const { encodeFitsImage, sinOffsetToSkyDeg } = await import("../io/fits.js");
  const { ARCSEC_TO_RAD } = await import("../units.js");
  const history = [
    `arcfringe image ${basename(file)}: ${vis.uLambda.length} visibilities, ${opts.weighting} weighting` +
      (opts.weighting === "briggs" ? ` (robust ${opts.robust})` : "") + `, ${size}x${size} pixels of ${cellArcsec} arcsec`,
  ];
  const common = {
    nx: size, ny: size, cellArcsec, celestial: { kind: "sky" as const, raDeg, decDeg },
    bunit: "Jy/beam", beam, objectName: read.vis.objectName, history, comments,
  };
  const dirtyFits = encodeFitsImage({ ...common, data: result.image });
  const psfFits = encodeFitsImage({ ...common, data: result.psf, comments: [...comments, "dirty beam (PSF): response to a 1 Jy point source at the phase centre"] });

  const { imagePanel, gridExtentArcsec } = await import("../io/imagePanel.js");
  const { composeFigure } = await import("../io/layout.js");
  const { renderPng } = await import("../io/render.js");
  const panel = imagePanel({
    data: result.image, nx: size, ny: size, extentArcsec: gridExtentArcsec(size, cellArcsec),
    title: `dirty image, ${opts.weighting} weighting`, unit: "Jy/beam", colourMap: "viridis", beam, mapWidthPx: 420,
  });
  const png = await renderPng(composeFigure([panel], { title: basename(file) }));

  const [peakRa, peakDec] = centre ? sinOffsetToSkyDeg(peak.xArcsec * ARCSEC_TO_RAD, peak.yArcsec * ARCSEC_TO_RAD, raDeg, decDeg) : [NaN, NaN];
  const outputs = ["dirty.fits", "psf.fits", "dirty.png"].map((f) => join(opts.out!, f));
  const report: ImageReport = {
    file, size, cellArcsec, weighting: opts.weighting, robust: opts.weighting === "briggs" ? opts.robust : null,
    visibilities: vis.uLambda.length, phaseCentreDeg: centre ?? null,
    peak: { ...peak, raDeg: centre ? peakRa : null, decDeg: centre ? peakDec : null },
    rmsJyPerBeam: rms, thermalNoiseJyPerBeam: result.noiseJyPerBeam, beam, outputs,
  };

  // Everything computed: now write, each file atomically.
  const { writeFileAtomic } = await import("../io/atomicWrite.js");
  writeFileAtomic(outputs[0], dirtyFits);
  writeFileAtomic(outputs[1], psfFits);
  writeFileAtomic(outputs[2], png);

  for (const n of notes) note(n);
  for (const w of warnings) warn(w);
  if (opts.json) printJson(report);
  else printImageReport(report);
  return 0;
}

/** Columns imaged; re/im [Jy] stay single precision, as `Visibilities` stores them. */
type VisLike = { uLambda: Float64Array; vLambda: Float64Array; reJy: Float32Array; imJy: Float32Array; weight: Float64Array };

/** The entries to image (see the module comment) and a one-line account of the choice. */
function selectForImaging(
  vis: import("../vis/types.js").Visibilities,
  stokesI: boolean,
  toStokesI: typeof import("../vis/stokes.js").toStokesI,
): { vis: VisLike; dropped: number; how: string } {
  if (stokesI) {
    const s = toStokesI(vis);
    const r = s.report;
    return {
      vis: s.vis, dropped: r.crossHandsIgnored + r.singleDropped,
      how: `Stokes I: ${s.vis.count} visibilities (${r.pairs} pairs, ${r.singleKept} single circular hands, ${r.alreadyI} already I; ` +
        `${r.singleDropped} single linear hands and ${r.crossHandsIgnored} cross hands not used)`,
    };
  }
  const keep = new Uint8Array(vis.count);
  let m = 0;
  for (let k = 0; k < vis.count; k++) {
    const c = vis.correlation[k];
    // I (1), RR (−1), LL (−2), XX (−5), YY (−6): each an estimate of I for an unpolarised sky.
    if (c === 1 || c === -1 || c === -2 || c === -5 || c === -6) {
      keep[k] = 1;
      m++;
    }
  }
  if (m === vis.count) {
    return { vis, dropped: 0, how: `imaging all ${m} visibilities` };
  }
  // Copies the kept entries of `a` into `out` (same element type, so float32 data stay float32).
  const pick = <T extends Float32Array | Float64Array>(a: T, out: T): T => {
    let q = 0;
    for (let k = 0; k < vis.count; k++) if (keep[k]) out[q++] = a[k];
    return out;
  };
  return {
    vis: {
      uLambda: pick(vis.uLambda, new Float64Array(m)), vLambda: pick(vis.vLambda, new Float64Array(m)),
      reJy: pick(vis.reJy, new Float32Array(m)), imJy: pick(vis.imJy, new Float32Array(m)),
      weight: pick(vis.weight, new Float64Array(m)),
    },
    dropped: vis.count - m,
    how: `imaging ${m} parallel-hand/Stokes I visibilities; ${vis.count - m} cross-hand entries left out`,
  };
}

/**
 * Brightest pixel and its offset, refined to sub-pixel precision by a parabola through the
 * peak and its two neighbours along each axis (common practice).
 */
function findPeak(image: Float64Array, n: number, cellArcsec: number): { valueJyPerBeam: number; xArcsec: number; yArcsec: number; pixel: [number, number] } {
  let best = 0;
  for (let p = 1; p < image.length; p++) if (image[p] > image[best]) best = p;
  const i = best % n;
  const j = Math.floor(best / n);
  const vertex = (a: number, b: number, c: number): number => {
    const den = a - 2 * b + c;
    return den < 0 ? Math.max(-0.5, Math.min(0.5, (0.5 * (a - c)) / den)) : 0;
  };
  const di = i > 0 && i < n - 1 ? vertex(image[best - 1], image[best], image[best + 1]) : 0;
  const dj = j > 0 && j < n - 1 ? vertex(image[best - n], image[best], image[best + n]) : 0;
  // Column i is at x = (N/2 − i)Δ (East), row j at y = (j − N/2)Δ (CONVENTIONS.md model grid).
  return { valueJyPerBeam: image[best], xArcsec: (n / 2 - (i + di)) * cellArcsec, yArcsec: (j + dj - n / 2) * cellArcsec, pixel: [i, j] };
}

/** 1.4826 × median absolute deviation from the median (σ of Gaussian noise). */
function robustRms(image: Float64Array): number {
  const a = Float64Array.from(image).sort();
  const med = a[a.length >> 1];
  for (let k = 0; k < a.length; k++) a[k] = Math.abs(a[k] - med);
  a.sort();
  return 1.4826 * a[a.length >> 1];
}

function printImageReport(r: ImageReport): void {
  const ew = (x: number): string => `${fmt(Math.abs(x), 4)}″ ${x >= 0 ? "East" : "West"}`;
  const ns = (y: number): string => `${fmt(Math.abs(y), 4)}″ ${y >= 0 ? "North" : "South"}`;
  const rows: [string, string][] = [
    ["image", `${r.size} × ${r.size} pixels of ${withUnit(r.cellArcsec, "″")}, ${r.weighting} weighting${r.robust !== null ? ` (robust ${r.robust})` : ""}`],
    ["peak", `${fluxText(r.peak.valueJyPerBeam, "Jy/beam")} at ${ew(r.peak.xArcsec)}, ${ns(r.peak.yArcsec)} of the phase centre`],
  ];
  if (r.peak.raDeg !== null && r.peak.decDeg !== null) rows.push(["peak RA, Dec", `${r.peak.raDeg.toFixed(7)}°, ${r.peak.decDeg.toFixed(7)}°`]);
  rows.push(
    ["rms", `${fluxText(r.rmsJyPerBeam, "Jy/beam")} (robust, whole image); thermal ${fluxText(r.thermalNoiseJyPerBeam, "Jy/beam")} from the weights`],
    ["peak / rms", fmt(r.peak.valueJyPerBeam / r.rmsJyPerBeam, 3)],
    ["beam", `${withUnit(r.beam.bmajArcsec, "″")} × ${withUnit(r.beam.bminArcsec, "″")}, PA ${fmt(r.beam.bpaDeg, 4)}°`],
    ["wrote", r.outputs.join(", ")],
  );
  printTable(rows, 0);
  out();
}
