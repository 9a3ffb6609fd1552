/**
 * After the search: the pieces of a FitOutcome that describe the best fit — model and source
 * images, dirty images of data, model and residual, binned visibilities, critical curves and
 * caustics, derived quantities — and the checks that turn into warnings the user must see.
 */
import { fitBeam } from "../fourier/beamFit.js";
import { dirtyImage } from "../fourier/dirty.js";
import type { PrimaryBeamOptions } from "../fourier/primaryBeam.js";
import { caustics as causticsOf, criticalCurves } from "../lens/critical.js";
import { lensSummary } from "../lens/summary.js";
import type { NumericModel } from "../model/types.js";
import { ARCSEC_TO_RAD } from "../units.js";
import type { FitDataset } from "./dataset.js";
import type { DatasetInfo, GridImage, Polyline, UvBins } from "./outcome.js";
import { predictVisibilities } from "./predict.js";
import type { LensedSky } from "./sky.js";

/** Model visibilities of dataset d for the sky's current model, times its flux scale. */
export function modelVisibilities(sky: LensedSky, ds: FitDataset, fluxScale: number, beam?: PrimaryBeamOptions): { re: Float64Array; im: Float64Array } {
  const re = new Float64Array(ds.vis.count);
  const im = new Float64Array(ds.vis.count);
  predictVisibilities(sky, ds.vis.uLambda, ds.vis.vLambda, ds.vis.channel, ds.vis.channelFreqHz, re, im, {
    beam,
    pointingOffsetRad: ds.pointingOffsetRad,
    tolerance: 1e-8,
  });
  for (let k = 0; k < re.length; k++) {
    re[k] *= fluxScale;
    im[k] *= fluxScale;
  }
  return { re, im };
}

/** Natural-weighted dirty images of data, model and residual on the model grid. */
export function dirtyTriplet(
  ds: FitDataset,
  model: { re: Float64Array; im: Float64Array },
  n: number,
  cellArcsec: number,
): { data: GridImage; model: GridImage; residual: GridImage; rms: number; beam: DatasetInfo["beam"] } {
  const v = ds.vis;
  const base = { uLambda: v.uLambda, vLambda: v.vLambda, weight: v.weight };
  const opts = { size: n, cellArcsec, weighting: "natural" as const };
  const data = dirtyImage({ ...base, reJy: v.reJy, imJy: v.imJy }, opts);
  const mod = dirtyImage({ ...base, reJy: model.re, imJy: model.im }, opts);
  const resRe = Float64Array.from(v.reJy, (x, k) => x - model.re[k]);
  const resIm = Float64Array.from(v.imJy, (x, k) => x - model.im[k]);
  const res = dirtyImage({ ...base, reJy: resRe, imJy: resIm }, opts);
  let s = 0;
  for (let p = 0; p < res.image.length; p++) s += res.image[p] * res.image[p];
  const rms = Math.sqrt(s / res.image.length);
  const b = fitBeam(data.psf, n, cellArcsec);
  const wrap = (d: Float64Array): GridImage => ({ data: d, n, cellArcsec, centreXArcsec: 0, centreYArcsec: 0, unit: "Jy/beam" });
  return {
    data: wrap(data.image),
    model: wrap(mod.image),
    residual: wrap(res.image),
    rms,
    beam: { bmajArcsec: b.bmajArcsec, bminArcsec: b.bminArcsec, bpaDeg: b.bpaDeg },
  };
}

/**
 * Vector-averaged visibilities in uv-distance bins (equal counts per bin), data and model.
 * @param noiseScale multiplies every σ
 */
export function binVisibilities(ds: FitDataset, model: { re: Float64Array; im: Float64Array }, noiseScale: number, bins = 24): UvBins {
  const v = ds.vis;
  const m = v.count;
  const order = Array.from({ length: m }, (_, k) => k);
  const dist = Float64Array.from({ length: m }, (_, k) => Math.hypot(v.uLambda[k], v.vLambda[k]));
  order.sort((a, b) => dist[a] - dist[b]);
  const nb = Math.max(1, Math.min(bins, m));
  const out: UvBins = {
    uvDistKlambda: new Float64Array(nb),
    dataRe: new Float64Array(nb),
    dataIm: new Float64Array(nb),
    modelRe: new Float64Array(nb),
    modelIm: new Float64Array(nb),
    sigmaJy: new Float64Array(nb),
    count: new Int32Array(nb),
  };
  for (let b = 0; b < nb; b++) {
    const lo = Math.floor((b * m) / nb);
    const hi = Math.floor(((b + 1) * m) / nb);
    let sw = 0;
    let sd = 0;
    for (let t = lo; t < hi; t++) {
      const k = order[t];
      const w = v.weight[k];
      sw += w;
      sd += w * dist[k];
      out.dataRe[b] += w * v.reJy[k];
      out.dataIm[b] += w * v.imJy[k];
      out.modelRe[b] += w * model.re[k];
      out.modelIm[b] += w * model.im[k];
    }
    if (sw > 0) {
      out.uvDistKlambda[b] = sd / sw / 1e3;
      out.dataRe[b] /= sw;
      out.dataIm[b] /= sw;
      out.modelRe[b] /= sw;
      out.modelIm[b] /= sw;
      out.sigmaJy[b] = noiseScale / Math.sqrt(sw);
    }
    out.count[b] = hi - lo;
  }
  return out;
}

