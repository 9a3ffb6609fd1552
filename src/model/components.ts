/**
 * The table of model components: for each `type`, its role (lens or source), its parameters in
 * canonical order, each parameter's allowed range, unit, default and period. Validation
 * (schema.ts), the free-parameter list (parameters.ts) and error messages all read this one
 * table, so they cannot drift apart. Names and units follow DESIGN.md ("Model file") and
 * CONVENTIONS.md (angles in arcsec, `pa` in degrees from North through East, q = b/a ∈ (0, 1]).
 */

/** An interval of allowed values; `loOpen` means the lower end itself is excluded. */
export interface Domain {
  lo: number;
  hi: number;
  loOpen: boolean;
  hiOpen: boolean;
}

/** Every real number. */
export const REAL: Domain = { lo: -Infinity, hi: Infinity, loOpen: true, hiOpen: true };
/** x > 0. */
export const POSITIVE: Domain = { lo: 0, hi: Infinity, loOpen: true, hiOpen: true };
/** x ≥ 0. */
export const NON_NEGATIVE: Domain = { lo: 0, hi: Infinity, loOpen: false, hiOpen: true };
/** Axis ratio q = b/a ∈ (0, 1]. */
export const AXIS_RATIO: Domain = { lo: 0, hi: 1, loOpen: true, hiOpen: false };

/** True when v lies in the domain (open ends excluded). */
export function inDomain(v: number, d: Domain): boolean {
  if (!Number.isFinite(v)) return false;
  const aboveLo = d.loOpen ? v > d.lo : v >= d.lo;
  const belowHi = d.hiOpen ? v < d.hi : v <= d.hi;
  return aboveLo && belowHi;
}

/** The domain in interval notation, e.g. "(0, 1]" or "(0, ∞)". */
export function domainText(d: Domain): string {
  const lo = d.lo === -Infinity ? "-∞" : String(d.lo);
  const hi = d.hi === Infinity ? "∞" : String(d.hi);
  return `${d.loOpen ? "(" : "["}${lo}, ${hi}${d.hiOpen ? ")" : "]"}`;
}

/** One numeric parameter of a component type. */
export interface ParamDef {
  /** Key in the model file, e.g. "theta_E". */
  key: string;
  /** Allowed values (fixed values, init, bounds and prior supports must lie inside). */
  domain: Domain;
  /** Unit as shown in messages and reports: "arcsec", "deg", "Jy", "M_sun", "GHz" or "". */
  unit: string;
  /** Must appear in the file (unless it belongs to an alternative parametrisation). */
  required: boolean;
  /** Value used when an optional parameter is absent (omitted from output when undefined). */
  defaultValue?: number;
  /** Period in degrees for angles the physics repeats in (pa): the search wraps it. */
  periodDeg?: number;
  /** Only a fixed number is allowed (no init/prior/same_as), e.g. multipole order. */
  fixedOnly?: boolean;
  /** Allowed values of an integer parameter, or "integer" for any integer in the domain. */
  integer?: readonly number[] | "integer";
  /** A source flux: linear in the model visibilities, profiled by the fitter. */
  linear?: boolean;
}

/** A string-valued setting of a component, e.g. the pixelised grid kind. */
export interface StringDef {
  key: string;
  allowed: readonly string[];
  required: boolean;
}

/**
 * Alternative parametrisations: exactly one set must be complete. Example: NFW takes either
 * `kappa_s, r_s` or `m200, c200` (the latter needs redshifts).
 */
export interface Alternative {
  keys: readonly string[];
  needsRedshift: boolean;
}

export interface ComponentDef {
  type: string;
  role: "lens" | "source";
  /** One line for messages: what the component is. */
  summary: string;
  params: readonly ParamDef[];
  strings: readonly StringDef[];
  alternatives?: readonly Alternative[];
}

const deg180 = 180;

function p(key: string, domain: Domain, unit: string, extra: Partial<ParamDef> = {}): ParamDef {
  return { key, domain, unit, required: true, ...extra };
}

const POSITION = [p("x", REAL, "arcsec"), p("y", REAL, "arcsec")];
const PA = p("pa", REAL, "deg", { periodDeg: deg180 });
const SPECTRAL = [
  p("spectral_index", REAL, "", { required: false }),
  p("ref_freq_ghz", POSITIVE, "GHz", { required: false, fixedOnly: true }),
];

/**
 * Power-law slope γ of the EPL (CONVENTIONS.md; 2 = isothermal). The open range (1.2, 2.8)
 * keeps the hypergeometric series of Tessore & Metcalf (2015) well inside its convergence.
 */
export const SLOPE: Domain = { lo: 1.2, hi: 2.8, loOpen: true, hiOpen: true };
/** Sérsic index n ∈ [0.2, 10]: outside it b_n and the profile become numerically unreliable. */
export const SERSIC_N: Domain = { lo: 0.2, hi: 10, loOpen: false, hiOpen: false };
/** External shear strength γ ∈ [0, 1): γ ≥ 1 flips the image parity of the whole field. */
export const SHEAR: Domain = { lo: 0, hi: 1, loOpen: false, hiOpen: true };

