/**
 * Closed-form visibilities of unlensed point and Gaussian sources, so the simulator can be
 * tested and used without lens code. Internal sign convention (CONVENTIONS.md):
 * V(u, v) = Σ I(x, y) e^{−2πi(ux + vy)}, x East, y North.
 *
 * - Point source of flux F at (x0, y0):  V = F e^{−2πi(u x0 + v y0)}.
 * - Gaussian of total flux F, circularised σ, axis ratio q = b/a and position angle pa = φ
 *   (North through East): with u' = u sinφ + v cosφ (along the major axis) and
 *   v' = −u cosφ + v sinφ,  V = F exp(−2π²σ²(u'²/q + q v'²)) e^{−2πi(u x0 + v y0)}
 *   (σ_major = σ/√q, σ_minor = σ√q).
 * - Optional power-law spectrum: F(ν) = F (ν/ν_ref)^α, with `spectral_index` α and
 *   `ref_freq_ghz` ν_ref.
 * Reference: REFERENCES.md §5 (formulas and check values).
 */
import { InputError } from "../errors.js";
import { ARCSEC_TO_RAD, DEG_TO_RAD } from "../units.js";

/** A point source as in a model/sky file: flux [Jy], x, y [arcsec]. */
export interface PointSourceComponent {
  type: "point_source";
  flux: number;
  x: number;
  y: number;
  spectral_index?: number;
  ref_freq_ghz?: number;
}

/** A Gaussian source as in a model/sky file: flux [Jy], sigma, x, y [arcsec], pa [deg], q. */
export interface GaussianComponent {
  type: "gaussian";
  flux: number;
  sigma: number;
  q: number;
  pa: number;
  x: number;
  y: number;
  spectral_index?: number;
  ref_freq_ghz?: number;
}

export type AnalyticComponent = PointSourceComponent | GaussianComponent;

/**
 * Sky model callback of the simulator: visibilities [Jy, internal convention] at (u, v)
 * [wavelengths] for one frequency [Hz]. The input arrays are only valid during the call.
 */
export type SkyVisibilityFn = (uLambda: Float64Array, vLambda: Float64Array, freqHz: number) => { re: Float64Array; im: Float64Array };

/**
 * Build the visibility function of a list of point and Gaussian components.
 * @param components sky components in file units (Jy, arcsec, deg)
 * @param where prefix for error messages (e.g. "sky.json: source")
 * @returns a SkyVisibilityFn summing all components
 * @throws InputError for an unknown type or an invalid parameter
 * Reference: REFERENCES.md §5.
 */
export function analyticSkyVisibilities(components: readonly AnalyticComponent[], where = "source"): SkyVisibilityFn {
  const n = components.length;
  const fluxJy = new Float64Array(n);
  const x0Rad = new Float64Array(n);
  const y0Rad = new Float64Array(n);
  // Gaussian envelope exp(−(A u² + B uv + C v²)); all zero for a point source.
  const coefA = new Float64Array(n);
  const coefB = new Float64Array(n);
  const coefC = new Float64Array(n);
  const alpha = new Float64Array(n);
  const refFreqHz = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    const c = components[k] as unknown as Record<string, unknown>;
    const at = `${where}[${k}]`;
    const num = (key: string, ok: (v: number) => boolean, rule: string): number => {
      const v = c[key];
      if (typeof v !== "number" || !Number.isFinite(v) || !ok(v)) {
        throw new InputError(`${at}.${key}: expected ${rule}; got ${v === undefined ? "nothing" : JSON.stringify(v)}`);
      }
      return v;
    };
    if (c.type !== "gaussian" && c.type !== "point_source") {
      throw new InputError(`${at}.type: expected "point_source" or "gaussian" for an analytic sky; got ${JSON.stringify(c.type)}`);
    }
    fluxJy[k] = num("flux", () => true, "a number in Jy");
    x0Rad[k] = num("x", () => true, "a number in arcsec") * ARCSEC_TO_RAD;
    y0Rad[k] = num("y", () => true, "a number in arcsec") * ARCSEC_TO_RAD;
    if (c.type === "gaussian") {
      const sigmaRad = num("sigma", (v) => v > 0, "a positive number in arcsec") * ARCSEC_TO_RAD;
      const q = num("q", (v) => v > 0 && v <= 1, "a number in (0, 1]");
      const phi = num("pa", () => true, "a number in degrees") * DEG_TO_RAD;
      const s = Math.sin(phi);
      const co = Math.cos(phi);
      // 2π²σ²(u'²/q + q v'²) expanded in u, v with u' = u s + v co, v' = −u co + v s.
      const f = 2 * Math.PI * Math.PI * sigmaRad * sigmaRad;
      coefA[k] = f * (s * s / q + q * co * co);
      coefB[k] = f * 2 * s * co * (1 / q - q);
      coefC[k] = f * (co * co / q + q * s * s);
    }
    if (c.spectral_index !== undefined) {
      alpha[k] = num("spectral_index", () => true, "a number");
      if (alpha[k] !== 0) refFreqHz[k] = num("ref_freq_ghz", (v) => v > 0, "a positive number in GHz (needed with spectral_index)") * 1e9;
    }
  }
  return (uLambda: Float64Array, vLambda: Float64Array, freqHz: number) => {
    const m = uLambda.length;
    const re = new Float64Array(m);
    const im = new Float64Array(m);
    for (let k = 0; k < n; k++) {
      const f = alpha[k] !== 0 ? fluxJy[k] * Math.pow(freqHz / refFreqHz[k], alpha[k]) : fluxJy[k];
      const a = coefA[k];
      const b = coefB[k];
      const cc = coefC[k];
      const twoPiX = 2 * Math.PI * x0Rad[k];
      const twoPiY = 2 * Math.PI * y0Rad[k];
      const gaussian = a !== 0 || b !== 0 || cc !== 0;
      for (let i = 0; i < m; i++) {
        const u = uLambda[i];
        const v = vLambda[i];
        const amp = gaussian ? f * Math.exp(-(a * u * u + b * u * v + cc * v * v)) : f;
        const phase = -(twoPiX * u + twoPiY * v);
        re[i] += amp * Math.cos(phase);
        im[i] += amp * Math.sin(phase);
      }
    }
    return { re, im };
  };
}
