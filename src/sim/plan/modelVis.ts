/**
 * Model visibilities of a sky at a fixed set of (u, v) points, evaluated many times: the
 * forecast needs the truth and 2–3 shifted copies of it per free parameter at the same points.
 *
 * Two paths:
 * - "grid": the lensed sky is ray-traced onto a model grid (LensedSky, supersampled, without
 *   adaptive refinement so the image is a smooth function of the parameters), attenuated by the
 *   primary beam of each channel, and transformed by one NUFFT plan per channel whose points are
 *   set once; model visibilities are M_k / h_k with h the pixel window (CONVENTIONS.md).
 * - "analytic": a sky without lens components whose sources are all point sources or Gaussians
 *   uses the closed forms of REFERENCES.md §5 (sim/analytic.ts); each component's flux is
 *   multiplied by the primary-beam response at its centre (exact for a point source; for a
 *   Gaussian much smaller than the primary beam the beam's variation across it is neglected).
 *
 * `combine` evaluates Σ_i c_i V(model_i). On the grid path the images are combined first and
 * transformed once: the NUFFT is linear, so its error on the combination is ε relative to the
 * combination itself, not to the individual terms — which is what makes finite differences of
 * model visibilities accurate at an ordinary tolerance.
 * Reference: Barnett, Magland & af Klinteberg 2019 (NUFFT); CONVENTIONS.md (grid, pixel window);
 * REFERENCES.md §5 (analytic visibilities), §7 (primary beam 1.13 λ/D).
 */
import { InputError } from "../../errors.js";
import { chooseField, emissionRadiusArcsec, type FieldChoice } from "../../fit/field.js";
import { LensedSky } from "../../fit/sky.js";
import { NufftPlan } from "../../fourier/nufft.js";
import { primaryBeamImage, primaryBeamResponse, type PrimaryBeamOptions } from "../../fourier/primaryBeam.js";
import { pixelWindow } from "../../fourier/window.js";
import type { NumericModel } from "../../model/types.js";
import { ARCSEC_TO_RAD, RAD_TO_ARCSEC } from "../../units.js";
import { analyticSkyVisibilities, type AnalyticComponent } from "../analytic.js";

/** The uv points a plan evaluates at (a subset of `Visibilities`). */
export interface UvPoints {
  uLambda: Float64Array;
  vLambda: Float64Array;
  /** Channel index of each entry into channelFreqHz. */
  channel: ArrayLike<number>;
  channelFreqHz: Float64Array;
}

export interface ModelVisibilityOptions {
  /** NUFFT relative accuracy (grid path), in [1e-15, 0.1]. Default 1e-8. */
  tolerance?: number;
  /** Worker threads of the NUFFT (1 = calling thread only). Default 1. */
  threads?: number;
  /** Primary beam; null = no attenuation. Default null. */
  beam?: PrimaryBeamOptions | null;
  /** "auto" (default): analytic when possible, else grid; "grid": always ray-trace a grid. */
  path?: "auto" | "grid";
  /** Sub-rays per pixel side on the grid path. Default 2. */
  supersample?: number;
}

/** Defaults of the optional ModelVisibilityOptions fields. */
export const DEFAULT_MODEL_VIS_OPTIONS = Object.freeze({ tolerance: 1e-8, threads: 1, path: "auto" as const, supersample: 2 });

/** One channel of the grid path: its entries, NUFFT plan and primary beam. */
interface ChannelPlan {
  freqHz: number;
  /** Entry indices of this channel. */
  index: Int32Array;
  nufft: NufftPlan;
  /** 1/h_k per entry of the channel. */
  inverseWindow: Float64Array;
  /** Beam on the grid, or null. */
  beam: Float64Array | null;
  re: Float64Array;
  im: Float64Array;
}

/** True when the sky can use the closed-form path. */
export function isAnalyticSky(model: NumericModel): boolean {
  return model.lens.length === 0 && model.source.every((s) => s.type === "point_source" || s.type === "gaussian");
}

/**
 * Check that a sky can be forecast: analytic sources only, and no point source behind a lens
 * (its images are deposited into single pixels, a step function of every parameter).
 * @throws InputError naming the component
 */
export function checkForecastSky(model: NumericModel, label: string, path: "auto" | "grid"): void {
  model.source.forEach((s, i) => {
    if (s.type === "pixelised") {
      throw new InputError(
        `${label}: source[${i}]: a pixelised source has no single true brightness to forecast; describe the source with sersic, gaussian or point_source components`,
      );
    }
    if (s.type === "point_source" && (model.lens.length > 0 || path === "grid")) {
      throw new InputError(
        `${label}: source[${i}]: a point_source on a ray-traced grid is deposited into single pixels, which finite differences cannot differentiate; use a compact gaussian (sigma well below the beam) instead`,
      );
    }
  });
}

