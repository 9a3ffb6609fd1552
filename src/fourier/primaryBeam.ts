/**
 * Primary-beam response A(x, y) of identical dishes on the model grid, and its application
 * J = A·I. Two shapes: a Gaussian of FWHM = factor·λ/D (factor 1.13 by default, a −10 dB
 * tapered 12 m dish) and the Airy pattern of a uniformly lit aperture, (2J1(q)/q)² with
 * q = πD·r/λ (first null at 1.21967 λ/D). The beam is centred on the pointing centre, given as
 * an offset from the phase centre; A = 1 there.
 *
 * Reference: REFERENCES.md §7 (1.13 λ/D, common practice); Born & Wolf, Principles of Optics,
 * §8.5.2 (Airy pattern); Watson, A Treatise on the Theory of Bessel Functions §2.2 (Bessel's
 * integral, used for J1).
 */
import { InputError } from "../errors.js";
import { C_M_PER_S } from "../units.js";
import type { GridGeometry } from "./direct.js";

/** Beam shapes. */
export type BeamShape = "gaussian" | "airy";

/** Options of the primary-beam model. */
export interface PrimaryBeamOptions {
  /** Dish diameter D [m], > 0. */
  dishDiameterM: number;
  /** "gaussian" (default) or "airy". */
  shape?: BeamShape;
  /** Gaussian FWHM in units of λ/D. Default 1.13 (REFERENCES.md §7). */
  fwhmFactor?: number;
}

/** Defaults of the optional PrimaryBeamOptions fields. */
export const DEFAULT_PRIMARY_BEAM = Object.freeze({ shape: "gaussian" as BeamShape, fwhmFactor: 1.13 });

/**
 * Bessel function J1(x) from Bessel's integral J1(x) = (1/2π)∫_{−π}^{π} cos(τ − x sin τ) dτ by
 * the trapezoid rule, which converges geometrically for a periodic analytic integrand once the
 * number of nodes exceeds |x| by a few tens (error below 1e-15 here).
 * Reference: Watson §2.2; Trefethen & Weideman 2014, SIAM Rev. 56, 385 (trapezoid rule).
 */
export function besselJ1(x: number): number {
  const nodes = Math.ceil(Math.abs(x)) + 48;
  let s = 0;
  const dt = (2 * Math.PI) / nodes;
  for (let k = 0; k < nodes; k++) {
    const t = -Math.PI + k * dt;
    s += Math.cos(t - x * Math.sin(t));
  }
  return s / nodes;
}

/** Gaussian FWHM of the primary beam [rad] at freqHz. */
export function primaryBeamFwhmRad(freqHz: number, options: PrimaryBeamOptions): number {
  checkOptions(freqHz, options);
  return ((options.fwhmFactor ?? DEFAULT_PRIMARY_BEAM.fwhmFactor) * (C_M_PER_S / freqHz)) / options.dishDiameterM;
}

/**
 * Beam response A(r) (dimensionless, 1 on axis) at angular distance rRad [rad] from the
 * pointing centre, at frequency freqHz [Hz].
 */
export function primaryBeamResponse(rRad: number, freqHz: number, options: PrimaryBeamOptions): number {
  checkOptions(freqHz, options);
  const shape = options.shape ?? DEFAULT_PRIMARY_BEAM.shape;
  const lambdaM = C_M_PER_S / freqHz;
  if (shape === "gaussian") {
    const fwhm = ((options.fwhmFactor ?? DEFAULT_PRIMARY_BEAM.fwhmFactor) * lambdaM) / options.dishDiameterM;
    return Math.exp((-4 * Math.LN2 * rRad * rRad) / (fwhm * fwhm));
  }
  const q = (Math.PI * options.dishDiameterM * rRad) / lambdaM;
  if (Math.abs(q) < 1e-6) return 1 - (q * q) / 4; // 2J1(q)/q = 1 − q²/8 + …, squared
  const a = (2 * besselJ1(q)) / q;
  return a * a;
}

/**
 * The beam on a model grid (CONVENTIONS.md: x_i = (nx/2 − i)Δ, y_j = (j − ny/2)Δ).
 * @param pointingOffsetRad [x0, y0] of the pointing centre relative to the phase centre [rad]
 *   (x East, y North).
 * @param out receives nx·ny responses (allocated when omitted).
 */
export function primaryBeamImage(
  geometry: GridGeometry,
  freqHz: number,
  pointingOffsetRad: readonly [number, number],
  options: PrimaryBeamOptions,
  out: Float64Array = new Float64Array(geometry.nx * geometry.ny),
): Float64Array {
  const { nx, ny, cellRad } = geometry;
  if (out.length !== nx * ny) {
    throw new InputError(`primaryBeamImage: output has ${out.length} pixels, expected ${nx}×${ny}`);
  }
  for (let j = 0; j < ny; j++) {
    const dy = (j - ny / 2) * cellRad - pointingOffsetRad[1];
    for (let i = 0; i < nx; i++) {
      const dx = (nx / 2 - i) * cellRad - pointingOffsetRad[0];
      out[j * nx + i] = primaryBeamResponse(Math.sqrt(dx * dx + dy * dy), freqHz, options);
    }
  }
  return out;
}

/** out_p = image_p · beam_p (out may be image). */
export function applyBeam(image: Float64Array, beam: Float64Array, out: Float64Array): void {
  if (beam.length !== image.length || out.length !== image.length) {
    throw new InputError(
      `applyBeam: image has ${image.length} pixels, beam ${beam.length}, output ${out.length}; all three must match`,
    );
  }
  for (let p = 0; p < image.length; p++) out[p] = image[p] * beam[p];
}

function checkOptions(freqHz: number, options: PrimaryBeamOptions): void {
  if (!(freqHz > 0 && Number.isFinite(freqHz))) {
    throw new InputError(`primary beam: frequency ${freqHz} Hz; it must be a positive number of Hz`);
  }
  if (!(options.dishDiameterM > 0 && Number.isFinite(options.dishDiameterM))) {
    throw new InputError(`primary beam: dish diameter ${options.dishDiameterM} m; give the dish diameter in metres (e.g. 12)`);
  }
  const shape = options.shape ?? DEFAULT_PRIMARY_BEAM.shape;
  if (shape !== "gaussian" && shape !== "airy") {
    throw new InputError(`primary beam: shape "${String(shape)}"; use "gaussian" or "airy"`);
  }
  const f = options.fwhmFactor ?? DEFAULT_PRIMARY_BEAM.fwhmFactor;
  if (!(f > 0 && Number.isFinite(f))) {
    throw new InputError(`primary beam: fwhmFactor ${f}; it must be a positive number (1.13 for a tapered dish)`);
  }
}
