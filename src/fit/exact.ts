/**
 * The exact-visibility likelihood path (`fit --exact-vis`): normal equations of the linear
 * source model formed visibility by visibility through the NUFFT, instead of through gridded
 * statistics. Slower (K transforms of every visibility per evaluation) but independent of the
 * gridded identity, so the two paths check each other; the best fits must agree.
 *   A[k,l] = Σ_i w_i Re(m_ki* m_li),  b[k] = Σ_i w_i Re(m_ki* d_i),  m = M/h (pixel window).
 */
import { NufftPlan } from "../fourier/nufft.js";
import { pixelWindow } from "../fourier/window.js";
import { ARCSEC_TO_RAD } from "../units.js";
import type { FitDataset } from "./dataset.js";

/** Per-group NUFFT plans and the group's data, held by a dataset on the exact path. */
export interface ExactGroup {
  plan: NufftPlan;
  weight: Float64Array;
  reJy: Float64Array;
  imJy: Float64Array;
  /** 1/h per visibility. */
  invWindow: Float64Array;
  /** Unit-image visibilities, K × m each (grown on demand). */
  re: Float64Array;
  im: Float64Array;
}

const exactGroups = new WeakMap<FitDataset, ExactGroup[]>();

/** Prepare NUFFT plans (tolerance 1e-10) per dataset and channel group. */
export function attachExact(datasets: FitDataset[], n: number, cellArcsec: number, threads = 1): void {
  const cellRad = cellArcsec * ARCSEC_TO_RAD;
  for (const d of datasets) {
    const groups: ExactGroup[] = [];
    for (let g = 0; g < d.groupFreqHz.length; g++) {
      const idx: number[] = [];
      for (let k = 0; k < d.vis.count; k++) if (d.group[k] === g) idx.push(k);
      const u = Float64Array.from(idx, (k) => d.vis.uLambda[k]);
      const v = Float64Array.from(idx, (k) => d.vis.vLambda[k]);
      const plan = new NufftPlan({ nx: n, cellRad, tolerance: 1e-10, threads });
      plan.setPoints(u, v);
      groups.push({
        plan,
        weight: Float64Array.from(idx, (k) => d.vis.weight[k]),
        reJy: Float64Array.from(idx, (k) => d.vis.reJy[k]),
        imJy: Float64Array.from(idx, (k) => d.vis.imJy[k]),
        invWindow: Float64Array.from(idx, (_, t) => 1 / pixelWindow(u[t], v[t], cellRad)),
        re: new Float64Array(0),
        im: new Float64Array(0),
      });
    }
    exactGroups.set(d, groups);
  }
}

/** True when the dataset was prepared for the exact path. */
export function hasExact(d: FitDataset): boolean {
  return exactGroups.has(d);
}

/** Release the NUFFT plans (worker threads) of every dataset. */
export function disposeExact(datasets: FitDataset[]): void {
  for (const d of datasets) {
    for (const g of exactGroups.get(d) ?? []) g.plan.dispose();
    exactGroups.delete(d);
  }
}

/** Normal equations of group g by NUFFT of each image (same contract as GriddedStats.normalEquations). */
export function exactNormalEquations(d: FitDataset, g: number, images: readonly Float64Array[], outA: Float64Array, outB: Float64Array): void {
  const grp = (exactGroups.get(d) as ExactGroup[])[g];
  const K = images.length;
  const m = grp.weight.length;
  if (grp.re.length < K * m) {
    grp.re = new Float64Array(K * m);
    grp.im = new Float64Array(K * m);
  }
  for (let k = 0; k < K; k++) {
    const re = grp.re.subarray(k * m, (k + 1) * m);
    const im = grp.im.subarray(k * m, (k + 1) * m);
    grp.plan.execute(images[k], re, im);
    for (let i = 0; i < m; i++) {
      re[i] *= grp.invWindow[i];
      im[i] *= grp.invWindow[i];
    }
  }
  for (let k = 0; k < K; k++) {
    let sb = 0;
    for (let i = 0; i < m; i++) sb += grp.weight[i] * (grp.re[k * m + i] * grp.reJy[i] + grp.im[k * m + i] * grp.imJy[i]);
    outB[k] = sb;
    for (let l = k; l < K; l++) {
      let s = 0;
      for (let i = 0; i < m; i++) s += grp.weight[i] * (grp.re[k * m + i] * grp.re[l * m + i] + grp.im[k * m + i] * grp.im[l * m + i]);
      outA[k * K + l] = s;
      outA[l * K + k] = s;
    }
  }
}
