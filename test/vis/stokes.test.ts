/** toStokesI: CONVENTIONS.md "Stokes I" (I = (V1 + V2)/2, w_I = 4 w1 w2/(w1 + w2)). */
import { describe, expect, it } from "vitest";
import { expectRel } from "../helpers.js";
import { toStokesI } from "../../src/vis/index.js";
import { allocate } from "../../src/vis/uvfits.js";
import { Rng } from "../../src/random.js";

/** Entries given as [time, a1, a2, channel, corr, re, im, weight]. */
function table(rows: number[][], circular?: boolean) {
  const v = allocate(rows.length, new Float64Array([1e11, 1.1e11]), 1e6, 2451544.5);
  rows.forEach(([t, a, b, c, corr, re, im, w], k) => {
    v.timeS[k] = t; v.antenna1[k] = a; v.antenna2[k] = b; v.channel[k] = c; v.correlation[k] = corr;
    v.reJy[k] = re; v.imJy[k] = im; v.weight[k] = w; v.uLambda[k] = 100 * (k + 1); v.vLambda[k] = -50 * (k + 1);
  });
  v.circularFeeds = circular;
  return v;
}

describe("toStokesI", () => {
  it("averages the parallel hands and combines weights as the inverse variance of the mean", () => {
    // RR = 1 + 2i (w 4), LL = 3 − 2i (w 1): I = 2 + 0i; w_I = 4·4·1/(4 + 1) = 3.2 (analytic:
    // var(mean) = (1/4 + 1/1)/4 = 0.3125 = 1/3.2).
    const v = table([[0, 1, 2, 0, -1, 1, 2, 4], [0, 1, 2, 0, -2, 3, -2, 1]], true);
    const { vis, report } = toStokesI(v);
    expect(vis.count).toBe(1);
    expect(report.pairs).toBe(1);
    expectRel(vis.reJy[0], 2, 1e-15, "re");
    expect(vis.imJy[0]).toBe(0);
    expectRel(vis.weight[0], 3.2, 1e-15, "w_I");
    expect(vis.correlation[0]).toBe(1);
    expect(vis.uLambda[0]).toBe(100);
  });

  it("keeps a lone circular hand, drops a lone linear hand, ignores cross hands, counts each", () => {
    const v = table([
      [0, 1, 2, 0, -1, 1, 0, 1],  // RR alone (its LL is in another channel) → kept
      [0, 1, 2, 1, -2, 5, 0, 1],  // LL alone in channel 1 → kept
      [0, 1, 3, 0, -3, 9, 9, 1],  // RL → ignored
      [0, 1, 3, 0, -4, 9, 9, 1],  // LR → ignored
      [10, 1, 2, 0, -5, 7, 0, 1], // XX alone → dropped (XX alone is I + Q)
      [20, 2, 3, 0, 1, 4, 4, 2],  // already I → kept as is
    ]);
    const { vis, report } = toStokesI(v);
    expect(report).toEqual({ pairs: 0, singleKept: 2, singleDropped: 1, crossHandsIgnored: 2, alreadyI: 1 });
    expect(Array.from(vis.reJy)).toEqual([1, 5, 4]);
    expect(Array.from(vis.weight)).toEqual([1, 1, 2]);
  });

  it("pairs hands far apart in the table and never pairs across time, baseline or channel", () => {
    // XX first, then 20 unrelated entries, then YY of the same slot: beyond the look-ahead window.
    const rows: number[][] = [[5, 1, 2, 0, -5, 2, 0, 2]];
    for (let i = 0; i < 20; i++) rows.push([6 + i, 3, 4, 1, -5, 0, 0, 1], [6 + i, 3, 4, 0, -6, 0, 0, 1]);
    rows.push([5, 1, 2, 0, -6, 4, 0, 2]);
    const { vis, report } = toStokesI(table(rows, false));
    expect(report.pairs).toBe(1);
    expect(report.singleDropped).toBe(40); // XX and YY in different channels/times: no partners
    expect(vis.count).toBe(1);
    expect(vis.reJy[0]).toBe(3);
    expectRel(vis.weight[0], 4, 1e-15, "w_I = 4·2·2/4");
  });

  it("gives Stokes I noise σ/√2 from two hands of noise σ (CONVENTIONS.md)", () => {
    // 20000 pairs of N(0, σ²) per part with σ = 0.3 and w = 1/σ²: the scatter of I per part must
    // be σ/√2 = 0.21213; with 40000 real values the relative standard error is 1/sqrt(2·40000) =
    // 0.35 % → 1.5 % tolerance. The weights must be exactly 2/σ².
    const rng = new Rng(7);
    const rows: number[][] = [];
    for (let i = 0; i < 20000; i++) {
      rows.push([i, 1, 2, 0, -1, 0.3 * rng.normal(), 0.3 * rng.normal(), 1 / 0.09]);
      rows.push([i, 1, 2, 0, -2, 0.3 * rng.normal(), 0.3 * rng.normal(), 1 / 0.09]);
    }
    const { vis } = toStokesI(table(rows, true));
    let ss = 0;
    for (let k = 0; k < vis.count; k++) ss += vis.reJy[k] ** 2 + vis.imJy[k] ** 2;
    expectRel(Math.sqrt(ss / (2 * vis.count)), 0.3 / Math.SQRT2, 0.015, "σ_I");
    expectRel(vis.weight[0], 2 / 0.09, 1e-14, "w_I");
  });
});
