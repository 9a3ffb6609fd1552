/**
 * The pixel window of a model grid and the Nyquist check of sampled baselines against it.
 *
 * A pixel holds the mean brightness over its area times the area (Jy/pixel), so its
 * visibilities are those of the sky times h(u, v) = sinc(uΔ)·sinc(vΔ), sinc t = sin πt/(πt);
 * model visibilities are M/h (CONVENTIONS.md "Model grids").
 *
 * Reference: CONVENTIONS.md; Bracewell, The Fourier Transform and its Applications (rect ↔ sinc).
 */
import { InputError } from "../errors.js";
import { RAD_TO_ARCSEC } from "../units.js";

/** sinc t = sin(πt)/(πt), with sinc 0 = 1 (dimensionless). */
export function sinc(t: number): number {
  if (Math.abs(t) < 1e-8) return 1 - (Math.PI * t) ** 2 / 6;
  const a = Math.PI * t;
  return Math.sin(a) / a;
}

/**
 * Pixel window h(u, v) = sinc(uΔ)·sinc(vΔ) (dimensionless).
 * @param uLambda, vLambda baseline [wavelengths]; @param cellRad cell Δ [rad].
 */
export function pixelWindow(uLambda: number, vLambda: number, cellRad: number): number {
  return sinc(uLambda * cellRad) * sinc(vLambda * cellRad);
}

/**
 * Throw an InputError if any baseline exceeds the grid's Nyquist limit |u|, |v| ≤ 1/(2Δ):
 * beyond it the model grid aliases and the pixel window heads for its zero at 1/Δ.
 * @param what names the data set in the message (a file name or "visibilities").
 */
export function checkNyquist(
  uLambda: Float64Array,
  vLambda: Float64Array,
  cellRad: number,
  what = "visibilities",
): void {
  const limit = 0.5 / cellRad;
  let worst = 0;
  let worstK = -1;
  for (let k = 0; k < uLambda.length; k++) {
    const a = Math.max(Math.abs(uLambda[k]), Math.abs(vLambda[k]));
    if (!(a <= worst)) {
      worst = a;
      worstK = k;
    }
  }
  if (worstK >= 0 && !(worst <= limit * (1 + 1e-12))) {
    const needArcsec = (0.5 / worst) * RAD_TO_ARCSEC;
    throw new InputError(
      `${what}: entry ${worstK} has |u| or |v| = ${worst.toPrecision(6)} λ, beyond the model grid's ` +
        `Nyquist limit 1/(2Δ) = ${limit.toPrecision(6)} λ for a cell of ${(cellRad * RAD_TO_ARCSEC).toPrecision(4)}″; ` +
        `use a cell of at most ${needArcsec.toPrecision(4)}″`,
    );
  }
}