/** Critical curves and caustics of the model's lens on a grid covering the field. */
export function curvesAndCaustics(sky: LensedSky, sizeArcsec: number): { critical: Polyline[]; caustics: Polyline[] } {
  const n = 256;
  const grid = { n, cellArcsec: sizeArcsec / n };
  const curves = criticalCurves(sky.lens, grid);
  const caus = causticsOf(sky.lens, curves);
  const conv = (c: { xArcsec: number[]; yArcsec: number[]; closed: boolean }): Polyline => {
    const close = c.closed && c.xArcsec.length > 0;
    const x = Float64Array.from(close ? [...c.xArcsec, c.xArcsec[0]] : c.xArcsec);
    const y = Float64Array.from(close ? [...c.yArcsec, c.yArcsec[0]] : c.yArcsec);
    return { xArcsec: x, yArcsec: y };
  };
  return {
    critical: [...curves.tangential, ...curves.radial].map(conv),
    caustics: [...caus.tangential, ...caus.radial].map(conv),
  };
}

/**
 * The source plane rendered on its own grid [Jy/arcsec²], centred on the flux-weighted source
 * centre, wide enough for the source and the caustics.
 */
export function sourcePlaneImage(sky: LensedSky, caustics: Polyline[], n = 128): GridImage {
  const src = sky.source;
  let cx = 0;
  let cy = 0;
  let fsum = 0;
  let extent = 0;
  for (let k = 0; k < src.nComponents; k++) {
    const p = src.components[k].profile as { xArcsec: number; yArcsec: number; rEffArcsec?: number; sigmaArcsec?: number };
    const f = Math.max(src.components[k].fluxJy, 1e-30);
    cx += f * p.xArcsec;
    cy += f * p.yArcsec;
    fsum += f;
    extent = Math.max(extent, 4 * (p.rEffArcsec ?? p.sigmaArcsec ?? 0));
  }
  cx /= fsum;
  cy /= fsum;
  for (const c of caustics) {
    for (let t = 0; t < c.xArcsec.length; t++) extent = Math.max(extent, 1.1 * Math.max(Math.abs(c.xArcsec[t] - cx), Math.abs(c.yArcsec[t] - cy)));
  }
  extent = Math.max(extent, 0.2);
  const cell = (2 * extent) / n;
  const x = new Float64Array(n * n);
  const y = new Float64Array(n * n);
  for (let j = 0; j < n; j++) {
    for (let i = 0; i < n; i++) {
      x[j * n + i] = cx + (n / 2 - i) * cell;
      y[j * n + i] = cy + (j - n / 2) * cell;
    }
  }
  const data = new Float64Array(n * n);
  src.evaluate(x, y, data, n * n);
  return { data, n, cellArcsec: cell, centreXArcsec: cx, centreYArcsec: cy, unit: "Jy/arcsec2" };
}

/** Derived quantities: Einstein radius and mass (with redshifts), per-source magnification, flux, size. */
export function derivedQuantities(sky: LensedSky, model: NumericModel, sizeArcsec: number): Record<string, number | null> {
  const out: Record<string, number | null> = {};
  const summary = lensSummary({ ...model, source: [] } as never, { grid: { n: 256, cellArcsec: sizeArcsec / 256 } });
  out.einstein_radius_arcsec = summary.einstein_radius_arcsec;
  out.einstein_mass_msun = summary.einstein_mass_msun;
  out.velocity_dispersion_kms = summary.velocity_dispersion_kms;
  out.sigma_crit_msun_per_arcsec2 = summary.sigma_crit_msun_per_arcsec2;
  out.D_l_mpc = summary.D_l_mpc;
  out.D_s_mpc = summary.D_s_mpc;
  out.D_ls_mpc = summary.D_ls_mpc;
  const n = sky.grid.n;
  const img = new Float64Array(n * n);
  let lensedTotal = 0;
  let intrinsicTotal = 0;
  for (let k = 0; k < sky.componentCount; k++) {
    sky.renderUnit(k, img);
    let mu = 0;
    for (let p = 0; p < img.length; p++) mu += img[p];
    const i = sky.modelIndex(k);
    const c = sky.source.components[k];
    const prof = c.profile as { rEffArcsec?: number; sigmaArcsec?: number };
    out[`source[${i}].magnification`] = mu;
    out[`source[${i}].intrinsic_flux_jy`] = c.fluxJy;
    out[`source[${i}].lensed_flux_jy`] = c.fluxJy * mu;
    out[`source[${i}].size_arcsec`] = prof.rEffArcsec ?? prof.sigmaArcsec ?? 0;
    lensedTotal += c.fluxJy * mu;
    intrinsicTotal += c.fluxJy;
  }
  out.total_magnification = intrinsicTotal > 0 ? lensedTotal / intrinsicTotal : null;
  return out;
}

/** Fraction of the model image's flux in the outer two-pixel border (emission beyond the field). */
export function borderFluxFraction(image: Float64Array, n: number): number {
  let total = 0;
  let border = 0;
  for (let j = 0; j < n; j++) {
    for (let i = 0; i < n; i++) {
      const v = Math.abs(image[j * n + i]);
      total += v;
      if (i < 2 || j < 2 || i >= n - 2 || j >= n - 2) border += v;
    }
  }
  return total > 0 ? border / total : 0;
}

/** Largest phase error of the neglected w-term [rad]: 2π·max|w|·(1 − cos θ_max) (CONVENTIONS.md). */
export function wTermPhaseRad(ds: FitDataset, thetaMaxArcsec: number): number {
  let wmax = 0;
  for (let k = 0; k < ds.vis.count; k++) wmax = Math.max(wmax, Math.abs(ds.vis.wLambda[k]));
  return 2 * Math.PI * wmax * (1 - Math.cos(thetaMaxArcsec * ARCSEC_TO_RAD));
}
