/**
 * The fit problem as vectors: the full parameter vector (the model's free parameters, then a
 * flux scale for every dataset after the first) and the smaller search vector the optimiser
 * explores (the full vector less the profiled source fluxes). Maps both to log-posterior values.
 *
 * log L = Σ_d [ −χ²_d/(2ν_d²) − n_d ln(2π ν_d²) + Σ_k ln w_k ]   (two real numbers per visibility,
 * each with variance ν_d²/w_k; CONVENTIONS.md weights), so evidences are normalised.
 */
import { InputError } from "../errors.js";
import { bounds, freeNames, logPrior, toNumbers, wrapToBox, type ModelSpec } from "../model/parameters.js";
import type { NumericModel } from "../model/types.js";
import type { Box } from "./optimise.js";
import { fluxLayout, type FluxLayout, UvLikelihood } from "./likelihood.js";

/** Flux-scale prior of datasets after the first: uniform in [0.2, 5] (calibration mismatch). */
export const FLUX_SCALE_RANGE: readonly [number, number] = [0.2, 5];

export class FitProblem {
  /** Finite-difference step of the curvature in units of each parameter's conditional σ (curvature.ts). */
  readonly curvatureStepSigma: number = 0.1;
  readonly spec: ModelSpec;
  readonly like: UvLikelihood;
  readonly layout: FluxLayout;
  readonly nModel: number;
  readonly nDatasets: number;
  /** Full-vector names and units. */
  readonly names: string[];
  readonly units: string[];
  /** Full-vector indices of the search vector's entries. */
  readonly searchIndex: Int32Array;
  /** Whether datasets after the first carry a free flux scale. */
  readonly hasFluxScales: boolean;
  /** Per dataset noise scale ν_d (divides χ² by ν²). */
  readonly noiseScale: Float64Array;
  private readonly logNormConst: Float64Array;
  private readonly full: Float64Array;
  private readonly fluxes: Float64Array;
  private readonly scales: Float64Array;
  private readonly colLo: Float64Array;
  private readonly colHi: Float64Array;

  constructor(spec: ModelSpec, like: UvLikelihood, initialModel: NumericModel, noiseScale: Float64Array, options: { fluxScales?: boolean } = {}) {
    this.spec = spec;
    this.like = like;
    this.nModel = spec.free.length;
    this.nDatasets = like.datasets.length;
    this.noiseScale = noiseScale;
    like.update(initialModel); // fixes the component count and the layout
    this.layout = fluxLayout(like.sky, spec.linear);
    this.names = [...freeNames(spec)];
    this.units = spec.free.map((f) => f.unit);
    this.hasFluxScales = options.fluxScales ?? true;
    if (this.hasFluxScales) {
      for (let d = 1; d < this.nDatasets; d++) {
        this.names.push(`dataset[${d}].flux_scale`);
        this.units.push("");
      }
    }
    const profiled = new Set<number>(Array.from(this.layout.columnFreeIndex));
    const search: number[] = [];
    for (let i = 0; i < this.names.length; i++) if (!profiled.has(i)) search.push(i);
    this.searchIndex = Int32Array.from(search);
    this.logNormConst = new Float64Array(this.nDatasets);
    this.full = new Float64Array(this.names.length);
    this.fluxes = new Float64Array(like.components);
    this.scales = new Float64Array(this.nDatasets).fill(1);
    const C = this.layout.columnFreeIndex.length;
    this.colLo = new Float64Array(C);
    this.colHi = new Float64Array(C);
    const b = bounds(spec);
    for (let c = 0; c < C; c++) {
      const i = this.layout.columnFreeIndex[c];
      const prior = spec.free[i].prior;
      this.colLo[c] = Math.max(0, prior.kind === "normal" ? (Number.isFinite(prior.min) ? prior.min : 0) : b.lower[i]);
      this.colHi[c] = prior.kind === "normal" ? (Number.isFinite(prior.max) ? prior.max : Infinity) : b.upper[i];
    }
    this.updateNormalisation();
  }

  /** Recompute the likelihood's normalisation after the noise scales change. */
  updateNormalisation(): void {
    this.like.datasets.forEach((d, i) => {
      let sumLogW = 0;
      for (let k = 0; k < d.vis.count; k++) sumLogW += Math.log(d.vis.weight[k]);
      const nu2 = this.noiseScale[i] * this.noiseScale[i];
      this.logNormConst[i] = -d.vis.count * Math.log(2 * Math.PI * nu2) + sumLogW;
    });
  }

  /** Full-vector search box, and the periodic dimensions of the search vector. */
  searchBox(): Box {
    const b = bounds(this.spec);
    const lower = new Float64Array(this.searchIndex.length);
    const upper = new Float64Array(this.searchIndex.length);
    const periodic: { dim: number; period: number }[] = [];
    this.searchIndex.forEach((fi, s) => {
      if (fi >= this.nModel) {
        lower[s] = FLUX_SCALE_RANGE[0];
        upper[s] = FLUX_SCALE_RANGE[1];
        return;
      }
      const f = this.spec.free[fi];
      lower[s] = b.lower[fi];
      upper[s] = b.upper[fi];
      if (f.periodic !== undefined && upper[s] - lower[s] >= f.periodic - 1e-9) {
        upper[s] = lower[s] + f.periodic;
        periodic.push({ dim: s, period: f.periodic });
      }
    });
    return { lower, upper, periodic };
  }

