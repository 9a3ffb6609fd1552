/**
 * Resolution and scale limits of an array configuration from its uv coverage: the synthesised
 * beam (an elliptical Gaussian fitted to the main lobe of the dirty beam, natural and Briggs
 * weighting) and the largest angular scale 0.6 λ/B_min.
 *
 * The PSF is made on a 256² grid of cell (λ/B_max)/6, with B_max/λ the largest projected uv
 * distance: six pixels across the common-practice resolution λ/B_max resolve the main lobe for
 * the fit, and the grid spans ~40 λ/B_max, wide enough for the near sidelobes. Briggs weighting
 * uses that grid's uv cells (1/(256·cell)) for the density, as an imager would.
 * Reference: REFERENCES.md §7 (θ ≈ λ/B_max; maximum recoverable scale ≈ 0.6 λ/B_min, common
 * practice); Briggs 1995, PhD thesis, §3.2 (robust weighting); fourier/beamFit.ts (the fit).
 */
import { fitBeam, type BeamFitResult } from "../../fourier/beamFit.js";
import { dirtyImage, type VisLike } from "../../fourier/dirty.js";
import { RAD_TO_ARCSEC } from "../../units.js";

/** PSF grid size [pixels] of the beam estimate. */
export const PSF_SIZE = 256;
/** Pixels across λ/B_max on the PSF grid. */
export const PSF_PIXELS_PER_RESOLUTION = 6;
/** Coefficient of the largest-angular-scale rule 0.6 λ/B_min (REFERENCES.md §7). */
export const LAS_COEFFICIENT = 0.6;

export interface BeamForecast {
  natural: BeamFitResult;
  briggs: BeamFitResult;
  /** Briggs robustness used. */
  robust: number;
  /** Natural-weighted dirty beam (peak 1), PSF_SIZE², model-grid layout. */
  psfNatural: Float64Array;
  size: number;
  cellArcsec: number;
  /** λ/B_max with B_max the longest projected baseline [arcsec] (rule of thumb). */
  resolutionRuleArcsec: number;
}

/**
 * Fit the synthesised beam for natural and Briggs weighting.
 * @param vis uv points [λ] and weights [Jy⁻²] (data values are not used)
 * @param uvMaxRadialLambda largest sqrt(u² + v²) [λ]
 * @param robust Briggs robustness (default 0.5)
 * @returns beams (FWHM [arcsec], PA [deg]) and the natural PSF
 * Reference: see the module comment.
 */
export function synthesizedBeams(vis: VisLike, uvMaxRadialLambda: number, robust = 0.5): BeamForecast {
  const resolutionRuleArcsec = (1 / uvMaxRadialLambda) * RAD_TO_ARCSEC;
  const cellArcsec = resolutionRuleArcsec / PSF_PIXELS_PER_RESOLUTION;
  const zero = new Float64Array(vis.uLambda.length);
  const psfVis: VisLike = { uLambda: vis.uLambda, vLambda: vis.vLambda, reJy: zero, imJy: zero, weight: vis.weight };
  const nat = dirtyImage(psfVis, { size: PSF_SIZE, cellArcsec, weighting: "natural" });
  const rob = dirtyImage(psfVis, { size: PSF_SIZE, cellArcsec, weighting: "briggs", robust });
  return {
    natural: fitBeam(nat.psf, PSF_SIZE, cellArcsec),
    briggs: fitBeam(rob.psf, PSF_SIZE, cellArcsec),
    robust,
    psfNatural: nat.psf,
    size: PSF_SIZE,
    cellArcsec,
    resolutionRuleArcsec,
  };
}

/**
 * Largest angular scale the configuration recovers, 0.6 λ/B_min.
 * @param uvMinRadialLambda shortest projected uv distance B_min/λ over the data [λ]
 * @returns [arcsec]
 * Reference: REFERENCES.md §7 (common practice).
 */
export function largestAngularScaleArcsec(uvMinRadialLambda: number): number {
  return (LAS_COEFFICIENT / uvMinRadialLambda) * RAD_TO_ARCSEC;
}
