/**
 * How much of the lensed emission a configuration sees: the natural-weighted dirty image of the
 * noise-free model, the fraction of the lensed flux it recovers, and the peak S/N of the arcs.
 *
 * Recovered fraction. An interferometer measures nothing at spacings shorter than its
 * shortest projected baseline B_min: emission on larger scales is "resolved out" and missing
 * from any image made from the data. Let J be the true beam-attenuated lensed sky on the imaging
 * grid (Jy/pixel), J_high the same image with every spatial frequency |u| < B_min/λ removed (the
 * unsampled central hole of the uv plane, cut on a zero-padded FFT grid), and M the emission
 * region: the brightest pixels of J that together hold MASK_FLUX_FRACTION of its flux (a property
 * of the sky alone, so configurations are compared over the same region). Then
 *   f = Σ_M J_high / Σ_M J,
 * the share of the lensed flux in the emission region that lives on the sampled scales. f = 1
 * for emission much smaller than the largest angular scale (removing the hole takes only a
 * faint, wide pedestal), and f → 0 (or below: the removed low frequencies leave a negative bowl)
 * for emission larger than it. Gaps in the coverage between B_min and B_max do not lose flux;
 * they show as sidelobes in the dirty image instead.
 * Peak S/N: max D over the image divided by the point-source noise 1/sqrt(Σ w).
 * Reference: Thompson, Moran & Swenson 2017, ch. 10–11 (dirty image, missing short spacings;
 * from memory); REFERENCES.md §6 (image noise), §7 (largest angular scale).
 */
import { dirtyImage } from "../../fourier/dirty.js";
import { Fft2 } from "../../fourier/fft2.js";
import { primaryBeamImage, type PrimaryBeamOptions } from "../../fourier/primaryBeam.js";
import { LensedSky } from "../../fit/sky.js";
import type { NumericModel } from "../../model/types.js";
import type { Rng } from "../../random.js";
import { ARCSEC_TO_RAD, RAD_TO_ARCSEC } from "../../units.js";

/** The emission region: the brightest pixels of the truth holding this fraction of its flux. */
export const MASK_FLUX_FRACTION = 0.9;
/** Largest imaging grid side [pixels]. */
export const MAX_IMAGE_SIZE = 1024;

export interface ImagingGeometry {
  size: number;
  cellArcsec: number;
  notes: string[];
}

/**
 * Imaging grid for the lens: cell (λ/B_max)/6, field 2·R + 6 beams (R the emission radius),
 * at least 64 pixels; above MAX_IMAGE_SIZE pixels the cell grows up to the Nyquist cell
 * 1/(2 max|u|,|v|), and beyond that the field is cut (noted).
 * @param uvMaxRadialLambda, uvMaxAxisLambda largest sqrt(u²+v²) and largest |u| or |v| [λ]
 * @param emissionRadiusArcsec radius reached by the lensed emission [arcsec]
 * @param bmajArcsec natural beam FWHM [arcsec]
 */
export function imagingGeometry(uvMaxRadialLambda: number, uvMaxAxisLambda: number, emissionRadiusArcsec: number, bmajArcsec: number): ImagingGeometry {
  const notes: string[] = [];
  let cell = ((1 / uvMaxRadialLambda) * RAD_TO_ARCSEC) / 6;
  const width = 2 * emissionRadiusArcsec + 6 * bmajArcsec;
  let size = Math.max(64, 2 * Math.ceil(width / cell / 2));
  if (size > MAX_IMAGE_SIZE) {
    const nyquist = (0.5 / uvMaxAxisLambda) * RAD_TO_ARCSEC;
    cell = Math.min(width / MAX_IMAGE_SIZE, nyquist);
    size = MAX_IMAGE_SIZE;
    if (size * cell < width) notes.push(`imaging field cut to ${(size * cell).toPrecision(3)}″ (${MAX_IMAGE_SIZE}² pixels at the Nyquist cell); the emission may reach beyond it`);
  }
  return { size, cellArcsec: cell, notes };
}

export interface RecoveryResult {
  /** f = Σ_M J_high / Σ_M J (see the module comment). */
  fraction: number;
  /** Pixels in the emission region M. */
  maskPixels: number;
  /** Σ J: total beam-attenuated lensed flux of the truth [Jy]. */
  lensedFluxJy: number;
  /** Peak of the noise-free dirty image [Jy/beam] and its S/N against 1/sqrt(Σ w). */
  peakJyPerBeam: number;
  peakSnr: number;
  /** Images on the imaging grid (model-grid layout): the truth J [Jy/pixel], the noise-free
   * dirty image and the dirty image with one noise draw [Jy/beam]. */
  truth: Float64Array;
  dirtyModel: Float64Array;
  dirtyNoisy: Float64Array;
  size: number;
  cellArcsec: number;
}

export interface RecoveryInput {
  truth: NumericModel;
  uLambda: Float64Array;
  vLambda: Float64Array;
  /** Noise-free model visibilities [Jy] and weights [Jy⁻²]. */
  modelRe: Float64Array;
  modelIm: Float64Array;
  weight: Float64Array;
  /** Shortest projected uv distance B_min/λ [λ]. */
  uvMinRadialLambda: number;
  geometry: ImagingGeometry;
  /** Band centre [Hz] for the truth image's primary beam and spectral factors. */
  freqHz: number;
  primaryBeam: PrimaryBeamOptions | null;
  /** Draws the noise of the noisy dirty image (σ_k = 1/sqrt(w_k) per part). */
  rng: Rng;
}

/**
 * Dirty images, recovered fraction and peak S/N of the noise-free model.
 * Reference: see the module comment.
 */
