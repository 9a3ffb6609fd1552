/**
 * The model grid of a fit or simulation: cell and size from the data and the model, unless the
 * model file's `field` block sets them. Cell ≈ synthesized beam / 6 (beam ≈ 1/|uv|max rad,
 * REFERENCES.md §7, common practice), never coarser than the Nyquist limit 1/(2|u|max) of the
 * longest baseline; the field covers the lensed emission the model can produce.
 */
import { InputError } from "../errors.js";
import type { FieldSpec, NumericModel } from "../model/types.js";
import { RAD_TO_ARCSEC } from "../units.js";

export interface FieldChoice {
  /** Pixels per side (even). */
  n: number;
  /** Cell [arcsec]. */
  cellArcsec: number;
  /** Field width n·cell [arcsec]. */
  sizeArcsec: number;
  /** Notes on how it was chosen (printed by the CLI). */
  notes: string[];
}

/** Default largest grid side: a 512² model grid keeps a χ² evaluation in tens of ms. */
export const MAX_GRID_N = 512;

/**
 * Radius [arcsec] around the phase centre that the lensed emission of `model` can reach: lens
 * centre offset + 1.5 × the largest Einstein radius + 4 × the largest source size + the source
 * offset. A heuristic (images of a source inside the caustic lie within ~θ_E + β of the lens).
 * @param thetaEMaxArcsec, sourceSizeMaxArcsec may come from the search bounds of free parameters.
 */
export function emissionRadiusArcsec(model: NumericModel, thetaEMaxArcsec?: number, sourceSizeMaxArcsec?: number): number {
  let lensOffset = 0;
  let thetaE = 0;
  for (const c of model.lens) {
    const anyC = c as unknown as Record<string, number>;
    if (c.type !== "shear") lensOffset = Math.max(lensOffset, Math.hypot(anyC.x ?? 0, anyC.y ?? 0));
    if (typeof anyC.theta_E === "number") thetaE = Math.max(thetaE, anyC.theta_E);
    if (c.type === "nfw" && typeof anyC.r_s === "number") thetaE = Math.max(thetaE, 0.5 * anyC.r_s);
  }
  let srcOffset = 0;
  let srcSize = 0;
  for (const s of model.source) {
    const anyS = s as unknown as Record<string, number>;
    srcOffset = Math.max(srcOffset, Math.hypot(anyS.x ?? 0, anyS.y ?? 0));
    const size = s.type === "sersic" ? anyS.r_eff * Math.max(1, anyS.n) / Math.sqrt(anyS.q) : s.type === "gaussian" ? anyS.sigma / Math.sqrt(anyS.q) : 0;
    srcSize = Math.max(srcSize, size);
  }
  thetaE = Math.max(thetaE, thetaEMaxArcsec ?? 0);
  srcSize = Math.max(srcSize, sourceSizeMaxArcsec ?? 0);
  return lensOffset + 1.5 * thetaE + 4 * srcSize + srcOffset;
}

/**
 * Choose the model grid.
 * @param uvMaxLambda largest |u| or |v| of the data [wavelengths] (the Nyquist limit uses the
 *   larger of the two, not |uv|)
 * @param radiusArcsec emission radius (emissionRadiusArcsec)
 * @param field the model file's `field` block, if any
 */
export function chooseField(uvMaxLambda: number, radiusArcsec: number, field?: FieldSpec, maxN = MAX_GRID_N): FieldChoice {
  const notes: string[] = [];
  if (!(uvMaxLambda > 0)) throw new InputError("the data have no baseline longer than zero; cannot choose a model grid");
  const nyquistArcsec = (0.5 / uvMaxLambda) * RAD_TO_ARCSEC;
  let cell: number;
  if (field?.pixel_arcsec !== undefined) {
    cell = field.pixel_arcsec;
    if (cell > nyquistArcsec) {
      throw new InputError(
        `field.pixel_arcsec = ${cell}″ is coarser than the Nyquist limit ${nyquistArcsec.toPrecision(4)}″ of the longest baseline; ` +
          `use at most ${nyquistArcsec.toPrecision(3)}″ (≈ beam/6 = ${(nyquistArcsec / 3).toPrecision(3)}″ is a good choice)`,
      );
    }
    notes.push(`cell ${cell}″ from the model file`);
  } else {
    cell = nyquistArcsec / 3; // beam/6 with beam ≈ 1/uvmax
    notes.push(`cell ${cell.toPrecision(3)}″ ≈ synthesized beam / 6`);
  }
  const size = field?.size_arcsec ?? Math.max(2, 2 * radiusArcsec);
  if (field?.size_arcsec === undefined) notes.push(`field ${size.toPrecision(3)}″ covers the lensed emission the model allows`);
  let n = 2 * Math.ceil(size / cell / 2);
  if (n > maxN) {
    const coarser = size / maxN;
    if (field?.pixel_arcsec !== undefined || coarser > nyquistArcsec) {
      throw new InputError(
        `a ${size.toPrecision(3)}″ field at ${cell.toPrecision(3)}″ cells needs ${n}² pixels, more than ${maxN}²; ` +
          `set a smaller field.size_arcsec or a larger field.pixel_arcsec (at most ${nyquistArcsec.toPrecision(3)}″) in the model file`,
      );
    }
    notes.push(`cell coarsened from ${cell.toPrecision(3)}″ to ${coarser.toPrecision(3)}″ to keep the grid at ${maxN}²`);
    cell = coarser;
    n = maxN;
  }
  n = Math.max(n, 16);
  return { n, cellArcsec: cell, sizeArcsec: n * cell, notes };
}