/** Visibilities of one model, or of a linear combination of models, at fixed points. */
export class ModelVisibilityPlan {
  readonly kind: "grid" | "analytic";
  /** The model grid (grid path only). */
  readonly field: FieldChoice | null;
  /** Number of entries. */
  readonly count: number;
  /** Notes on choices made (grid), for the report. */
  readonly notes: string[] = [];

  private readonly points: UvPoints;
  private readonly beamOptions: PrimaryBeamOptions | null;
  private readonly channels: ChannelPlan[] = [];
  private readonly sky: LensedSky | null = null;
  /** True when some source has a spectral index: the image is rendered per channel. */
  private readonly spectral: boolean;
  private readonly render: Float64Array;
  private readonly accumulators: Float64Array[] = [];
  private readonly beamed: Float64Array;
  private disposed = false;

  /**
   * @param truth numbers-only model (sets the grid's extent; any model given later must have
   *   the same components)
   * @param points uv points [λ] and channels; the grid path copies them per channel, the
   *   closed-form path borrows them (do not mutate them while the plan is in use)
   * @param uvMaxAxisLambda largest |u| or |v| of the points [λ] (Nyquist cell of the grid)
   * @param label name of the sky for messages
   */
  constructor(truth: NumericModel, points: UvPoints, uvMaxAxisLambda: number, label: string, options: ModelVisibilityOptions = {}) {
    const o = { ...DEFAULT_MODEL_VIS_OPTIONS, ...options };
    checkForecastSky(truth, label, o.path);
    this.points = points;
    this.count = points.uLambda.length;
    this.beamOptions = options.beam ?? null;
    this.spectral = truth.source.some((s) => "spectral_index" in s && s.spectral_index !== undefined && s.spectral_index !== 0);
    this.kind = o.path === "auto" && isAnalyticSky(truth) ? "analytic" : "grid";
    if (this.kind === "analytic") {
      this.field = null;
      this.render = new Float64Array(0);
      this.beamed = new Float64Array(0);
      return;
    }

    // Model grid: the sky file's field block when it resolves these baselines, else chosen here.
    const nyquistArcsec = (0.5 / uvMaxAxisLambda) * RAD_TO_ARCSEC;
    let fieldSpec = truth.field;
    if (fieldSpec && fieldSpec.pixel_arcsec > nyquistArcsec) {
      this.notes.push(
        `the sky file's field.pixel_arcsec ${fieldSpec.pixel_arcsec}″ is coarser than this configuration's Nyquist cell ${nyquistArcsec.toPrecision(3)}″; the model grid was chosen automatically`,
      );
      fieldSpec = undefined;
    }
    this.field = chooseField(uvMaxAxisLambda, emissionRadiusArcsec(truth), fieldSpec);
    this.notes.push(...this.field.notes);
    const n = this.field.n;
    const cellRad = this.field.cellArcsec * ARCSEC_TO_RAD;
    this.sky = new LensedSky({ n, cellArcsec: this.field.cellArcsec, supersample: o.supersample, refineFactor: 1 });
    this.render = new Float64Array(n * n);
    this.beamed = new Float64Array(n * n);

    const nChan = points.channelFreqHz.length;
    const counts = new Int32Array(nChan);
    for (let k = 0; k < this.count; k++) {
      const c = points.channel[k];
      if (!(c >= 0 && c < nChan)) throw new InputError(`${label}: entry ${k} has channel ${c}, outside 0…${nChan - 1}`);
      counts[c]++;
    }
    const fill = new Int32Array(nChan);
    const indices = Array.from(counts, (m) => new Int32Array(m));
    for (let k = 0; k < this.count; k++) {
      const c = points.channel[k];
      indices[c][fill[c]++] = k;
    }
    for (let c = 0; c < nChan; c++) {
      if (counts[c] === 0) continue;
      const index = indices[c];
      const u = Float64Array.from(index, (k) => points.uLambda[k]);
      const v = Float64Array.from(index, (k) => points.vLambda[k]);
      const nufft = new NufftPlan({ nx: n, cellRad, tolerance: o.tolerance, threads: o.threads });
      nufft.setPoints(u, v);
      const inverseWindow = new Float64Array(index.length);
      for (let t = 0; t < index.length; t++) inverseWindow[t] = 1 / pixelWindow(u[t], v[t], cellRad);
      const freqHz = points.channelFreqHz[c];
      const beam = this.beamOptions ? primaryBeamImage({ nx: n, ny: n, cellRad }, freqHz, [0, 0], this.beamOptions) : null;
      this.channels.push({ freqHz, index, nufft, inverseWindow, beam, re: new Float64Array(index.length), im: new Float64Array(index.length) });
    }
    // One accumulated image, or one per channel when the brightness depends on frequency.
    const nAcc = this.spectral ? this.channels.length : 1;
    for (let a = 0; a < nAcc; a++) this.accumulators.push(new Float64Array(n * n));
  }

