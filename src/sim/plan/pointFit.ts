/**
 * A least-squares fitter for the simplest sky — one unlensed point source — used by the
 * Monte-Carlo check of the forecast until the lens fitter is available.
 *
 * Model (CONVENTIONS.md, REFERENCES.md §5): m_k = S_k e^{−iφ_k}, φ_k = 2π(u_k x + v_k y) with
 * x, y in radians, S_k = F·A(x, y; ν_k)·(ν_k/ν_ref)^α, A the primary-beam response. It is linear
 * in F; in (x, y) it is linearised about the current estimate and iterated (Gauss–Newton on
 * χ² = Σ w |d − m|²), which converges in a few steps when the start lies within a fraction of the
 * beam of the minimum — here the truth, as befits a scatter test. Jacobian (exact, incl. the
 * beam's slope):
 *   ∂m/∂F = A ν-factor e^{−iφ},   ∂m/∂x = m·(∂ ln A/∂x − 2πi u·ARCSEC_TO_RAD)   (x in arcsec).
 * Each step solves the normal equations Re(Jᴴ W J) δ = Re(Jᴴ W r).
 * Reference: Gauss–Newton, e.g. Nocedal & Wright 2006, Numerical Optimization, 2nd ed., §10.3
 * (from memory).
 */
import { InputError } from "../../errors.js";
import { primaryBeamResponse, type PrimaryBeamOptions } from "../../fourier/primaryBeam.js";
import type { SkyFile } from "../../model/load.js";
import { ARCSEC_TO_RAD } from "../../units.js";
import type { Visibilities } from "../../vis/types.js";
import type { FitOne } from "./trials.js";

/** True when the sky is a single point source and no lens. */
export function isSinglePointSourceSky(sky: SkyFile): boolean {
  return sky.truth.lens.length === 0 && sky.truth.source.length === 1 && sky.truth.source[0].type === "point_source";
}

const KEYS = ["flux", "x", "y"] as const;
type Key = (typeof KEYS)[number];

/** Position step [arcsec] of the numerical beam slope; the beam varies on ~10″ scales. */
const BEAM_SLOPE_STEP_ARCSEC = 1e-3;

/**
 * Build the Gauss–Newton fitter of a single-point-source sky.
 * @param sky sky file; its free parameters must be among source[0].flux, .x, .y
 * @param beam primary beam applied by the forecast, or null
 * @returns a FitOne returning the fitted free values in the order of `sky.spec.free`
 * @throws InputError when the sky is not a single point source or frees another parameter
 * Reference: see the module comment.
 */
