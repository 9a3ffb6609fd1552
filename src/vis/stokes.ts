/**
 * Stokes I from the parallel hands (CONVENTIONS.md "Stokes I"):
 * I = (V₁ + V₂)/2 with weight w_I = 4·w₁w₂/(w₁ + w₂), the inverse variance of the mean.
 * The two hands of a pair share time, antennas and channel: RR with LL, or XX with YY.
 * A hand without its partner is kept for circular feeds (RR or LL ≈ I when V ≈ 0) and dropped
 * for linear feeds (XX alone is I + Q); cross hands (RL, LR, XY, YX) and Q, U, V are not used.
 * Entries already Stokes I are kept as they are. Everything is counted in the StokesReport.
 *
 * Partners are looked for first among the next few entries (readers emit the correlations of
 * one row and channel next to each other), then through a hash of (time, baselines, channel).
 *
 * Reference: CONVENTIONS.md "Stokes I"; Thompson, Moran & Swenson 2017, §4.8 (Stokes
 * parameters from circular and linear feeds, from memory).
 */
import { allocate } from "./uvfits.js";
import type { StokesReport, Visibilities } from "./types.js";

/** How far ahead to look for a partner before falling back to the hash [entries]. */
const WINDOW = 8;

function partnerCode(c: number): number {
  return c === -1 ? -2 : c === -2 ? -1 : c === -5 ? -6 : c === -6 ? -5 : 0;
}

function sameSlot(v: Visibilities, a: number, b: number): boolean {
  return v.timeS[a] === v.timeS[b] && v.antenna1[a] === v.antenna1[b] && v.antenna2[a] === v.antenna2[b] && v.channel[a] === v.channel[b];
}

/**
 * Form Stokes I.
 * @param vis visibilities with correlation codes (AIPS: −1 RR, −2 LL, −5 XX, −6 YY, 1 I, ...)
 * @returns new visibilities, all with correlation 1 (I), and the counts of what was combined,
 *   kept or dropped. The input is not modified.
 * Reference: CONVENTIONS.md "Stokes I".
 */
export function toStokesI(vis: Visibilities): { vis: Visibilities; report: StokesReport } {
  const n = vis.count;
  const corr = vis.correlation;
  const partner = new Int32Array(n).fill(-1);
  let unpaired: Map<string, number[]> | undefined;
  for (let k = 0; k < n; k++) {
    const want = partnerCode(corr[k]);
    if (want === 0 || partner[k] >= 0) continue;
    const end = Math.min(n, k + 1 + WINDOW);
    for (let j = k + 1; j < end; j++) {
      if (corr[j] === want && partner[j] < 0 && sameSlot(vis, k, j)) {
        partner[k] = j;
        partner[j] = k;
        break;
      }
    }
    if (partner[k] < 0) {
      unpaired ??= new Map();
      const key = `${vis.timeS[k]}|${vis.antenna1[k]}|${vis.antenna2[k]}|${vis.channel[k]}`;
      const list = unpaired.get(key);
      if (list) list.push(k);
      else unpaired.set(key, [k]);
    }
  }
  // Pair the leftovers that share a slot but were too far apart for the window.
  if (unpaired) {
    for (const list of unpaired.values()) {
      for (let a = 0; a < list.length; a++) {
        const k = list[a];
        if (partner[k] >= 0) continue;
        const want = partnerCode(corr[k]);
        for (let b = a + 1; b < list.length; b++) {
          const j = list[b];
          if (partner[j] < 0 && corr[j] === want) {
            partner[k] = j;
            partner[j] = k;
            break;
          }
        }
      }
    }
  }
  const report: StokesReport = { pairs: 0, singleKept: 0, singleDropped: 0, crossHandsIgnored: 0, alreadyI: 0 };
  // Decide each entry's fate first, so the output is sized exactly.
  const emit = new Uint8Array(n); // 1 copy (I or circular single), 2 combine with partner
  let count = 0;
  for (let k = 0; k < n; k++) {
    const c = corr[k];
    if (c === 1) {
      report.alreadyI++;
      emit[k] = 1;
    } else if (partnerCode(c) === 0) {
      report.crossHandsIgnored++;
    } else if (partner[k] >= 0) {
      if (partner[k] > k) {
        report.pairs++;
        emit[k] = 2;
      }
    } else if (c === -1 || c === -2) {
      report.singleKept++;
      emit[k] = 1;
    } else {
      report.singleDropped++;
    }
    if (emit[k] !== 0) count++;
  }
  const out = allocate(count, vis.channelFreqHz, vis.channelWidthHz, vis.timeRefJd);
  let o = 0;
  for (let k = 0; k < n; k++) {
    const e = emit[k];
    if (e === 0) continue;
    out.uLambda[o] = vis.uLambda[k];
    out.vLambda[o] = vis.vLambda[k];
    out.wLambda[o] = vis.wLambda[k];
    out.channel[o] = vis.channel[k];
    out.antenna1[o] = vis.antenna1[k];
    out.antenna2[o] = vis.antenna2[k];
    out.timeS[o] = vis.timeS[k];
    out.correlation[o] = 1;
    if (e === 1) {
      out.reJy[o] = vis.reJy[k];
      out.imJy[o] = vis.imJy[k];
      out.weight[o] = vis.weight[k];
    } else {
      const j = partner[k];
      const w1 = vis.weight[k];
      const w2 = vis.weight[j];
      out.reJy[o] = 0.5 * (vis.reJy[k] + vis.reJy[j]);
      out.imJy[o] = 0.5 * (vis.imJy[k] + vis.imJy[j]);
      out.weight[o] = (4 * w1 * w2) / (w1 + w2);
    }
    o++;
  }
  copyMetadata(vis, out);
  return { vis: out, report };
}

/** Copy the optional descriptive fields of `from` onto `to`. */
export function copyMetadata(from: Visibilities, to: Visibilities): void {
  if (from.phaseCentreDeg) to.phaseCentreDeg = [from.phaseCentreDeg[0], from.phaseCentreDeg[1]];
  if (from.pointingCentreDeg) to.pointingCentreDeg = [from.pointingCentreDeg[0], from.pointingCentreDeg[1]];
  if (from.dishDiameterM !== undefined) to.dishDiameterM = from.dishDiameterM;
  if (from.antennaNames) to.antennaNames = new Map(from.antennaNames);
  if (from.telescope !== undefined) to.telescope = from.telescope;
  if (from.objectName !== undefined) to.objectName = from.objectName;
  if (from.circularFeeds !== undefined) to.circularFeeds = from.circularFeeds;
}