export const COMPONENTS: readonly ComponentDef[] = [
  {
    type: "sie",
    role: "lens",
    summary: "singular isothermal ellipsoid (optional core)",
    params: [p("theta_E", POSITIVE, "arcsec"), p("q", AXIS_RATIO, ""), PA, ...POSITION,
      p("core", NON_NEGATIVE, "arcsec", { required: false, defaultValue: 0 })],
    strings: [],
  },
  {
    type: "epl",
    role: "lens",
    summary: "elliptical power law",
    params: [p("theta_E", POSITIVE, "arcsec"), p("slope", SLOPE, ""), p("q", AXIS_RATIO, ""), PA, ...POSITION],
    strings: [],
  },
  {
    type: "shear",
    role: "lens",
    summary: "external shear",
    params: [p("gamma", SHEAR, ""), PA,
      p("x", REAL, "arcsec", { required: false, defaultValue: 0 }),
      p("y", REAL, "arcsec", { required: false, defaultValue: 0 })],
    strings: [],
  },
  {
    type: "multipole",
    role: "lens",
    // An m-fold pattern: turning pa by 360°/m gives the same lens, hence periodDeg = 360/m
    // (set per component in parameters.ts, since m is the fixed `order`).
    summary: "multipole perturbation of order 3 or 4",
    params: [p("order", REAL, "", { fixedOnly: true, integer: [3, 4] }), p("strength", NON_NEGATIVE, ""),
      p("pa", REAL, "deg", { periodDeg: deg180 }), ...POSITION],
    strings: [],
  },
  {
    type: "nfw",
    role: "lens",
    summary: "NFW halo (kappa_s, r_s or m200, c200 with redshifts)",
    params: [p("kappa_s", POSITIVE, "", { required: false }), p("r_s", POSITIVE, "arcsec", { required: false }),
      p("m200", POSITIVE, "M_sun", { required: false }), p("c200", POSITIVE, "", { required: false }),
      p("q", AXIS_RATIO, ""), PA, ...POSITION],
    strings: [],
    alternatives: [
      { keys: ["kappa_s", "r_s"], needsRedshift: false },
      { keys: ["m200", "c200"], needsRedshift: true },
    ],
  },
  {
    type: "point",
    role: "lens",
    summary: "point mass (theta_E, or mass with redshifts)",
    params: [p("theta_E", POSITIVE, "arcsec", { required: false }), p("mass", POSITIVE, "M_sun", { required: false }),
      ...POSITION],
    strings: [],
    alternatives: [
      { keys: ["theta_E"], needsRedshift: false },
      { keys: ["mass"], needsRedshift: true },
    ],
  },
  {
    type: "pseudo_jaffe",
    role: "lens",
    summary: "truncated isothermal sphere",
    params: [p("theta_E", POSITIVE, "arcsec"), p("r_trunc", POSITIVE, "arcsec"), ...POSITION],
    strings: [],
  },
  {
    type: "sersic",
    role: "source",
    summary: "Sérsic profile",
    params: [p("flux", NON_NEGATIVE, "Jy", { linear: true }), p("r_eff", POSITIVE, "arcsec"), p("n", SERSIC_N, ""),
      p("q", AXIS_RATIO, ""), PA, ...POSITION, ...SPECTRAL],
    strings: [],
  },
  {
    type: "gaussian",
    role: "source",
    summary: "elliptical Gaussian",
    params: [p("flux", NON_NEGATIVE, "Jy", { linear: true }), p("sigma", POSITIVE, "arcsec"), p("q", AXIS_RATIO, ""),
      PA, ...POSITION, ...SPECTRAL],
    strings: [],
  },
  {
    type: "point_source",
    role: "source",
    summary: "unresolved source",
    params: [p("flux", NON_NEGATIVE, "Jy", { linear: true }), ...POSITION, ...SPECTRAL],
    strings: [],
  },
  {
    type: "pixelised",
    role: "source",
    summary: "pixelised source with regularisation",
    params: [
      // Regular grid: cells per side; adaptive grid: number of cells.
      p("cells", { lo: 4, hi: 1_000_000, loOpen: false, hiOpen: false }, "", { fixedOnly: true, integer: "integer" }),
      // Regularisation strength; absent = chosen by the source reconstruction.
      p("lambda", POSITIVE, "", { required: false }),
      // Correlation length of a kernel prior (gaussian, matern); absent = chosen by the evidence.
      p("scale", POSITIVE, "arcsec", { required: false, fixedOnly: true }),
      // Image-plane mask: an annulus about the first lens component's starting position; absent = automatic.
      p("mask_inner", NON_NEGATIVE, "arcsec", { required: false, fixedOnly: true }),
      p("mask_outer", POSITIVE, "arcsec", { required: false, fixedOnly: true }),
    ],
    strings: [
      { key: "grid", allowed: ["regular", "adaptive"], required: true },
      { key: "regularisation", allowed: ["zeroth", "gradient", "curvature", "gaussian", "matern"], required: true },
    ],
  },
];

const BY_TYPE = new Map(COMPONENTS.map((c) => [c.type, c]));

/** The definition of a component type, or undefined. */
export function componentDef(type: string): ComponentDef | undefined {
  return BY_TYPE.get(type);
}

/** Types allowed in the `lens` or `source` array. */
export function typesFor(role: "lens" | "source"): string[] {
  return COMPONENTS.filter((c) => c.role === role).map((c) => c.type);
}

/** Keys that every component may carry besides its parameters. */
export const COMMON_KEYS = ["type", "name"] as const;
