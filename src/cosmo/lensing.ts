/**
 * Lensing quantities that need distances: the lens/source distances of a system, Σ_crit, the
 * mass inside an Einstein radius, the SIS velocity dispersion, the point-mass Einstein radius
 * and the NFW (m200, c200) → (κ_s, r_s) conversion.
 * Conventions: CONVENTIONS.md (flat ΛCDM, arcsec on the sky, M200 w.r.t. 200·ρ_crit(z_l)).
 * Reference: Wambsganss (1998, Living Rev. Relativ. 1, 12) §3.2–3.3; Narayan & Bartelmann
 * (1996, astro-ph/9606001) (SIS); Wright & Brainerd (2000, ApJ 534, 34) (NFW).
 */
import { InputError } from "../errors.js";
import { ARCSEC_TO_RAD, C_M_PER_S, G_SI, MPC_M, M_SUN_KG, RAD_TO_ARCSEC } from "../units.js";
import { DEFAULT_COSMOLOGY, FlatLambdaCDM, type CosmologyParams } from "./distances.js";

/** c²/(4πG) [kg/m]. */
const C2_OVER_4PI_G = (C_M_PER_S * C_M_PER_S) / (4 * Math.PI * G_SI);

/** Redshifts of a lens system, as in the model file's `redshift` block. */
export interface RedshiftPair {
  lens: number;
  source: number;
}

/** Distances and Σ_crit of one lens–source pair. */
export interface LensDistances {
  zLens: number;
  zSource: number;
  /** D_l [Mpc]. */
  dLMpc: number;
  /** D_s [Mpc]. */
  dSMpc: number;
  /** D_ls [Mpc]. */
  dLsMpc: number;
  /** Σ_crit [kg/m²]. */
  sigmaCritKgPerM2: number;
  /** Σ_crit [M_sun/arcsec²] (area measured at the lens). */
  sigmaCritMsunPerArcsec2: number;
}

/**
 * Distances and Σ_crit = c²/(4πG) · D_s/(D_l D_ls) for a lens at zLens and a source at zSource.
 * @param where names the input for error messages (e.g. "model.json: redshift")
 * Reference: Wambsganss (1998) §3.3; Hogg (1999) eqs. 18–19.
 */
export function lensDistances(
  redshift: RedshiftPair,
  cosmology: FlatLambdaCDM | CosmologyParams = DEFAULT_COSMOLOGY,
  where = "redshift",
): LensDistances {
  const { lens: zl, source: zs } = redshift;
  if (!Number.isFinite(zl) || zl <= 0) {
    throw new InputError(`${where}.lens: ${zl} is not a redshift > 0; give the lens redshift, e.g. 0.5`);
  }
  if (!Number.isFinite(zs) || zs <= zl) {
    throw new InputError(`${where}.source: ${zs} must be a number larger than the lens redshift ${zl}`);
  }
  const cosmo = cosmology instanceof FlatLambdaCDM ? cosmology : new FlatLambdaCDM(cosmology);
  const dLMpc = cosmo.angularDiameterDistanceMpc(zl);
  const dSMpc = cosmo.angularDiameterDistanceMpc(zs);
  const dLsMpc = cosmo.angularDiameterDistanceBetweenMpc(zl, zs);
  const sigmaCritKgPerM2 = (C2_OVER_4PI_G * dSMpc) / (dLMpc * dLsMpc * MPC_M);
  const arcsecAtLensM = dLMpc * MPC_M * ARCSEC_TO_RAD;
  const sigmaCritMsunPerArcsec2 = (sigmaCritKgPerM2 * arcsecAtLensM * arcsecAtLensM) / M_SUN_KG;
  return { zLens: zl, zSource: zs, dLMpc, dSMpc, dLsMpc, sigmaCritKgPerM2, sigmaCritMsunPerArcsec2 };
}

/**
 * Mass inside the Einstein radius, M = Σ_crit π (D_l θ_E)² [M_sun]. Holds for any lens whose
 * mean convergence inside θ_E is 1 (circular lenses; the ellipse ξ = θ_E for SIE/EPL).
 * @param thetaEArcsec Einstein radius [arcsec]
 * Reference: Wambsganss (1998) §3.3.
 */
export function einsteinMassMsun(thetaEArcsec: number, d: LensDistances): number {
  return d.sigmaCritMsunPerArcsec2 * Math.PI * thetaEArcsec * thetaEArcsec;
}

