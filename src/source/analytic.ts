/**
 * An analytic source: a sum of Sérsic, Gaussian and point-source components, each with a total
 * flux [Jy] at a reference frequency and an optional spectral index, S(ν) = S_ref (ν/ν_ref)^α
 * (common practice, no single source). Fluxes are linear parameters: the fitter renders each
 * component with unit flux (evaluateComponent) and solves for the fluxes.
 */
import { InputError } from "../errors.js";
import { AXIS_RATIO, FINITE, POSITIVE, readNumber, type ComponentInput } from "../lens/validate.js";
import { GaussianProfile, PointSourceProfile } from "./gaussian.js";
import { SERSIC_N_MAX, SERSIC_N_MIN, SersicProfile } from "./sersic.js";

/** Analytic source component types accepted by buildSource. */
export const ANALYTIC_SOURCE_TYPES = ["sersic", "gaussian", "point_source"] as const;

/** True for the source types this module builds (pixelised sources live elsewhere). */
export function isAnalyticSourceType(type: string): boolean {
  return (ANALYTIC_SOURCE_TYPES as readonly string[]).includes(type);
}

export type SourceProfile = SersicProfile | GaussianProfile | PointSourceProfile;

/** One component with its flux and spectrum. */
export interface SourceComponent {
  readonly profile: SourceProfile;
  /** Total flux at the reference frequency [Jy]. */
  readonly fluxJy: number;
  /** Spectral index α (0 when not given). */
  readonly spectralIndex: number;
  /** Reference frequency [Hz] (NaN when no spectral index is given). */
  readonly refFreqHz: number;
}

export class AnalyticSource {
  readonly components: readonly SourceComponent[];

  constructor(components: readonly SourceComponent[]) {
    this.components = components;
  }

  get nComponents(): number {
    return this.components.length;
  }

  /** True if component k is a point source (no surface brightness; images found by the ray tracer). */
  isPoint(k: number): boolean {
    return this.components[k].profile.type === "point_source";
  }

  /** S(ν)/S_ref of component k; 1 if freqHz is undefined or no spectral index was given. */
  spectralFactor(k: number, freqHz?: number): number {
    const c = this.components[k];
    if (freqHz === undefined || c.spectralIndex === 0) return 1;
    return Math.pow(freqHz / c.refFreqHz, c.spectralIndex);
  }

  /** Flux of component k at freqHz (or the reference frequency) [Jy]. */
  componentFluxJy(k: number, freqHz?: number): number {
    return this.components[k].fluxJy * this.spectralFactor(k, freqHz);
  }

  /** Total intrinsic (unlensed) flux, point sources included [Jy]. */
  totalFluxJy(freqHz?: number): number {
    let s = 0;
    for (let k = 0; k < this.components.length; k++) s += this.componentFluxJy(k, freqHz);
    return s;
  }

  /**
   * Surface brightness [Jy/arcsec²] at source-plane positions β [arcsec], summed over the
   * extended components (point sources contribute none); overwrites out.
   */
  evaluate(betaXArcsec: Float64Array, betaYArcsec: Float64Array, out: Float64Array, n = betaXArcsec.length, freqHz?: number): void {
    out.fill(0, 0, n);
    for (let k = 0; k < this.components.length; k++) {
      this.components[k].profile.addBrightness(betaXArcsec, betaYArcsec, out, n, this.componentFluxJy(k, freqHz));
    }
  }

  /**
   * Brightness of component k with unit total flux [arcsec⁻², i.e. Jy/arcsec² per Jy];
   * overwrites out. Zero everywhere for a point source.
   */
  evaluateComponent(k: number, betaXArcsec: Float64Array, betaYArcsec: Float64Array, out: Float64Array, n = betaXArcsec.length): void {
    out.fill(0, 0, n);
    this.components[k].profile.addBrightness(betaXArcsec, betaYArcsec, out, n, 1);
  }

  /** Adds scale × unit-flux brightness of component k into out (no zeroing). */
  addComponent(k: number, betaXArcsec: Float64Array, betaYArcsec: Float64Array, out: Float64Array, n: number, scale: number): void {
    this.components[k].profile.addBrightness(betaXArcsec, betaYArcsec, out, n, scale);
  }
}

/**
 * Build an analytic source from numbers-only components.
 * @param components e.g. `{ type: "sersic", flux: 0.01, r_eff: 0.2, n: 1, q: 0.8, pa: 40, x: 0.05, y: -0.02 }`
 * @param prefix model path prefix for messages (default "source")
 */
export function buildSource(components: readonly ComponentInput[], prefix = "source"): AnalyticSource {
  if (!Array.isArray(components)) {
    throw new InputError(`${prefix}: expected an array of components, got ${typeof components}`);
  }
  return new AnalyticSource(components.map((c, i) => buildSourceComponent(c, `${prefix}[${i}]`)));
}

function buildSourceComponent(c: ComponentInput, path: string): SourceComponent {
  if (c === null || typeof c !== "object" || typeof c.type !== "string") {
    throw new InputError(`${path}: expected an object with a "type" (one of ${ANALYTIC_SOURCE_TYPES.join(", ")})`);
  }
  if (c.type === "pixelised") {
    throw new InputError(`${path}.type: "pixelised" is not an analytic source; pass only ${ANALYTIC_SOURCE_TYPES.join(", ")} components here`);
  }
  if (!isAnalyticSourceType(c.type)) {
    throw new InputError(`${path}.type: "${c.type}" is not a source type; use one of ${ANALYTIC_SOURCE_TYPES.join(", ")}, pixelised`);
  }
  const fluxJy = readNumber(c, path, "flux", { min: 0, hint: "flux is the total flux density in Jy" });
  let spectralIndex = 0;
  let refFreqHz = NaN;
  if (c.spectral_index !== undefined) {
    spectralIndex = readNumber(c, path, "spectral_index", FINITE);
    if (c.ref_freq_ghz === undefined) {
      throw new InputError(`${path}.ref_freq_ghz: missing; a spectral_index needs the reference frequency in GHz`);
    }
    refFreqHz = readNumber(c, path, "ref_freq_ghz", POSITIVE) * 1e9;
  }
  const x = readNumber(c, path, "x", FINITE);
  const y = readNumber(c, path, "y", FINITE);
  let profile: SourceProfile;
  switch (c.type) {
    case "sersic":
      profile = new SersicProfile(
        readNumber(c, path, "r_eff", POSITIVE),
        readNumber(c, path, "n", { min: SERSIC_N_MIN, max: SERSIC_N_MAX }),
        readNumber(c, path, "q", AXIS_RATIO),
        readNumber(c, path, "pa", FINITE),
        x,
        y,
      );
      break;
    case "gaussian":
      profile = new GaussianProfile(
        readNumber(c, path, "sigma", POSITIVE),
        readNumber(c, path, "q", AXIS_RATIO),
        readNumber(c, path, "pa", FINITE),
        x,
        y,
      );
      break;
    default:
      profile = new PointSourceProfile(x, y);
  }
  return { profile, fluxJy, spectralIndex, refFreqHz };
}
