/**
 * Model visibilities of a lensed sky at arbitrary (u, v): render the sky per channel group,
 * attenuate by the primary beam, NUFFT to the sampled points, divide by the pixel window
 * (CONVENTIONS.md). Used by `simulate`, by residuals and by the exact-visibility likelihood.
 */
import { InputError } from "../errors.js";
import { NufftPlan } from "../fourier/nufft.js";
import { primaryBeamImage, type PrimaryBeamOptions } from "../fourier/primaryBeam.js";
import { checkNyquist, pixelWindow } from "../fourier/window.js";
import { ARCSEC_TO_RAD } from "../units.js";
import type { LensedSky } from "./sky.js";

export interface PredictOptions {
  /** NUFFT tolerance (default 1e-9, tight enough that simulated data carry no transform error). */
  tolerance?: number;
  /** Primary beam; omitted = no attenuation. */
  beam?: PrimaryBeamOptions;
  /** Pointing centre minus phase centre [rad] (x East, y North); default (0, 0). */
  pointingOffsetRad?: readonly [number, number];
  threads?: number;
}

/**
 * Predict visibilities [Jy] (internal sign) of the sky's current model at each entry.
 * @param uLambda, vLambda baselines [wavelengths]; @param channel channel index per entry into
 * channelFreqHz [Hz]; writes outRe/outIm.
 */
export function predictVisibilities(
  sky: LensedSky,
  uLambda: Float64Array,
  vLambda: Float64Array,
  channel: ArrayLike<number>,
  channelFreqHz: Float64Array,
  outRe: Float64Array,
  outIm: Float64Array,
  options: PredictOptions = {},
): void {
  predictFromImages(sky.grid.n, sky.grid.cellArcsec, (out, f) => sky.renderTotal(out, f), uLambda, vLambda, channel, channelFreqHz, outRe, outIm, options);
}

/**
 * Visibilities of any model image on the grid (n × n, cell [arcsec]): `render(out, freqHz)`
 * writes the unattenuated image [Jy/pixel] at a channel frequency.
 */
export function predictFromImages(
  n: number,
  cellArcsec: number,
  render: (out: Float64Array, freqHz: number) => void,
  uLambda: Float64Array,
  vLambda: Float64Array,
  channel: ArrayLike<number>,
  channelFreqHz: Float64Array,
  outRe: Float64Array,
  outIm: Float64Array,
  options: PredictOptions = {},
): void {
  const cellRad = cellArcsec * ARCSEC_TO_RAD;
  const m = uLambda.length;
  // Beyond the grid's Nyquist limit the transform would alias silently: refuse instead.
  checkNyquist(uLambda, vLambda, cellRad, "model grid");
  const nChan = channelFreqHz.length;
  // Entries of each channel: the sky (spectral index) and the beam depend on frequency.
  const counts = new Int32Array(nChan);
  for (let k = 0; k < m; k++) {
    const c = channel[k];
    if (!(c >= 0 && c < nChan)) throw new InputError(`predictVisibilities: entry ${k} has channel ${c}, outside 0…${nChan - 1}`);
    counts[c]++;
  }
  const image = new Float64Array(n * n);
  const beam = new Float64Array(n * n);
  const geometry = { nx: n, ny: n, cellRad };
  for (let c = 0; c < nChan; c++) {
    if (counts[c] === 0) continue;
    const idx = new Int32Array(counts[c]);
    let q = 0;
    for (let k = 0; k < m; k++) if (channel[k] === c) idx[q++] = k;
    const u = Float64Array.from(idx, (k) => uLambda[k]);
    const v = Float64Array.from(idx, (k) => vLambda[k]);
    render(image, channelFreqHz[c]);
    if (options.beam) {
      primaryBeamImage(geometry, channelFreqHz[c], options.pointingOffsetRad ?? [0, 0], options.beam, beam);
      for (let p = 0; p < image.length; p++) image[p] *= beam[p];
    }
    const plan = new NufftPlan({ nx: n, cellRad, tolerance: options.tolerance ?? 1e-9, threads: options.threads ?? 1 });
    try {
      plan.setPoints(u, v);
      const re = new Float64Array(idx.length);
      const im = new Float64Array(idx.length);
      plan.execute(image, re, im);
      for (let t = 0; t < idx.length; t++) {
        const h = pixelWindow(u[t], v[t], cellRad);
        outRe[idx[t]] = re[t] / h;
        outIm[idx[t]] = im[t] / h;
      }
    } finally {
      plan.dispose();
    }
  }
}
