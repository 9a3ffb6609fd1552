/**
 * Sensitivity of a configuration, from the visibility weights.
 *
 * Point source. The natural-weighted dirty image at a point is
 *   I_D = Σ_k w_k Re[d_k e^{+2πi(u_k x + v_k y)}] / Σ_k w_k.
 * With independent noise of variance 1/w_k in Re d_k and in Im d_k, each Re[d e^{iφ}] =
 * Re d cos φ − Im d sin φ has variance (cos²φ + sin²φ)/w_k = 1/w_k, so
 *   Var I_D = Σ_k w_k² (1/w_k) / (Σ_k w_k)² = 1/Σ_k w_k,   σ_point = 1/sqrt(Σ_k w_k) [Jy/beam].
 * It is also the Fisher σ of the flux of a point source at the phase centre, and equals the
 * radiometer image noise SEFD/(η_c sqrt(n_pol N(N−1) Δν t)) when every integration is kept.
 *
 * Surface brightness. Per beam solid angle Ω = π θ_maj θ_min/(4 ln 2) (Gaussian beam):
 *   σ_S = σ_point/Ω [Jy/arcsec²], and in Rayleigh–Jeans brightness temperature
 *   σ_T = σ_point λ²/(2 k_B Ω) [K], λ at the band centre.
 * Reference: REFERENCES.md §6 (image noise); Thompson, Moran & Swenson 2017, §6.2 and §1.3
 * (Rayleigh–Jeans brightness temperature; from memory); Gaussian beam area, common practice.
 */
import { ARCSEC_TO_RAD, C_M_PER_S, JY_SI, K_B_J_PER_K } from "../../units.js";

/** Natural-weighted point-source noise 1/sqrt(Σ w) [Jy/beam] for Σ w [Jy⁻²]. */
export function pointSourceSigmaJy(sumWeights: number): number {
  return 1 / Math.sqrt(sumWeights);
}

/** Solid angle of a Gaussian beam π θ_maj θ_min/(4 ln 2) [arcsec²] from FWHMs [arcsec]. */
export function gaussianBeamAreaArcsec2(bmajArcsec: number, bminArcsec: number): number {
  return (Math.PI * bmajArcsec * bminArcsec) / (4 * Math.LN2);
}

/**
 * Surface-brightness noise per beam.
 * @param sigmaJyPerBeam point-source noise [Jy/beam]
 * @param bmajArcsec, bminArcsec beam FWHMs [arcsec]
 * @param freqHz band centre [Hz]
 * @returns σ in Jy/arcsec² and in Rayleigh–Jeans brightness temperature [K]
 * Reference: see the module comment.
 */
export function surfaceBrightnessSigma(
  sigmaJyPerBeam: number,
  bmajArcsec: number,
  bminArcsec: number,
  freqHz: number,
): { jyPerArcsec2: number; kelvin: number } {
  const areaArcsec2 = gaussianBeamAreaArcsec2(bmajArcsec, bminArcsec);
  const omegaSr = areaArcsec2 * ARCSEC_TO_RAD * ARCSEC_TO_RAD;
  const lambdaM = C_M_PER_S / freqHz;
  return {
    jyPerArcsec2: sigmaJyPerBeam / areaArcsec2,
    kelvin: (sigmaJyPerBeam * JY_SI * lambdaM * lambdaM) / (2 * K_B_J_PER_K * omegaSr),
  };
}