  /** Full vector → numbers-only model (flux scales ignored). */
  model(full: Float64Array): NumericModel {
    return toNumbers(this.spec, full.subarray(0, this.nModel));
  }

  /** Log prior of a full vector (model priors + flux-scale priors). */
  logPrior(full: Float64Array): number {
    const modelPart = full.subarray(0, this.nModel);
    let lp = logPrior(this.spec, modelPart);
    const w = FLUX_SCALE_RANGE[1] - FLUX_SCALE_RANGE[0];
    for (let d = 1; d < this.nDatasets && this.hasFluxScales; d++) {
      const s = full[this.nModel + d - 1];
      lp += s >= FLUX_SCALE_RANGE[0] && s <= FLUX_SCALE_RANGE[1] ? -Math.log(w) : -Infinity;
    }
    return lp;
  }

  /** χ² per dataset for a full vector (stored weights), after `like.update`. */
  private chi2PerDataset(full: Float64Array, out: Float64Array): void {
    for (let d = 0; d < this.nDatasets; d++) {
      const s = d === 0 || !this.hasFluxScales ? 1 : full[this.nModel + d - 1];
      out[d] = this.like.chi2(d, this.fluxes, s);
    }
  }

  /** Log-likelihood from per-dataset χ². */
  logLikelihoodFromChi2(chi2: Float64Array): number {
    let ll = 0;
    for (let d = 0; d < this.nDatasets; d++) {
      ll += -0.5 * chi2[d] / (this.noiseScale[d] * this.noiseScale[d]) + 0.5 * this.logNormConst[d];
    }
    return ll;
  }

  /**
   * Log posterior and log likelihood of a full vector (fluxes as given). Returns −∞ where the
   * prior vanishes or the model is not physical.
   */
  evaluateFull(full: Float64Array, chi2Out?: Float64Array): { logPosterior: number; logLikelihood: number } {
    wrapToBox(this.spec, full.subarray(0, this.nModel));
    const lp = this.logPrior(full);
    if (!Number.isFinite(lp)) return { logPosterior: -Infinity, logLikelihood: -Infinity };
    const model = this.tryUpdate(full);
    if (!model) return { logPosterior: -Infinity, logLikelihood: -Infinity };
    this.like.modelFluxes(model, this.fluxes);
    const chi2 = chi2Out ?? new Float64Array(this.nDatasets);
    this.chi2PerDataset(full, chi2);
    const ll = this.logLikelihoodFromChi2(chi2);
    return { logPosterior: lp + ll, logLikelihood: ll };
  }

  /**
   * Expand a search vector to a full one with the fluxes profiled (NNLS), and return its
   * log posterior. `outFull` receives the full vector.
   */
  evaluateSearch(search: Float64Array, outFull: Float64Array, chi2Out?: Float64Array): number {
    const full = outFull;
    // Start from the initial flux values so unprofiled slots are defined, then fill the search part.
    for (let s = 0; s < this.searchIndex.length; s++) full[this.searchIndex[s]] = search[s];
    for (let c = 0; c < this.layout.columnFreeIndex.length; c++) {
      const i = this.layout.columnFreeIndex[c];
      if (!Number.isFinite(full[i]) || full[i] <= 0) full[i] = this.spec.free[i].init;
    }
    wrapToBox(this.spec, full.subarray(0, this.nModel));
    const model = this.tryUpdate(full);
    if (!model) return -Infinity;
    this.scales[0] = 1;
    for (let d = 1; d < this.nDatasets; d++) this.scales[d] = this.hasFluxScales ? full[this.nModel + d - 1] : 1;
    const cols = this.like.profileFluxes(model, this.layout, this.scales, this.noiseScale, this.colLo, this.colHi, this.fluxes);
    for (let c = 0; c < cols.length; c++) full[this.layout.columnFreeIndex[c]] = cols[c];
    const lp = this.logPrior(full);
    if (!Number.isFinite(lp)) return -Infinity;
    const chi2 = chi2Out ?? new Float64Array(this.nDatasets);
    this.chi2PerDataset(full, chi2);
    return lp + this.logLikelihoodFromChi2(chi2);
  }

  /** Search vector of a full vector. */
  toSearch(full: Float64Array): Float64Array {
    return Float64Array.from(this.searchIndex, (i) => full[i]);
  }

  /** Initial full vector: the model's init values and unit flux scales. */
  initialFull(): Float64Array {
    const v = new Float64Array(this.names.length);
    this.spec.free.forEach((f, i) => (v[i] = f.init));
    for (let d = 1; d < this.nDatasets && this.hasFluxScales; d++) v[this.nModel + d - 1] = 1;
    return v;
  }

  protected tryUpdate(full: Float64Array): NumericModel | null {
    let model: NumericModel;
    try {
      model = this.model(full);
      this.like.update(model);
    } catch (err) {
      if (err instanceof InputError) return null; // an unphysical corner of the prior box
      throw err;
    }
    return model;
  }
}