export function fluxRecovery(input: RecoveryInput): RecoveryResult {
  const { size: n, cellArcsec } = input.geometry;
  const m = input.uLambda.length;
  // Truth on the imaging grid: lensed, supersampled, beam-attenuated (Jy/pixel).
  const sky = new LensedSky({ n, cellArcsec, supersample: 2, refineFactor: 1 });
  sky.setModel(input.truth);
  const truthImage = new Float64Array(n * n);
  sky.renderTotal(truthImage, input.freqHz);
  if (input.primaryBeam) {
    const pb = primaryBeamImage({ nx: n, ny: n, cellRad: cellArcsec * ARCSEC_TO_RAD }, input.freqHz, [0, 0], input.primaryBeam);
    for (let p = 0; p < n * n; p++) truthImage[p] *= pb[p];
  }
  let lensedFluxJy = 0;
  for (let p = 0; p < n * n; p++) lensedFluxJy += truthImage[p];

  const dirty = dirtyImage(
    { uLambda: input.uLambda, vLambda: input.vLambda, reJy: input.modelRe, imJy: input.modelIm, weight: input.weight },
    { size: n, cellArcsec, weighting: "natural" },
  );
  const noisyRe = new Float64Array(m);
  const noisyIm = new Float64Array(m);
  for (let k = 0; k < m; k++) {
    const s = 1 / Math.sqrt(input.weight[k]);
    noisyRe[k] = input.modelRe[k] + s * input.rng.normal();
    noisyIm[k] = input.modelIm[k] + s * input.rng.normal();
  }
  const noisy = dirtyImage(
    { uLambda: input.uLambda, vLambda: input.vLambda, reJy: noisyRe, imJy: noisyIm, weight: input.weight },
    { size: n, cellArcsec, weighting: "natural" },
  );

  const truthHigh = highPass(truthImage, n, cellArcsec, input.uvMinRadialLambda);

  // Emission region: brightest pixels first until MASK_FLUX_FRACTION of the flux is in; the
  // threshold comes from a sorted copy (typed-array sort), then one pass selects J ≥ threshold.
  const sorted = Float64Array.from(truthImage).sort().reverse();
  let threshold = sorted[0];
  let acc = 0;
  for (let q = 0; q < sorted.length && acc < MASK_FLUX_FRACTION * lensedFluxJy; q++) {
    acc += sorted[q];
    threshold = sorted[q];
  }
  let sumHigh = 0, sumTruth = 0, maskPixels = 0;
  for (let p = 0; p < n * n; p++) {
    if (!(truthImage[p] >= threshold && truthImage[p] > 0)) continue;
    sumHigh += truthHigh[p];
    sumTruth += truthImage[p];
    maskPixels++;
  }
  let peak = -Infinity;
  for (let p = 0; p < n * n; p++) if (dirty.image[p] > peak) peak = dirty.image[p];
  let sumW = 0;
  for (let k = 0; k < m; k++) sumW += input.weight[k];
  return {
    fraction: sumTruth > 0 ? sumHigh / sumTruth : NaN,
    maskPixels,
    lensedFluxJy,
    peakJyPerBeam: peak,
    peakSnr: peak * Math.sqrt(sumW),
    truth: truthImage,
    dirtyModel: dirty.image,
    dirtyNoisy: noisy.image,
    size: n,
    cellArcsec,
  };
}

/** Zero-padded FFT grid (power of two ≥ 2N) holding an N×N image, so products are linear convolutions. */
function paddedTransform(image: Float64Array, n: number): { grid: Float64Array; np: number; fft: Fft2 } {
  let np = 16;
  while (np < 2 * n) np *= 2;
  const fft = new Fft2(np, np);
  const grid = new Float64Array(2 * np * np);
  for (let j = 0; j < n; j++) for (let i = 0; i < n; i++) grid[2 * (j * np + i)] = image[j * n + i];
  fft2d(fft, grid, np, false);
  return { grid, np, fft };
}

/** Back from a padded spectrum to the N×N image (real part, unscaled backward FFT / np²). */
function paddedInverse(grid: Float64Array, np: number, fft: Fft2, n: number): Float64Array {
  fft2d(fft, grid, np, true);
  const out = new Float64Array(n * n);
  const norm = 1 / (np * np);
  for (let j = 0; j < n; j++) for (let i = 0; i < n; i++) out[j * n + i] = grid[2 * (j * np + i)] * norm;
  return out;
}

/**
 * Remove every spatial frequency with sqrt(u² + v²) < uvCutLambda from an N×N image (Jy/pixel):
 * the part of the sky an array with shortest baseline uvCut cannot see. FFT bin (kx, ky) of the
 * padded grid is the frequency (kx, ky)/(np·Δ) (the cut is radial, so its sign is irrelevant).
 * Reference: convolution theorem (Bracewell, The Fourier Transform and its Applications, ch. 6).
 */
export function highPass(image: Float64Array, n: number, cellArcsec: number, uvCutLambda: number): Float64Array {
  const { grid, np, fft } = paddedTransform(image, n);
  const du = 1 / (np * cellArcsec * ARCSEC_TO_RAD); // [λ] per bin
  const cut2 = (uvCutLambda / du) ** 2;
  for (let ky = 0; ky < np; ky++) {
    const fy = ky <= np / 2 ? ky : ky - np;
    for (let kx = 0; kx < np; kx++) {
      const fx = kx <= np / 2 ? kx : kx - np;
      if (fx * fx + fy * fy < cut2) {
        grid[2 * (ky * np + kx)] = 0;
        grid[2 * (ky * np + kx) + 1] = 0;
      }
    }
  }
  return paddedInverse(grid, np, fft, n);
}

function fft2d(fft: Fft2, grid: Float64Array, np: number, inverse: boolean): void {
  for (let r = 0; r < np; r++) fft.rowInPlace(grid, r, inverse);
  fft.columns(grid, inverse);
}
