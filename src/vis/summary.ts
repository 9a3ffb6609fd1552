/**
 * What `inspect` prints about a visibility file, as a plain JSON-able object: counts kept and
 * dropped, channels, correlations, baselines, resolution and scales, noise check, times.
 *
 * - Baseline length [m] = |uv| [λ] × λ of the entry's channel (c/ν).
 * - Synthesised beam ≈ λ/B_max = 1/max|uv| rad (common practice, REFERENCES.md §7), and a
 *   natural-weighted estimate: the Gaussian with the same curvature at the peak as the dirty
 *   beam B(x) = Σw cos 2π(u·x)/Σw, FWHM = sqrt(2 ln 2)/(π sqrt(λ_i)) along each principal axis
 *   of the weighted second moments ⟨uu⟩, ⟨uv⟩, ⟨vv⟩ (analytic; it is 6 % wider than the true
 *   0.70508/R of a uniformly filled disc of radius R, REFERENCES.md §5).
 * - Largest angular scale ≈ 0.6 λ/B_min = 0.6/min|uv| rad (REFERENCES.md §7).
 * - Primary beam FWHM ≈ 1.13 λ/D at the mean channel frequency, when the dish size is known
 *   (REFERENCES.md §7).
 *
 * Reference: REFERENCES.md §5 and §7.
 */
import { C_M_PER_S, RAD_TO_ARCSEC } from "../units.js";
import { estimateWeightScale } from "./noise.js";
import { CORRELATION_NAMES, type ReadReport, type Visibilities } from "./types.js";

export interface VisSummary {
  format: string;
  entries: { inFile: number; kept: number; droppedFlagged: number; droppedNonFinite: number; droppedAuto: number };
  notes: string[];
  channels: { count: number; minFreqHz: number | null; maxFreqHz: number | null; widthHz: number };
  correlations: Record<string, number>;
  antennas: number;
  baselines: number;
  baselineLengthM: { min: number | null; max: number | null };
  uvDistanceKLambda: { min: number; max: number };
  maxAbsULambda: number;
  maxAbsVLambda: number;
  maxAbsWLambda: number;
  synthesizedBeamArcsec: { lambdaOverBmax: number; naturalMajor: number; naturalMinor: number; naturalPaDeg: number };
  largestAngularScaleArcsec: number;
  primaryBeamFwhmArcsec: number | null;
  dishDiameterM: number | null;
  weightScale: { robust: number | null; mean: number | null; pairs: number };
  time: { start: string | null; end: string | null; spanS: number; distinctTimes: number };
  phaseCentreDeg: [number, number] | null;
  telescope: string | null;
  object: string | null;
}

const finiteOrNull = (x: number): number | null => (Number.isFinite(x) ? x : null);

/** ISO UTC of `timeRefJd` + `offsetS`, to the nearest millisecond (JD 2440587.5 = Unix epoch). */
function jdToIso(timeRefJd: number, offsetS: number): string | null {
  // Offset added in milliseconds, not in days, so that it keeps its precision.
  const ms = Math.round((timeRefJd - 2440587.5) * 86400e3 + offsetS * 1e3);
  if (!Number.isFinite(ms) || Math.abs(ms) > 8.64e15) return null;
  return new Date(ms).toISOString();
}

/**
 * Summarise visibilities for `inspect`.
 * @param vis visibilities as read (before or after Stokes I formation)
 * @param report the reader's report
 * @returns a plain object; angles in arcsec, lengths in metres, uv distances in kλ.
 * Reference: REFERENCES.md §7 (beam, largest scale, primary beam).
 */
