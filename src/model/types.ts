/**
 * Types of the model file after validation, and of the "numbers-only" model that the physics
 * builders take (DESIGN.md "Model file"; parameter names as in the file, angles in arcsec,
 * `pa` in degrees from North through East, fluxes in Jy, masses in M_sun).
 */

/** A prior as written in the file (before truncation to the parameter's allowed range). */
export type PriorSpec =
  | { kind: "uniform"; min: number; max: number }
  | { kind: "normal"; mean: number; sd: number; min?: number; max?: number }
  | { kind: "loguniform"; min: number; max: number };

/** One parameter value as written in the file, after validation. */
export type ParamValue =
  | { kind: "fixed"; value: number }
  | { kind: "free"; init: number; prior: PriorSpec }
  | { kind: "tied"; target: string };

/** One validated component: its numeric parameters in the canonical order of its type. */
export interface ValidComponent {
  type: string;
  name?: string;
  params: Map<string, ParamValue>;
  strings: Map<string, string>;
}

export interface Redshifts {
  lens: number;
  source: number;
}

/** Flat ΛCDM: H0 in km/s/Mpc, Om0 the matter density today. */
export interface Cosmology {
  H0: number;
  Om0: number;
}

/** The model image: full width and pixel size in arcsec. */
export interface FieldSpec {
  size_arcsec: number;
  pixel_arcsec: number;
}

/** A validated model file. */
export interface ValidModel {
  lens: ValidComponent[];
  source: ValidComponent[];
  redshift?: Redshifts;
  cosmology?: Cosmology;
  field?: FieldSpec;
}

// ---- Numbers-only model: every parameter a number, ties resolved, pa wrapped ----

interface Named {
  name?: string;
}
export interface SieNumbers extends Named {
  type: "sie"; theta_E: number; q: number; pa: number; x: number; y: number; core: number;
}
export interface EplNumbers extends Named {
  type: "epl"; theta_E: number; slope: number; q: number; pa: number; x: number; y: number;
}
export interface ShearNumbers extends Named {
  type: "shear"; gamma: number; pa: number; x: number; y: number;
}
export interface MultipoleNumbers extends Named {
  type: "multipole"; order: 3 | 4; strength: number; pa: number; x: number; y: number;
}
/** NFW: exactly one of the pairs (kappa_s, r_s [arcsec]) or (m200 [M_sun], c200) is present. */
export interface NfwNumbers extends Named {
  type: "nfw"; kappa_s?: number; r_s?: number; m200?: number; c200?: number;
  q: number; pa: number; x: number; y: number;
}
/** Point mass: exactly one of theta_E [arcsec] or mass [M_sun] is present. */
export interface PointNumbers extends Named {
  type: "point"; theta_E?: number; mass?: number; x: number; y: number;
}
export interface PseudoJaffeNumbers extends Named {
  type: "pseudo_jaffe"; theta_E: number; r_trunc: number; x: number; y: number;
}
interface Spectral {
  /** S ∝ (ν/ν_ref)^spectral_index; present only when the file gives it. */
  spectral_index?: number;
  ref_freq_ghz?: number;
}
export interface SersicNumbers extends Named, Spectral {
  type: "sersic"; flux: number; r_eff: number; n: number; q: number; pa: number; x: number; y: number;
}
export interface GaussianNumbers extends Named, Spectral {
  type: "gaussian"; flux: number; sigma: number; q: number; pa: number; x: number; y: number;
}
export interface PointSourceNumbers extends Named, Spectral {
  type: "point_source"; flux: number; x: number; y: number;
}
export interface PixelisedNumbers extends Named {
  type: "pixelised";
  grid: "regular" | "adaptive";
  cells: number;
  regularisation: "zeroth" | "gradient" | "curvature" | "gaussian" | "matern";
  /** Absent: the source reconstruction chooses it. */
  lambda?: number;
  /** Correlation length [arcsec] of a kernel prior; absent: chosen by the evidence. */
  scale?: number;
  /** Annular image-plane mask [arcsec] about the first lens component's start; absent: automatic. */
  mask_inner?: number;
  mask_outer?: number;
}

export type LensNumbers =
  | SieNumbers | EplNumbers | ShearNumbers | MultipoleNumbers | NfwNumbers | PointNumbers | PseudoJaffeNumbers;
export type SourceNumbers = SersicNumbers | GaussianNumbers | PointSourceNumbers | PixelisedNumbers;

/** The model with numbers only: what the lens and source builders take, and result.json's `model`. */
export interface NumericModel {
  lens: LensNumbers[];
  source: SourceNumbers[];
  redshift?: Redshifts;
  cosmology?: Cosmology;
  field?: FieldSpec;
}
