/**
 * The uv-plane likelihood of a lens model by gridded statistics (DESIGN.md "Two exact ideas").
 * For a numbers-only model the sky is ray-traced once, every analytic source component is
 * rendered at unit flux (U_k, Jy/pixel per Jy), attenuated by each channel group's primary beam,
 * and reduced to normal equations per dataset:
 *   χ²_d(f) = Σw|d|² − 2 s_d fᵀb_d + s_d² fᵀA_d f,
 *   A_d[k,l] = Σ_g a_kg a_lg ⟨P_g U_k, B_g⋆P_g U_l⟩,  b_d[k] = Σ_g a_kg ⟨P_g U_k, D_g⟩,
 * with f the reference-frequency fluxes, a_kg the spectral factor (ν_g/ν_ref)^α_k, and s_d the
 * dataset's flux scale. Fluxes are linear: the optimiser profiles them by NNLS; samplers pass them.
 * χ² here uses the weights as stored; a noise scale ν_d divides it by ν_d².
 */
import { InputError } from "../errors.js";
import type { LinearParameter } from "../model/parameters.js";
import type { NumericModel } from "../model/types.js";
import type { FitDataset } from "./dataset.js";
import { exactNormalEquations } from "./exact.js";
import { nnlsNormal } from "./nnls.js";
import type { LensedSky } from "./sky.js";

/** How the analytic source components' fluxes map to profiled columns. */
export interface FluxLayout {
  /** Column of each analytic component (−1: flux not profiled). */
  columnOf: Int32Array;
  /** Free-vector index of each column's flux parameter. */
  columnFreeIndex: Int32Array;
}

/** Build the flux layout from the model's linear parameters and the sky's analytic components. */
export function fluxLayout(sky: LensedSky, linear: readonly LinearParameter[]): FluxLayout {
  const K = sky.componentCount;
  const columnOf = new Int32Array(K).fill(-1);
  const free: number[] = [];
  for (const lp of linear) {
    let used = false;
    for (let k = 0; k < K; k++) {
      if (lp.sourceIndices.includes(sky.modelIndex(k))) {
        columnOf[k] = free.length;
        used = true;
      }
    }
    if (used) free.push(lp.freeIndex);
  }
  return { columnOf, columnFreeIndex: Int32Array.from(free) };
}

export interface Chi2Parts {
  /** χ² of each dataset with stored weights. */
  perDataset: Float64Array;
  /** Fluxes of the analytic components [Jy] used. */
  fluxes: Float64Array;
}

export class UvLikelihood {
  readonly sky: LensedSky;
  readonly datasets: readonly FitDataset[];
  /** Analytic components (set by the first update; fixed for a model structure). */
  private K = -1;
  private unit: Float64Array[] = [];
  private beamed: Float64Array[] = [];
  private Ag = new Float64Array(0);
  private bg = new Float64Array(0);
  /** Per dataset: A (K×K), b (K), Σw|d|². */
  readonly A: Float64Array[] = [];
  readonly b: Float64Array[] = [];
  readonly dataSq: Float64Array;
  /** Evaluations since construction (for progress reports). */
  evaluations = 0;

  /** Normal equations visibility by visibility (NUFFT) instead of by gridded statistics. */
  readonly exact: boolean;

  constructor(sky: LensedSky, datasets: readonly FitDataset[], exact = false) {
    this.sky = sky;
    this.datasets = datasets;
    this.exact = exact;
    this.dataSq = new Float64Array(datasets.length);
    datasets.forEach((d, i) => {
      if (!d.stats || !d.beams) throw new Error("UvLikelihood: attachGrid first");
      if (!exact) {
        this.dataSq[i] = d.stats.sumWeightedDataSq();
        return;
      }
      let s = 0;
      for (let k = 0; k < d.vis.count; k++) s += d.vis.weight[k] * (d.vis.reJy[k] ** 2 + d.vis.imJy[k] ** 2);
      this.dataSq[i] = s;
    });
  }

  /** Number of analytic source components of the last model. */
  get components(): number {
    return Math.max(0, this.K);
  }

