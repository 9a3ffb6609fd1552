/**
 * Thermal noise of an interferometer from the radiometer equation (CONVENTIONS.md, REFERENCES.md §6).
 *
 * - System equivalent flux density of one antenna: SEFD = 2 k T_sys / (η_a A), A = π D²/4.
 * - One visibility of one correlation (one polarisation product), real or imaginary part:
 *   σ = SEFD / (η_c sqrt(2 Δν τ)), identical antennas, weak-source limit.
 * - Stokes I from n_pol parallel hands, I = mean of the hands: σ_I = σ / sqrt(n_pol), so a
 *   simulated Stokes I visibility has weight w = 1/σ_I² = n_pol/σ².
 * - Natural-weighted image noise (Stokes I): σ_im = SEFD / (η_c sqrt(n_pol N(N−1) Δν t)), which is
 *   σ_I of one visibility divided by sqrt(number of visibilities N(N−1)/2 · t/τ).
 * Reference: Thompson, Moran & Swenson 2017 §6.2; Wrobel & Walker 1999 (Synthesis Imaging in
 * Radio Astronomy II, ch. 9); IRAM CLIC radiometric equation eqs. 10–11 (REFERENCES.md §6).
 */
import { JY_SI, K_B_J_PER_K } from "../units.js";

/**
 * System equivalent flux density of one antenna.
 * @param tsysK system temperature [K]
 * @param dishM dish diameter [m]
 * @param apertureEfficiency η_a (0, 1]
 * @returns SEFD [Jy]
 * Reference: REFERENCES.md §6 (T_sys = 100 K, D = 12 m, η_a = 0.7 → 3487.8907 Jy).
 */
export function sefdJy(tsysK: number, dishM: number, apertureEfficiency: number): number {
  const areaM2 = (Math.PI * dishM * dishM) / 4;
  return (2 * K_B_J_PER_K * tsysK) / (apertureEfficiency * areaM2) / JY_SI;
}

/**
 * Noise of the real (or imaginary) part of one visibility of one correlation.
 * @param sefd SEFD [Jy]
 * @param bandwidthHz Δν, bandwidth of the visibility [Hz]
 * @param integrationS τ, integration time [s]
 * @param correlatorEfficiency η_c (0, 1]
 * @returns σ [Jy]
 * Reference: REFERENCES.md §6, σ = SEFD/(η sqrt(2 Δν τ)).
 */
export function visibilitySigmaJy(sefd: number, bandwidthHz: number, integrationS: number, correlatorEfficiency: number): number {
  return sefd / (correlatorEfficiency * Math.sqrt(2 * bandwidthHz * integrationS));
}

/**
 * Noise of the real (or imaginary) part of one Stokes I visibility formed as the mean of
 * `nPol` parallel hands, each with noise `sigmaCorrJy`: σ_I = σ/sqrt(n_pol).
 * @param sigmaCorrJy σ of one correlation [Jy]
 * @param nPol number of parallel hands averaged (1 or 2)
 * @returns σ_I [Jy]; the Stokes I weight is 1/σ_I² = n_pol/σ²
 * Reference: CONVENTIONS.md "Stokes I" (variance of the mean of independent hands).
 */
export function stokesISigmaJy(sigmaCorrJy: number, nPol: number): number {
  return sigmaCorrJy / Math.sqrt(nPol);
}

/**
 * Natural-weighted Stokes I image noise of an array of identical antennas.
 * @param sefd SEFD [Jy]
 * @param correlatorEfficiency η_c
 * @param nAnt number of antennas N
 * @param bandwidthHz total bandwidth per polarisation [Hz]
 * @param onSourceS total on-source time t [s]
 * @param nPol number of parallel hands (1 or 2)
 * @returns σ_im [Jy/beam]
 * Reference: REFERENCES.md §6 (N = 50, t = 1 h, Δν = 7.5 GHz, n_pol = 2 → 9.5892 μJy/beam).
 */
export function imageSigmaJyPerBeam(
  sefd: number,
  correlatorEfficiency: number,
  nAnt: number,
  bandwidthHz: number,
  onSourceS: number,
  nPol: number,
): number {
  return sefd / (correlatorEfficiency * Math.sqrt(nPol * nAnt * (nAnt - 1) * bandwidthHz * onSourceS));
}
