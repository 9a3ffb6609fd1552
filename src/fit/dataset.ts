/**
 * The datasets of a fit: each visibility file becomes Stokes I with checked weights, rephased
 * to the first file's phase centre, split into channel groups, and reduced once to gridded
 * statistics on the model grid (DESIGN.md). Each dataset keeps its own u, v and weights.
 */
import { InputError } from "../errors.js";
import { GriddedStats } from "../fourier/gridded.js";
import { primaryBeamImage, type PrimaryBeamOptions } from "../fourier/primaryBeam.js";
import { estimateWeightScale, rescaleWeights } from "../vis/noise.js";
import { readVisibilities } from "../vis/read.js";
import { toStokesI } from "../vis/stokes.js";
import type { ReadReport, StokesReport, Visibilities } from "../vis/types.js";
import { ARCSEC_TO_RAD, DEG_TO_RAD } from "../units.js";

/** One dataset ready for the likelihood. */
export interface FitDataset {
  name: string;
  path: string;
  /** Stokes I, rephased to the reference phase centre; weights possibly rescaled. */
  vis: Visibilities;
  readReport: ReadReport;
  stokesReport: StokesReport;
  /** Weight-scale factor estimated from the scatter (NaN when it could not be estimated). */
  weightScaleEstimate: number;
  /** Pairs used by that estimate. */
  weightScalePairs: number;
  /** True when the weights were multiplied by the estimate (--rescale-weights). */
  weightsRescaled: boolean;
  /** Channel group of each entry, and each group's mean frequency [Hz]. */
  group: Uint16Array;
  groupFreqHz: Float64Array;
  /** Pointing centre minus the reference phase centre [rad] (x East, y North). */
  pointingOffsetRad: [number, number];
  /** Phase-centre offset from the reference that was removed by rephasing [arcsec]. */
  rephaseArcsec: [number, number];
  /** Set by attachGrid: statistics and primary beams per group on the model grid. */
  stats?: GriddedStats;
  beams?: Float64Array[];
}

export interface LoadOptions {
  /** Multiply weights by the scatter-based estimate. */
  rescaleWeights?: boolean;
  /** Most channel groups per dataset (each costs FFTs per evaluation). Default 4. */
  maxGroups?: number;
  /** Source spectral indices present: groups then follow frequency more finely. */
  spectral?: boolean;
}

/** A dataset already in memory (simulations, planning trials), with a name for messages. */
export interface InMemoryData {
  name: string;
  vis: Visibilities;
}

/** Read, form Stokes I, check weights, rephase and group channels for every file. */
export async function loadDatasets(paths: (string | InMemoryData)[], options: LoadOptions = {}): Promise<FitDataset[]> {
  if (paths.length === 0) throw new InputError("fit: give at least one visibility file");
  const out: FitDataset[] = [];
  let ref: [number, number] | undefined;
  for (const entry of paths) {
    const path = typeof entry === "string" ? entry : entry.name;
    const { vis: raw, report } =
      typeof entry === "string"
        ? await readVisibilities(entry)
        : {
            vis: entry.vis,
            report: { format: "csv" as const, entriesInFile: entry.vis.count, kept: entry.vis.count, droppedFlagged: 0, droppedNonFinite: 0, droppedAuto: 0, notes: ["in memory"] },
          };
    const name = path.split("/").pop() ?? path;
    const { vis: stokes, report: stokesReport } = toStokesI(raw);
    if (stokes.count === 0) {
      throw new InputError(
        `${name}: no Stokes I visibilities could be formed (${stokesReport.singleDropped} single linear-feed hands dropped, ` +
          `${stokesReport.crossHandsIgnored} cross hands ignored); the fit needs parallel hands or Stokes I`,
      );
    }
    const est = estimateWeightScale(stokes);
    let vis = stokes;
    let rescaled = false;
    if (options.rescaleWeights) {
      if (!(est.weightScale > 0)) {
        throw new InputError(`${name}: --rescale-weights: the scatter of consecutive integrations could not be measured (${est.pairs} pairs); give the weights as they should be, or fit the noise scale`);
      }
      vis = rescaleWeights(stokes, est.weightScale);
      rescaled = true;
    }
    const centre = vis.phaseCentreDeg;
    let rephase: [number, number] = [0, 0];
    if (!ref) ref = centre;
    else if (centre && ref && (centre[0] !== ref[0] || centre[1] !== ref[1])) {
      rephase = tangentOffsetArcsec(ref, centre);
      rephaseToReference(vis, rephase);
    }
    const pointing = vis.pointingCentreDeg ?? centre;
    const pointingOffset: [number, number] =
      pointing && ref ? (tangentOffsetArcsec(ref, pointing).map((a) => a * ARCSEC_TO_RAD) as [number, number]) : [0, 0];
    const { group, groupFreqHz } = channelGroups(vis, options.maxGroups ?? 4, options.spectral ?? false);
    out.push({
      name,
      path,
      vis,
      readReport: report,
      stokesReport,
      weightScaleEstimate: est.weightScale,
      weightScalePairs: est.pairs,
      weightsRescaled: rescaled,
      group,
      groupFreqHz,
      pointingOffsetRad: pointingOffset,
      rephaseArcsec: rephase,
    });
  }
  return out;
}

/**
 * Offset of `to` from `from` in the tangent plane at `from` [arcsec] (x East, y North), by the
 * SIN projection: x = cos δ sin Δα, y = sin δ cos δ0 − cos δ sin δ0 cos Δα (Greisen & Calabretta 2002).
 */
