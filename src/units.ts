/**
 * Physical constants and unit conversions, defined once (CONVENTIONS.md: internal angles in
 * radians, user-facing angles in arcsec or degrees). Constants are those astropy uses
 * (CODATA 2018, IAU 2015 nominal values), so the tests can compare with astropy to 1e-6.
 */

export const DEG_TO_RAD = Math.PI / 180;
export const RAD_TO_DEG = 180 / Math.PI;
export const ARCSEC_TO_RAD = Math.PI / (180 * 3600);
export const RAD_TO_ARCSEC = (180 * 3600) / Math.PI;

/** Speed of light in vacuum [m/s] (exact, SI). */
export const C_M_PER_S = 299_792_458;
/** Newtonian constant of gravitation [m³ kg⁻¹ s⁻²] (CODATA 2018). */
export const G_SI = 6.6743e-11;
/** Boltzmann constant [J/K] (exact, SI 2019). */
export const K_B_J_PER_K = 1.380649e-23;
/** Nominal solar mass [kg] (IAU 2015 B3, GM_sun / G with CODATA 2018 G, as astropy). */
export const M_SUN_KG = 1.988409870698051e30;
/** Nominal solar radius [m] (IAU 2015 B3). */
export const R_SUN_M = 6.957e8;
/** Megaparsec [m] (IAU 2012 au, as astropy). */
export const MPC_M = 3.0856775814913673e22;
/** 1 Jansky [W m⁻² Hz⁻¹]. */
export const JY_SI = 1e-26;
/** Seconds per day. */
export const DAY_S = 86_400;