  /** Visibilities [Jy] of one model at every entry. */
  visibilities(model: NumericModel, outRe: Float64Array, outIm: Float64Array): void {
    this.combine([model], [1], outRe, outIm);
  }

  /**
   * Σ_i coefs_i · V(models_i) [Jy per unit of the coefficients] at every entry.
   * @param models numbers-only models with the truth's components
   * @param coefs one coefficient per model
   */
  combine(models: readonly NumericModel[], coefs: ArrayLike<number>, outRe: Float64Array, outIm: Float64Array): void {
    if (this.disposed) throw new Error("ModelVisibilityPlan: used after dispose");
    if (outRe.length !== this.count || outIm.length !== this.count) {
      throw new Error(`ModelVisibilityPlan: outputs hold ${outRe.length}/${outIm.length} entries; expected ${this.count}`);
    }
    if (this.kind === "analytic") this.combineAnalytic(models, coefs, outRe, outIm);
    else this.combineGrid(models, coefs, outRe, outIm);
  }

  private combineGrid(models: readonly NumericModel[], coefs: ArrayLike<number>, outRe: Float64Array, outIm: Float64Array): void {
    const sky = this.sky as LensedSky;
    for (const acc of this.accumulators) acc.fill(0);
    const render = this.render;
    for (let m = 0; m < models.length; m++) {
      const c = coefs[m];
      if (c === 0) continue;
      sky.setModel(models[m]);
      for (let a = 0; a < this.accumulators.length; a++) {
        // Without spectral indices the image is the same at every frequency (one render).
        sky.renderTotal(render, this.spectral ? this.channels[a].freqHz : undefined);
        const acc = this.accumulators[a];
        for (let p = 0; p < acc.length; p++) acc[p] += c * render[p];
      }
    }
    for (let ch = 0; ch < this.channels.length; ch++) {
      const plan = this.channels[ch];
      const acc = this.accumulators[this.spectral ? ch : 0];
      let image = acc;
      if (plan.beam) {
        const beam = plan.beam;
        const out = this.beamed;
        for (let p = 0; p < out.length; p++) out[p] = acc[p] * beam[p];
        image = out;
      }
      plan.nufft.execute(image, plan.re, plan.im);
      const idx = plan.index;
      const inv = plan.inverseWindow;
      for (let t = 0; t < idx.length; t++) {
        outRe[idx[t]] = plan.re[t] * inv[t];
        outIm[idx[t]] = plan.im[t] * inv[t];
      }
    }
  }

  private combineAnalytic(models: readonly NumericModel[], coefs: ArrayLike<number>, outRe: Float64Array, outIm: Float64Array): void {
    outRe.fill(0);
    outIm.fill(0);
    const pts = this.points;
    const nChan = pts.channelFreqHz.length;
    // Group entries by channel once per call (cheap next to the trigonometry).
    const chanIdx: number[][] = Array.from({ length: nChan }, () => []);
    for (let k = 0; k < this.count; k++) chanIdx[pts.channel[k]].push(k);
    for (let c = 0; c < nChan; c++) {
      const idx = chanIdx[c];
      if (idx.length === 0) continue;
      const freqHz = pts.channelFreqHz[c];
      const u = Float64Array.from(idx, (k) => pts.uLambda[k]);
      const v = Float64Array.from(idx, (k) => pts.vLambda[k]);
      for (let m = 0; m < models.length; m++) {
        const coef = coefs[m];
        if (coef === 0) continue;
        const comps = models[m].source.map((s) => {
          const comp = { ...(s as unknown as AnalyticComponent) };
          if (this.beamOptions) {
            const rRad = Math.hypot(comp.x, comp.y) * ARCSEC_TO_RAD;
            comp.flux *= primaryBeamResponse(rRad, freqHz, this.beamOptions);
          }
          return comp;
        });
        const { re, im } = analyticSkyVisibilities(comps)(u, v, freqHz);
        for (let t = 0; t < idx.length; t++) {
          outRe[idx[t]] += coef * re[t];
          outIm[idx[t]] += coef * im[t];
        }
      }
    }
  }

  /** Release the NUFFT plans (and their worker threads). */
  dispose(): void {
    if (this.disposed) return;
    this.disposed = true;
    for (const c of this.channels) c.nufft.dispose();
  }
}