/**
 * SIS Einstein radius θ_E = 4π (σ_v/c)² D_ls/D_s [arcsec].
 * @param sigmaKms velocity dispersion [km/s]
 * Reference: Narayan & Bartelmann (1996) eq. 50 (from memory); REFERENCES.md §2.
 */
export function sisThetaEArcsec(sigmaKms: number, d: LensDistances): number {
  const s = (sigmaKms * 1000) / C_M_PER_S;
  return 4 * Math.PI * s * s * (d.dLsMpc / d.dSMpc) * RAD_TO_ARCSEC;
}

/**
 * Velocity dispersion of the SIS with Einstein radius θ_E: σ_v = c sqrt(θ_E D_s/(4π D_ls)) [km/s].
 * @param thetaEArcsec Einstein radius [arcsec]
 * Reference: inverse of Narayan & Bartelmann (1996) eq. 50 (from memory).
 */
export function sisVelocityDispersionKms(thetaEArcsec: number, d: LensDistances): number {
  const thetaRad = thetaEArcsec * ARCSEC_TO_RAD;
  return (C_M_PER_S / 1000) * Math.sqrt((thetaRad * d.dSMpc) / (4 * Math.PI * d.dLsMpc));
}

/**
 * Point-mass Einstein radius θ_E = sqrt((4GM/c²) D_ls/(D_l D_s)) [arcsec].
 * @param massMsun lens mass [M_sun]
 * Reference: Wambsganss (1998) §3.2; CONVENTIONS.md "Point mass".
 */
export function pointMassThetaEArcsec(massMsun: number, d: LensDistances): number {
  const rs = (4 * G_SI * massMsun * M_SUN_KG) / (C_M_PER_S * C_M_PER_S); // m
  return Math.sqrt((rs * d.dLsMpc) / (d.dLMpc * d.dSMpc * MPC_M)) * RAD_TO_ARCSEC;
}

/**
 * General-relativistic light deflection by a point mass at impact parameter b,
 * α = 4GM/(c² b) [rad]; the Newtonian corpuscular value is half of it.
 * @param massKg deflecting mass [kg]
 * @param impactParameterM impact parameter [m]
 * Reference: Wambsganss (1998) §2.1 (Einstein 1915 value); Bovy, Dynamics and Astrophysics of
 * Galaxies, ch. 16.
 */
export function pointMassDeflectionRad(massKg: number, impactParameterM: number): number {
  return (4 * G_SI * massKg) / (C_M_PER_S * C_M_PER_S * impactParameterM);
}

/** NFW normalisation in lensing units. */
export interface NfwLensingParams {
  /** κ_s = ρ_s r_s / Σ_crit (dimensionless). */
  kappaS: number;
  /** Scale radius θ_s = r_s/D_l [arcsec]. */
  rSArcsec: number;
  /** r200 [Mpc] (physical). */
  r200Mpc: number;
}

/**
 * NFW (m200, c200) → (κ_s, r_s). r200 encloses mean density 200·ρ_crit(z_l):
 * M200 = (4π/3)·200·ρ_crit·r200³, r_s = r200/c, ρ_s = (200/3) ρ_crit c³/(ln(1+c) − c/(1+c)).
 * @param m200Msun M200 [M_sun]
 * @param c200 concentration
 * Reference: Navarro, Frenk & White (1997, ApJ 490, 493) eq. 2 (from memory); Wright &
 * Brainerd (2000) eqs. 1–4 and 7.
 */
export function nfwFromM200(
  m200Msun: number,
  c200: number,
  d: LensDistances,
  cosmology: FlatLambdaCDM,
): NfwLensingParams {
  const rhoCrit = cosmology.criticalDensityKgPerM3(d.zLens);
  const m = m200Msun * M_SUN_KG;
  const r200M = Math.cbrt((3 * m) / (4 * Math.PI * 200 * rhoCrit));
  const rsM = r200M / c200;
  const deltaC = ((200 / 3) * c200 * c200 * c200) / (Math.log(1 + c200) - c200 / (1 + c200));
  const rhoS = deltaC * rhoCrit;
  const kappaS = (rhoS * rsM) / d.sigmaCritKgPerM2;
  const rSArcsec = (rsM / (d.dLMpc * MPC_M)) * RAD_TO_ARCSEC;
  return { kappaS, rSArcsec, r200Mpc: r200M / MPC_M };
}
