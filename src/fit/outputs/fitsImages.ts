/**
 * The fit's FITS images: the best-fit lensed sky, the reconstructed source (and its 1σ map), and
 * the natural-weighted dirty images of the data, the model and the residual.
 *
 * Sky images carry the SIN-projection WCS about the phase centre (CRPIX = N/2 + 1, CDELT1 < 0:
 * CONVENTIONS.md). Source-plane images are not on the sky: they use the linear offset axes of
 * src/io/fits.ts (XOFFSET / YOFFSET in arcsec); because the source grid may be centred away from
 * the origin, the reference values CRVAL1/2 are set to the grid centre, so that FITS pixel
 * CRPIX = N/2 + 1 reads back at (centreX, centreY) as it should.
 *
 * Reference: FITS Standard 4.0 (2016); Greisen & Calabretta 2002, A&A 395, 1061 (WCS paper I);
 * Calabretta & Greisen 2002, A&A 395, 1077 (SIN projection).
 */
import { join } from "node:path";
import { encodeFitsImage, type FitsBeam, type FitsCelestial } from "../../io/fits.js";
import { writeFileAtomic } from "../../io/atomicWrite.js";
import { CARD_LENGTH, formatCard } from "../../io/fitsHeader.js";
import type { FitOutcome, GridImage } from "../outcome.js";

/** Options shared by every image of one fit. */
export interface FitFitsOptions {
  /** DATE card of every file (default: now); fix it for byte-identical output. */
  date?: Date;
}

/**
 * Encode one GridImage as FITS bytes (float32 data, BUNIT from the image).
 * @param image the image; `centreXArcsec/centreYArcsec` are honoured for offset (source-plane) images
 * @param celestial sky (SIN about a phase centre [deg]) or offset (source plane, arcsec)
 * @param beam synthesised beam for Jy/beam images [arcsec, deg]
 * @returns the file contents
 * Reference: FITS Standard 4.0 §4.4.2 (CRVAL/CRPIX/CDELT), WCS paper I.
 */
export function encodeGridImage(
  image: GridImage,
  celestial: FitsCelestial,
  beam: FitsBeam | undefined,
  history: string[],
  options: FitFitsOptions = {},
): Uint8Array {
  const bytes = encodeFitsImage({
    data: image.data,
    nx: image.n,
    ny: image.n,
    cellArcsec: image.cellArcsec,
    celestial,
    bunit: image.unit,
    beam,
    bitpix: -32,
    date: options.date,
    history,
  });
  if (celestial.kind === "offset") {
    // The io writer puts CRVAL = 0 on offset axes; the source grid is centred on (centreX, centreY).
    replaceCard(bytes, "CRVAL1", image.centreXArcsec, "source-plane x at CRPIX1 [arcsec]");
    replaceCard(bytes, "CRVAL2", image.centreYArcsec, "source-plane y at CRPIX2 [arcsec]");
  } else if (image.centreXArcsec !== 0 || image.centreYArcsec !== 0) {
    // A sky grid off the phase centre would need a different CRPIX; FitOutcome promises 0.
    throw new RangeError(`sky image centred at (${image.centreXArcsec}, ${image.centreYArcsec}) arcsec; sky images must be centred on the phase centre`);
  }
  return bytes;
}

/**
 * Overwrite the value of an existing real-valued header card in encoded FITS bytes.
 * The card keeps its place (the header length does not change).
 */
function replaceCard(bytes: Uint8Array, keyword: string, value: number, comment: string): void {
  const key = keyword.padEnd(8);
  for (let pos = 0; pos + CARD_LENGTH <= bytes.length; pos += CARD_LENGTH) {
    const name = String.fromCharCode(...bytes.subarray(pos, pos + 8));
    if (name === "END     ") break;
    if (name !== key) continue;
    const card = formatCard({ keyword, value, comment });
    for (let k = 0; k < CARD_LENGTH; k++) bytes[pos + k] = card.charCodeAt(k);
    return;
  }
  // Only reached if the io writer stops emitting the card; a bug, not bad input.
  throw new Error(`FITS header has no ${keyword} card`);
}

/**
 * Write the fit's FITS images into `dir` atomically.
 * @returns the file names written (relative to `dir`)
 * Reference: CONVENTIONS.md (grid, WCS), DESIGN.md (output files).
 */
export function writeFitFitsImages(dir: string, outcome: FitOutcome, options: FitFitsOptions = {}): string[] {
  const [raDeg, decDeg] = outcome.phaseCentreDeg;
  const sky: FitsCelestial = { kind: "sky", raDeg, decDeg };
  const offset: FitsCelestial = { kind: "offset" };
  const beam = outcome.datasets[0]?.beam;
  const provenance = `arcfringe ${outcome.version}: ${outcome.command}`;
  const im = outcome.images;
  const items: Array<[string, GridImage, FitsCelestial, FitsBeam | undefined, string]> = [
    ["model_sky.fits", im.modelSky, sky, undefined, "best-fit lensed sky, not attenuated by the primary beam"],
    ["source.fits", im.source, offset, undefined, "best-fit source, source-plane offsets"],
  ];
  if (im.sourceSigma) items.push(["source_sigma.fits", im.sourceSigma, offset, undefined, "1-sigma map of the source reconstruction"]);
  items.push(
    ["data_dirty.fits", im.dataDirty, sky, beam, "natural-weighted dirty image of the data (first dataset)"],
    ["model_dirty.fits", im.modelDirty, sky, beam, "natural-weighted dirty image of the best-fit model visibilities"],
    ["residual_dirty.fits", im.residualDirty, sky, beam, "natural-weighted dirty image of data minus model"],
  );
  const written: string[] = [];
  for (const [name, image, celestial, b, what] of items) {
    writeFileAtomic(join(dir, name), encodeGridImage(image, celestial, b, [what, provenance], options));
    written.push(name);
  }
  return written;
}