export function summariseVisibilities(vis: Visibilities, report: ReadReport): VisSummary {
  const n = vis.count;
  let uvMin = Infinity;
  let uvMax = 0;
  let mMin = Infinity;
  let mMax = 0;
  let maxU = 0;
  let maxV = 0;
  let maxW = 0;
  let sw = 0;
  let suu = 0;
  let svv = 0;
  let suv = 0;
  let tMin = Infinity;
  let tMax = -Infinity;
  const corrCount = new Map<number, number>();
  const antennas = new Set<number>();
  const baselines = new Set<number>();
  const times = new Set<number>();
  for (let k = 0; k < n; k++) {
    const u = vis.uLambda[k];
    const v = vis.vLambda[k];
    const uv = Math.hypot(u, v);
    if (uv > 0 && uv < uvMin) uvMin = uv;
    if (uv > uvMax) uvMax = uv;
    const lambdaM = C_M_PER_S / vis.channelFreqHz[vis.channel[k]];
    const m = uv * lambdaM;
    if (m > 0 && m < mMin) mMin = m;
    if (m > mMax) mMax = m;
    maxU = Math.max(maxU, Math.abs(u));
    maxV = Math.max(maxV, Math.abs(v));
    maxW = Math.max(maxW, Math.abs(vis.wLambda[k]));
    const w = vis.weight[k];
    sw += w;
    suu += w * u * u;
    svv += w * v * v;
    suv += w * u * v;
    const t = vis.timeS[k];
    if (t < tMin) tMin = t;
    if (t > tMax) tMax = t;
    times.add(t);
    corrCount.set(vis.correlation[k], (corrCount.get(vis.correlation[k]) ?? 0) + 1);
    const p = vis.antenna1[k];
    const q = vis.antenna2[k];
    if (p > 0) antennas.add(p);
    if (q > 0) antennas.add(q);
    if (p > 0 || q > 0) baselines.add(Math.min(p, q) * 65536 + Math.max(p, q));
  }
  // Natural-weighted beam from the second moments (see module comment).
  const a = suu / sw;
  const c = svv / sw;
  const b = suv / sw;
  const tr = 0.5 * (a + c);
  const disc = Math.sqrt(0.25 * (a - c) * (a - c) + b * b);
  const lamBig = tr + disc; // largest uv spread → narrowest beam direction
  const lamSmall = Math.max(tr - disc, 0);
  const fwhmRad = (lam: number): number => Math.sqrt(2 * Math.LN2) / (Math.PI * Math.sqrt(lam));
  // Direction (u, v) of the largest spread: the beam's minor axis; the major axis is perpendicular.
  const thetaMinor = 0.5 * Math.atan2(2 * b, a - c); // angle from the u (East) axis
  // The major axis is perpendicular, (−sin θ, cos θ) in (x East, y North): pa = atan2(x, y) = −θ.
  let paMajorDeg = ((-thetaMinor * 180) / Math.PI) % 180;
  if (paMajorDeg < 0) paMajorDeg += 180;

  const freqs = Array.from(vis.channelFreqHz).filter((f) => Number.isFinite(f));
  const meanFreq = freqs.length > 0 ? freqs.reduce((s, f) => s + f, 0) / freqs.length : NaN;
  const pb = vis.dishDiameterM && Number.isFinite(meanFreq) ? 1.13 * (C_M_PER_S / meanFreq / vis.dishDiameterM) * RAD_TO_ARCSEC : null;
  const ws = estimateWeightScale(vis);
  const correlations: Record<string, number> = {};
  for (const [code, count] of [...corrCount.entries()].sort((x, y) => y[0] - x[0])) correlations[CORRELATION_NAMES[code] ?? String(code)] = count;
  return {
    format: report.format,
    entries: { inFile: report.entriesInFile, kept: report.kept, droppedFlagged: report.droppedFlagged, droppedNonFinite: report.droppedNonFinite, droppedAuto: report.droppedAuto },
    notes: report.notes.slice(),
    channels: { count: vis.channelFreqHz.length, minFreqHz: freqs.length ? freqs.reduce((p, f) => Math.min(p, f)) : null, maxFreqHz: freqs.length ? freqs.reduce((p, f) => Math.max(p, f)) : null, widthHz: vis.channelWidthHz },
    correlations,
    antennas: antennas.size,
    baselines: baselines.size,
    baselineLengthM: { min: finiteOrNull(mMin), max: mMax > 0 ? mMax : null },
    uvDistanceKLambda: { min: uvMin / 1e3, max: uvMax / 1e3 },
    maxAbsULambda: maxU,
    maxAbsVLambda: maxV,
    maxAbsWLambda: maxW,
    synthesizedBeamArcsec: {
      lambdaOverBmax: RAD_TO_ARCSEC / uvMax,
      naturalMajor: fwhmRad(lamSmall) * RAD_TO_ARCSEC,
      naturalMinor: fwhmRad(lamBig) * RAD_TO_ARCSEC,
      naturalPaDeg: paMajorDeg,
    },
    largestAngularScaleArcsec: (0.6 / uvMin) * RAD_TO_ARCSEC,
    primaryBeamFwhmArcsec: pb,
    dishDiameterM: vis.dishDiameterM ?? null,
    weightScale: { robust: finiteOrNull(ws.weightScale), mean: finiteOrNull(ws.weightScaleMean), pairs: ws.pairs },
    time: { start: jdToIso(vis.timeRefJd, tMin), end: jdToIso(vis.timeRefJd, tMax), spanS: tMax - tMin, distinctTimes: times.size },
    phaseCentreDeg: vis.phaseCentreDeg ?? null,
    telescope: vis.telescope ?? null,
    object: vis.objectName ?? null,
  };
}