  /** Trace and render the model, and form the normal equations of every dataset. */
  update(model: NumericModel): void {
    this.evaluations++;
    const sky = this.sky;
    sky.setModel(model);
    const K = sky.componentCount;
    const nPix = sky.grid.n * sky.grid.n;
    if (K !== this.K) {
      this.K = K;
      this.unit = Array.from({ length: K }, () => new Float64Array(nPix));
      this.beamed = Array.from({ length: K }, () => new Float64Array(nPix));
      this.Ag = new Float64Array(K * K);
      this.bg = new Float64Array(K);
      this.A.length = 0;
      this.b.length = 0;
      for (let d = 0; d < this.datasets.length; d++) {
        this.A.push(new Float64Array(K * K));
        this.b.push(new Float64Array(K));
      }
    }
    for (let k = 0; k < K; k++) sky.renderUnit(k, this.unit[k]);
    const source = sky.source;
    for (let d = 0; d < this.datasets.length; d++) {
      const ds = this.datasets[d];
      const A = this.A[d];
      const b = this.b[d];
      A.fill(0);
      b.fill(0);
      const beams = ds.beams as Float64Array[];
      for (let g = 0; g < ds.groupFreqHz.length; g++) {
        const P = beams[g];
        for (let k = 0; k < K; k++) {
          const U = this.unit[k];
          const J = this.beamed[k];
          for (let p = 0; p < nPix; p++) J[p] = U[p] * P[p];
        }
        if (this.exact) exactNormalEquations(ds, g, this.beamed, this.Ag, this.bg);
        else (ds.stats as NonNullable<FitDataset["stats"]>).normalEquations(this.beamed, g, this.Ag, this.bg);
        const f = ds.groupFreqHz[g];
        for (let k = 0; k < K; k++) {
          const ak = source.spectralFactor(k, f);
          b[k] += ak * this.bg[k];
          for (let l = 0; l < K; l++) A[k * K + l] += ak * source.spectralFactor(l, f) * this.Ag[k * K + l];
        }
      }
    }
  }

  /** χ² of dataset d for component fluxes f [Jy] and flux scale s (stored weights). */
  chi2(d: number, fluxes: Float64Array, fluxScale = 1): number {
    const K = this.K;
    const A = this.A[d];
    const b = this.b[d];
    let lin = 0;
    let quad = 0;
    for (let k = 0; k < K; k++) {
      lin += fluxes[k] * b[k];
      let row = 0;
      for (let l = 0; l < K; l++) row += A[k * K + l] * fluxes[l];
      quad += fluxes[k] * row;
    }
    return this.dataSq[d] - 2 * fluxScale * lin + fluxScale * fluxScale * quad;
  }

  /** Fluxes of the analytic components as the model gives them [Jy]. */
  modelFluxes(model: NumericModel, out: Float64Array): void {
    for (let k = 0; k < this.K; k++) {
      const s = model.source[this.sky.modelIndex(k)] as { flux?: number };
      out[k] = s.flux ?? 0;
    }
  }

  /**
   * Profile the free fluxes: minimise Σ_d χ²_d/ν_d² over the profiled columns with the others
   * fixed at the model's values, subject to flux ≥ 0 (NNLS), then clip into [lo, hi] of each
   * column's prior. Writes the component fluxes into `fluxes` and returns the column values.
   */
  profileFluxes(
    model: NumericModel,
    layout: FluxLayout,
    fluxScale: Float64Array,
    noiseScale: Float64Array,
    colLo: Float64Array,
    colHi: Float64Array,
    fluxes: Float64Array,
  ): Float64Array {
    const K = this.K;
    const C = layout.columnFreeIndex.length;
    this.modelFluxes(model, fluxes);
    if (C === 0) return new Float64Array(0);
    // Total normal system over datasets: Σ α_d A_d, Σ β_d b_d, α = s²/ν², β = s/ν².
    const At = new Float64Array(K * K);
    const bt = new Float64Array(K);
    for (let d = 0; d < this.datasets.length; d++) {
      const nu2 = noiseScale[d] * noiseScale[d];
      const alpha = (fluxScale[d] * fluxScale[d]) / nu2;
      const beta = fluxScale[d] / nu2;
      for (let i = 0; i < K * K; i++) At[i] += alpha * this.A[d][i];
      for (let k = 0; k < K; k++) bt[k] += beta * this.b[d][k];
    }
    // f = T g + f0, with f0 the fixed (non-profiled) fluxes.
    const f0 = new Float64Array(K);
    for (let k = 0; k < K; k++) if (layout.columnOf[k] < 0) f0[k] = fluxes[k];
    const M = new Float64Array(C * C);
    const r = new Float64Array(C);
    for (let k = 0; k < K; k++) {
      const ck = layout.columnOf[k];
      if (ck < 0) continue;
      let af0 = 0;
      for (let l = 0; l < K; l++) af0 += At[k * K + l] * f0[l];
      r[ck] += bt[k] - af0;
      for (let l = 0; l < K; l++) {
        const cl = layout.columnOf[l];
        if (cl >= 0) M[ck * C + cl] += At[k * K + l];
      }
    }
    // A column whose images all fall outside the field has a zero row: NNLS leaves it at 0.
    const sol = nnlsNormal(M, r);
    const g = sol.x;
    for (let c = 0; c < C; c++) {
      if (!Number.isFinite(g[c])) throw new InputError("flux solve failed: the normal equations are not finite; check the weights");
      g[c] = Math.min(Math.max(g[c], colLo[c]), colHi[c]);
    }
    for (let k = 0; k < K; k++) {
      const ck = layout.columnOf[k];
      if (ck >= 0) fluxes[k] = g[ck];
    }
    return g;
  }
}
