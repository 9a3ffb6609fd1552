/**
 * Flat ΛCDM background: expansion rate, comoving and angular-diameter distances, critical
 * density. Radiation is neglected (as astropy's FlatLambdaCDM with Tcmb0 = 0), which is what
 * CONVENTIONS.md's default cosmology means.
 * Reference: Hogg (1999, astro-ph/9905116) eqs. 14–16 (E(z), D_C), 18 (D_A), 19 (D_A between
 * two redshifts in a flat universe).
 */
import { InputError } from "../errors.js";
import { C_M_PER_S, G_SI, MPC_M } from "../units.js";
import { integrate } from "./quadrature.js";

/** Cosmological parameters as in the model file's `cosmology` block. */
export interface CosmologyParams {
  /** Hubble constant [km/s/Mpc]. */
  H0: number;
  /** Matter density parameter today (flat: Ω_Λ = 1 − Ωm). */
  Om0: number;
}

/** CONVENTIONS.md default: H0 = 70 km/s/Mpc, Ωm = 0.3. */
export const DEFAULT_COSMOLOGY: Readonly<CosmologyParams> = Object.freeze({ H0: 70, Om0: 0.3 });

/**
 * A flat ΛCDM cosmology. Distances are cached per redshift, since the same few redshifts are
 * asked for over and over during a fit.
 */
export class FlatLambdaCDM {
  /** Hubble constant [km/s/Mpc]. */
  readonly H0: number;
  readonly Om0: number;
  /** Hubble distance c/H0 [Mpc]. */
  readonly hubbleDistanceMpc: number;
  private readonly comovingCache = new Map<number, number>();

  /**
   * @param params H0 [km/s/Mpc] and Om0; default CONVENTIONS.md's (70, 0.3).
   * @param where where the values came from, for error messages (e.g. "model.json: cosmology")
   */
  constructor(params: CosmologyParams = DEFAULT_COSMOLOGY, where = "cosmology") {
    const { H0, Om0 } = params;
    if (!Number.isFinite(H0) || H0 <= 0) {
      throw new InputError(`${where}.H0: ${H0} is not a positive number; give the Hubble constant in km/s/Mpc (e.g. 70)`);
    }
    if (!Number.isFinite(Om0) || Om0 < 0 || Om0 > 1) {
      throw new InputError(`${where}.Om0: ${Om0} is outside [0, 1]; the flat model needs 0 ≤ Om0 ≤ 1 (e.g. 0.3)`);
    }
    this.H0 = H0;
    this.Om0 = Om0;
    this.hubbleDistanceMpc = C_M_PER_S / 1000 / H0;
  }

  /** E(z) = H(z)/H0 = sqrt(Ωm (1+z)³ + 1 − Ωm). Reference: Hogg (1999) eq. 14. */
  efunc(z: number): number {
    const a = 1 + z;
    return Math.sqrt(this.Om0 * a * a * a + 1 - this.Om0);
  }

  /** H(z) [s⁻¹]. */
  hubbleRatePerS(z: number): number {
    return ((this.H0 * 1000) / MPC_M) * this.efunc(z);
  }

  /**
   * Line-of-sight comoving distance D_C(z) = D_H ∫0^z dz'/E(z') [Mpc], integrated to 1e-13
   * relative. Reference: Hogg (1999) eq. 15.
   */
  comovingDistanceMpc(z: number): number {
    checkRedshift(z);
    if (z === 0) return 0;
    const cached = this.comovingCache.get(z);
    if (cached !== undefined) return cached;
    const Om0 = this.Om0;
    const integrand = (zz: number): number => {
      const a = 1 + zz;
      return 1 / Math.sqrt(Om0 * a * a * a + 1 - Om0);
    };
    const d = this.hubbleDistanceMpc * integrate(integrand, 0, z, 1e-13);
    if (this.comovingCache.size > 64) this.comovingCache.clear();
    this.comovingCache.set(z, d);
    return d;
  }

  /** Angular-diameter distance D_A(z) = D_C/(1+z) [Mpc]. Reference: Hogg (1999) eq. 18. */
  angularDiameterDistanceMpc(z: number): number {
    return this.comovingDistanceMpc(z) / (1 + z);
  }

  /**
   * Angular-diameter distance from z1 to z2 > z1 in a flat universe,
   * (D_C(z2) − D_C(z1))/(1+z2) [Mpc]. Reference: Hogg (1999) eq. 19.
   */
  angularDiameterDistanceBetweenMpc(z1: number, z2: number): number {
    return (this.comovingDistanceMpc(z2) - this.comovingDistanceMpc(z1)) / (1 + z2);
  }

  /** Critical density ρ_crit(z) = 3H(z)²/(8πG) [kg/m³]. Reference: Hogg (1999) §2 (from memory). */
  criticalDensityKgPerM3(z: number): number {
    const h = this.hubbleRatePerS(z);
    return (3 * h * h) / (8 * Math.PI * G_SI);
  }
}

function checkRedshift(z: number): void {
  if (!Number.isFinite(z) || z < 0) {
    throw new InputError(`redshift: ${z} is not a finite redshift ≥ 0; give redshifts as numbers like 0.5`);
  }
}