export function tangentOffsetArcsec(fromDeg: [number, number], toDeg: [number, number]): [number, number] {
  const a0 = fromDeg[0] * DEG_TO_RAD;
  const d0 = fromDeg[1] * DEG_TO_RAD;
  const a = toDeg[0] * DEG_TO_RAD;
  const d = toDeg[1] * DEG_TO_RAD;
  const x = Math.cos(d) * Math.sin(a - a0);
  const y = Math.sin(d) * Math.cos(d0) - Math.cos(d) * Math.sin(d0) * Math.cos(a - a0);
  return [x / ARCSEC_TO_RAD, y / ARCSEC_TO_RAD];
}

/**
 * Shift the phase centre of `vis` by −offset so that it refers to the reference centre: with
 * the dataset's centre at c (offset from the reference), V_ref(u, v) = V(u, v)·e^{−2πi(u c_x + v c_y)}
 * (shift theorem in the internal sign convention). Small-field approximation: u, v are not
 * re-projected, adequate for offsets of a few arcsec to arcminutes.
 */
export function rephaseToReference(vis: Visibilities, offsetArcsec: [number, number]): void {
  const cx = offsetArcsec[0] * ARCSEC_TO_RAD;
  const cy = offsetArcsec[1] * ARCSEC_TO_RAD;
  for (let k = 0; k < vis.count; k++) {
    const ph = -2 * Math.PI * (vis.uLambda[k] * cx + vis.vLambda[k] * cy);
    const c = Math.cos(ph);
    const s = Math.sin(ph);
    const re = vis.reJy[k];
    const im = vis.imJy[k];
    // In place: the rotated value is rounded once more to float32 (the storage type), 2^-24
    // relative, far below the noise of any one visibility; the rotation itself runs in doubles.
    vis.reJy[k] = re * c - im * s;
    vis.imJy[k] = re * s + im * c;
  }
}

/**
 * Group channels by frequency: one group when the fractional bandwidth is below 2% and no
 * spectral index is modelled (the primary beam and the source then change by well under 1%
 * across the band); otherwise up to maxGroups equal-width frequency bins.
 */
export function channelGroups(vis: Visibilities, maxGroups: number, spectral: boolean): { group: Uint16Array; groupFreqHz: Float64Array } {
  const f = vis.channelFreqHz;
  const used = new Uint8Array(f.length);
  for (let k = 0; k < vis.count; k++) used[vis.channel[k]] = 1;
  let lo = Infinity;
  let hi = -Infinity;
  for (let c = 0; c < f.length; c++) {
    if (!used[c]) continue;
    lo = Math.min(lo, f[c]);
    hi = Math.max(hi, f[c]);
  }
  const frac = (hi - lo) / (0.5 * (hi + lo));
  const nUsed = used.reduce((a, b) => a + b, 0);
  const groups = frac < 0.02 && !spectral ? 1 : Math.max(1, Math.min(maxGroups, nUsed));
  const chanGroup = new Uint16Array(f.length);
  for (let c = 0; c < f.length; c++) {
    chanGroup[c] = groups === 1 || hi === lo ? 0 : Math.min(groups - 1, Math.floor(((f[c] - lo) / (hi - lo)) * groups));
  }
  // Drop empty groups by renumbering.
  const present = new Int32Array(groups).fill(-1);
  for (let c = 0; c < f.length; c++) if (used[c]) present[chanGroup[c]] = 1;
  const renumber = new Int32Array(groups);
  let g = 0;
  for (let i = 0; i < groups; i++) renumber[i] = present[i] > 0 ? g++ : -1;
  const sum = new Float64Array(g);
  const cnt = new Float64Array(g);
  const group = new Uint16Array(vis.count);
  for (let k = 0; k < vis.count; k++) {
    const gg = renumber[chanGroup[vis.channel[k]]];
    group[k] = gg;
    sum[gg] += f[vis.channel[k]];
    cnt[gg] += 1;
  }
  const groupFreqHz = new Float64Array(g);
  for (let i = 0; i < g; i++) groupFreqHz[i] = sum[i] / cnt[i];
  return { group, groupFreqHz };
}

/** Largest |u| or |v| over all datasets [wavelengths]. */
export function uvMaxLambda(datasets: readonly FitDataset[]): number {
  let m = 0;
  for (const d of datasets) {
    for (let k = 0; k < d.vis.count; k++) {
      const a = Math.max(Math.abs(d.vis.uLambda[k]), Math.abs(d.vis.vLambda[k]));
      if (a > m) m = a;
    }
  }
  return m;
}

/** Build gridded statistics and primary beams of every dataset on the model grid. */
export function attachGrid(
  datasets: FitDataset[],
  n: number,
  cellArcsec: number,
  beamFor: (d: FitDataset) => PrimaryBeamOptions | undefined,
  threads = 1,
): void {
  const cellRad = cellArcsec * ARCSEC_TO_RAD;
  for (const d of datasets) {
    d.stats = new GriddedStats(
      { uLambda: d.vis.uLambda, vLambda: d.vis.vLambda, reJy: d.vis.reJy, imJy: d.vis.imJy, weight: d.vis.weight, group: d.group },
      { n, cellRad, threads },
    );
    const beam = beamFor(d);
    d.beams = Array.from(d.groupFreqHz, (f) => {
      if (!beam) return new Float64Array(n * n).fill(1);
      return primaryBeamImage({ nx: n, ny: n, cellRad }, f, d.pointingOffsetRad, beam);
    });
  }
}
