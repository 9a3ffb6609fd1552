/**
 * writeVisibilities → readVisibilities keeps every column, for UVFITS, HDF5 and CSV, on
 * multi-channel, multi-correlation data (synthetic, seeded) and on a real file. Tolerances are
 * the formats' own precision: UVFITS stores u, v, w [s], data and weights as IEEE float32
 * (relative rounding ≤ 2⁻²⁴ ≈ 6e-8 per conversion), HDF5 and CSV keep float64 exactly
 * (w_lambda, re_jy and im_jy are float32 in memory already, so they too come back exactly).
 */
import { mkdtempSync, readdirSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { SHARED_DIR } from "../helpers.js";
import { readVisibilities, writeVisibilities } from "../../src/vis/index.js";
import type { Visibilities } from "../../src/vis/types.js";
import { syntheticVis } from "./synthetic.js";

const dir = mkdtempSync(join(tmpdir(), "arcfringe-vis-rt-"));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** Entries of a table keyed by (time, antennas, channel, correlation), for order-free comparison. */
function keyed(v: Visibilities): Map<string, number> {
  const m = new Map<string, number>();
  for (let k = 0; k < v.count; k++) {
    m.set(`${Math.round(v.timeS[k] * 1e3)}|${v.antenna1[k]}|${v.antenna2[k]}|${v.channelFreqHz[v.channel[k]]}|${v.correlation[k]}`, k);
  }
  return m;
}

function compare(a: Visibilities, b: Visibilities, rtolFloat: number, atolTimeS: number): void {
  expect(b.count).toBe(a.count);
  const mb = keyed(b);
  expect(mb.size).toBe(a.count);
  const worst: Record<string, number> = {};
  const rel = (name: string, x: number, y: number, scale: number): void => {
    const e = Math.abs(x - y) / scale;
    worst[name] = Math.max(worst[name] ?? 0, e);
  };
  for (const [key, i] of keyed(a)) {
    const j = mb.get(key);
    if (j === undefined) throw new Error(`entry ${key} lost in the round trip`);
    const uvScale = Math.hypot(a.uLambda[i], a.vLambda[i]);
    rel("u", a.uLambda[i], b.uLambda[j], uvScale);
    rel("v", a.vLambda[i], b.vLambda[j], uvScale);
    rel("w", a.wLambda[i], b.wLambda[j], Math.max(Math.abs(a.wLambda[i]), 1e-30));
    const amp = Math.hypot(a.reJy[i], a.imJy[i]);
    rel("re", a.reJy[i], b.reJy[j], amp);
    rel("im", a.imJy[i], b.imJy[j], amp);
    rel("weight", a.weight[i], b.weight[j], a.weight[i]);
    rel("time", a.timeS[i] + a.timeRefJd * 86400, b.timeS[j] + b.timeRefJd * 86400, 1);
    expect(b.channelFreqHz[b.channel[j]]).toBe(a.channelFreqHz[a.channel[i]]);
  }
  for (const name of ["u", "v", "w", "re", "im", "weight"]) {
    expect(worst[name], `${name}: worst relative error ${worst[name]} > ${rtolFloat}`).toBeLessThanOrEqual(rtolFloat);
  }
  expect(worst.time, `time error ${worst.time} s > ${atolTimeS}`).toBeLessThanOrEqual(atolTimeS);
  expect(b.phaseCentreDeg).toEqual(a.phaseCentreDeg);
  expect(b.antennaNames).toEqual(a.antennaNames);
  expect(b.circularFeeds).toBe(a.circularFeeds);
}

// Two cases: evenly spaced channels (one IF in UVFITS) and uneven ones (one IF per channel),
// four circular correlations with every 7th entry missing, and linear XX/YY.
const cases: [string, Visibilities][] = [
  ["3 even channels, RR LL RL LR, incomplete rows", syntheticVis({ seed: 11, nAnt: 6, nTimes: 12, freqHz: [230e9, 230.5e9, 231e9], correlations: [-1, -2, -3, -4], dropEvery: 7 })],
  ["4 uneven channels, XX YY", syntheticVis({ seed: 12, nAnt: 5, nTimes: 9, freqHz: [86e9, 86.2e9, 90e9, 99.5e9], correlations: [-5, -6] })],
  ["1 channel, Stokes I", syntheticVis({ seed: 13, nAnt: 7, nTimes: 5, freqHz: [345e9], correlations: [1] })],
];

describe("writeVisibilities → readVisibilities", () => {
  for (const [label, vis] of cases) {
    it(`UVFITS keeps every column to float32 precision (${label})`, async () => {
      const p = join(dir, "rt.uvfits");
      await writeVisibilities(p, vis);
      const { vis: back } = await readVisibilities(p);
      // float32: u/ν and back, data, weights → ≤ 2 roundings of 2⁻²⁴ → 1.2e-7. Times are a
      // float32 pair (hi + lo, ~1e-12 day); the comparison adds timeRefJd·86400 ≈ 2e11 s, whose
      // double ulp is 3e-5 s → 1e-4 s.
      compare(vis, back, 1.2e-7, 1e-4);
    });
    it(`HDF5 keeps every column exactly (${label})`, async () => {
      const p = join(dir, "rt.h5");
      await writeVisibilities(p, vis);
      const { vis: back } = await readVisibilities(p);
      compare(vis, back, 0, 0);
      expect(back.dishDiameterM).toBe(12);
      expect(back.telescope).toBe("SYNTH");
      expect(back.channelWidthHz).toBe(vis.channelWidthHz);
    });
    it(`CSV keeps every column exactly (${label})`, async () => {
      const p = join(dir, "rt.csv");
      await writeVisibilities(p, vis);
      const { vis: back } = await readVisibilities(p);
      compare(vis, back, 0, 0);
      expect(back.timeRefJd).toBe(vis.timeRefJd);
    });
  }

  it("UVFITS → HDF5 → CSV → UVFITS keeps the real multi-IF file (vis_multichan) to float32 precision", async () => {
    const { vis } = await readVisibilities(`${SHARED_DIR}data/real/vis_multichan.vis`);
    await writeVisibilities(join(dir, "a.h5"), vis);
    const h = (await readVisibilities(join(dir, "a.h5"))).vis;
    await writeVisibilities(join(dir, "b.csv"), h);
    const c = (await readVisibilities(join(dir, "b.csv"))).vis;
    compare(vis, c, 0, 0);
    await writeVisibilities(join(dir, "c.uvfits"), c);
    const { vis: d, report } = await readVisibilities(join(dir, "c.uvfits"));
    compare(vis, d, 1.2e-7, 1e-4);
    // The 128 uneven channels are written as 128 IFs of one channel; the rows the file had
    // (428 with any usable entry) are kept and the missing cells come back as flags.
    expect(report.entriesInFile).toBe(428 * 128);
    expect(report.droppedFlagged).toBe(428 * 128 - 54416);
  });

  it("writes atomically: a failed write leaves neither the target nor a temporary file", async () => {
    const vis = syntheticVis({ seed: 14, nAnt: 3, nTimes: 2, freqHz: [1e9], correlations: [1] });
    vis.channelFreqHz = new Float64Array([NaN]); // UVFITS cannot store an unknown frequency
    const sub = mkdtempSync(join(dir, "atomic-"));
    await expect(writeVisibilities(join(sub, "x.uvfits"), vis)).rejects.toThrow(/x\.uvfits: channel 0 has frequency NaN Hz/);
    expect(readdirSync(sub)).toEqual([]);
  });
});