export function pointSourceFitter(sky: SkyFile, beam: PrimaryBeamOptions | null, maxIterations = 30): FitOne {
  if (!isSinglePointSourceSky(sky)) {
    throw new InputError(`${sky.spec.label}: the point-source fitter needs a sky of one point_source and no lens`);
  }
  const free = sky.spec.free;
  const slot: Key[] = free.map((f) => {
    if (f.role !== "source" || f.component !== 0 || !(KEYS as readonly string[]).includes(f.key)) {
      throw new InputError(`${sky.spec.label}: ${f.name}: the point-source fitter fits only source[0].flux, .x and .y; fix this parameter`);
    }
    return f.key as Key;
  });
  const src = sky.truth.source[0] as { flux: number; x: number; y: number; spectral_index?: number; ref_freq_ghz?: number };
  const nFree = free.length;

  return async (vis: Visibilities) => {
    const p: Record<Key, number> = { flux: src.flux, x: src.x, y: src.y };
    const nChan = vis.channelFreqHz.length;
    const specFactor = new Float64Array(nChan);
    for (let c = 0; c < nChan; c++) {
      const a = src.spectral_index ?? 0;
      specFactor[c] = a !== 0 ? Math.pow(vis.channelFreqHz[c] / ((src.ref_freq_ghz as number) * 1e9), a) : 1;
    }
    const amp = new Float64Array(nChan); // A·ν-factor per channel
    const dlnAx = new Float64Array(nChan);
    const dlnAy = new Float64Array(nChan);
    const jr = new Float64Array(nFree);
    const ji = new Float64Array(nFree);
    let ok = false;
    for (let it = 0; it < maxIterations; it++) {
      for (let c = 0; c < nChan; c++) {
        const f = vis.channelFreqHz[c];
        const A = (x: number, y: number): number => (beam ? primaryBeamResponse(Math.hypot(x, y) * ARCSEC_TO_RAD, f, beam) : 1);
        const a0 = A(p.x, p.y);
        amp[c] = a0 * specFactor[c];
        const h = BEAM_SLOPE_STEP_ARCSEC;
        dlnAx[c] = beam ? (A(p.x + h, p.y) - A(p.x - h, p.y)) / (2 * h * a0) : 0;
        dlnAy[c] = beam ? (A(p.x, p.y + h) - A(p.x, p.y - h)) / (2 * h * a0) : 0;
      }
      const H = new Float64Array(nFree * nFree);
      const g = new Float64Array(nFree);
      const twoPi = 2 * Math.PI * ARCSEC_TO_RAD;
      for (let k = 0; k < vis.count; k++) {
        const c = vis.channel[k];
        const u = vis.uLambda[k], v = vis.vLambda[k], w = vis.weight[k];
        const phi = twoPi * (u * p.x + v * p.y);
        const cr = Math.cos(phi), ci = -Math.sin(phi); // e^{−iφ}
        const s = p.flux * amp[c];
        const mr = s * cr, mi = s * ci;
        const rr = vis.reJy[k] - mr, ri = vis.imJy[k] - mi;
        for (let a = 0; a < nFree; a++) {
          const key = slot[a];
          if (key === "flux") {
            jr[a] = amp[c] * cr;
            ji[a] = amp[c] * ci;
          } else {
            // m·(L − 2πi q) with L = ∂lnA, q = u or v (per arcsec): (mr + i mi)(L − iT)
            const L = key === "x" ? dlnAx[c] : dlnAy[c];
            const T = twoPi * (key === "x" ? u : v);
            jr[a] = mr * L + mi * T;
            ji[a] = mi * L - mr * T;
          }
        }
        for (let a = 0; a < nFree; a++) {
          g[a] += w * (jr[a] * rr + ji[a] * ri);
          for (let b = a; b < nFree; b++) H[a * nFree + b] += w * (jr[a] * jr[b] + ji[a] * ji[b]);
        }
      }
      for (let a = 0; a < nFree; a++) for (let b = 0; b < a; b++) H[a * nFree + b] = H[b * nFree + a];
      const step = solveSymmetric(H, g, nFree);
      if (!step) break;
      let small = true;
      for (let a = 0; a < nFree; a++) {
        p[slot[a]] += step[a];
        // Converged when every step is negligible against its own statistical error 1/sqrt(H_aa).
        if (Math.abs(step[a]) * Math.sqrt(H[a * nFree + a]) > 1e-8) small = false;
      }
      if (small) {
        ok = true;
        break;
      }
    }
    const values = new Float64Array(nFree);
    for (let a = 0; a < nFree; a++) values[a] = p[slot[a]];
    return { values, ok: ok && values.every(Number.isFinite) };
  };
}

/** Solve H δ = g for a small symmetric positive-definite H by Cholesky; null if not SPD. */
function solveSymmetric(H: Float64Array, g: Float64Array, n: number): Float64Array | null {
  const L = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j <= i; j++) {
      let s = H[i * n + j];
      for (let k = 0; k < j; k++) s -= L[i * n + k] * L[j * n + k];
      if (i === j) {
        if (!(s > 0)) return null;
        L[i * n + i] = Math.sqrt(s);
      } else L[i * n + j] = s / L[j * n + j];
    }
  }
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let s = g[i];
    for (let k = 0; k < i; k++) s -= L[i * n + k] * y[k];
    y[i] = s / L[i * n + i];
  }
  const x = new Float64Array(n);
  for (let i = n - 1; i >= 0; i--) {
    let s = y[i];
    for (let k = i + 1; k < n; k++) s -= L[k * n + i] * x[k];
    x[i] = s / L[i * n + i];
  }
  return x;
}
