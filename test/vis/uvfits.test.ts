/**
 * readUvfits on real public files. Every expected figure comes from
 * ../shared/data/real/README.md ("Measured figures (astropy)", astropy 5.2.1) unless the
 * comment says otherwise.
 */
import { describe, expect, it } from "vitest";
import { expectAbs, expectRel, SHARED_DIR } from "../helpers.js";
import { readVisibilities, toStokesI } from "../../src/vis/index.js";
import type { Visibilities } from "../../src/vis/types.js";
import { ARCSEC_TO_RAD } from "../../src/units.js";

const SR1 = `${SHARED_DIR}data/real/SR1_M87_2017_095_hi_hops_netcal_StokesI.uvfits`;
const MULTI = `${SHARED_DIR}data/real/vis_multichan.vis`;
const POINT = `${SHARED_DIR}data/reference/point_1E_0p5N.uvfits`;

function stats(xs: number[]): { mean: number; median: number; min: number; max: number } {
  const s = xs.slice().sort((a, b) => a - b);
  const n = s.length;
  const median = n % 2 ? s[(n - 1) / 2] : 0.5 * (s[n / 2 - 1] + s[n / 2]);
  return { mean: s.reduce((a, b) => a + b, 0) / n, median, min: s[0], max: s[n - 1] };
}

function uvRanges(vis: Visibilities): { min: number; max: number; maxU: number; maxV: number } {
  let min = Infinity, max = 0, maxU = 0, maxV = 0;
  for (let k = 0; k < vis.count; k++) {
    const d = Math.hypot(vis.uLambda[k], vis.vLambda[k]);
    min = Math.min(min, d);
    max = Math.max(max, d);
    maxU = Math.max(maxU, Math.abs(vis.uLambda[k]));
    maxV = Math.max(maxV, Math.abs(vis.vLambda[k]));
  }
  return { min, max, maxU, maxV };
}

describe("readVisibilities on SR1_M87 (EHT 2017, RR/LL/RL/LR, 1 channel)", async () => {
  const { vis, report } = await readVisibilities(SR1);

  it("counts groups × Stokes, flags (weight ≤ 0), +inf weights and usable entries", () => {
    // README: 6458 groups × 4 Stokes = 25832; flagged 3540; +inf weights 9376; usable 12916.
    // Counts are exact integers → exact equality.
    expect(report.format).toBe("uvfits");
    expect(report.entriesInFile).toBe(25832);
    expect(report.droppedFlagged).toBe(3540);
    expect(report.droppedNonFinite).toBe(9376);
    expect(report.droppedAuto).toBe(0);
    expect(report.kept).toBe(12916);
    expect(vis.count).toBe(12916);
    // README: usable = RR + LL, 6458 each.
    let rr = 0, ll = 0;
    for (let k = 0; k < vis.count; k++) (vis.correlation[k] === -1 ? rr++ : vis.correlation[k] === -2 ? ll++ : 0);
    expect([rr, ll]).toEqual([6458, 6458]);
    expect(vis.circularFeeds).toBe(true);
  });

  it("reads the frequency and the first group (u, v at 229.0707 GHz, conjugated data, weight)", () => {
    // README: 229.070703125 GHz, CH WIDTH 1.856 GHz. Exact decimal values in the header → 1e-12.
    expectRel(vis.channelFreqHz[0], 229.070703125e9, 1e-12, "freq");
    expectRel(vis.channelWidthHz, 1.856e9, 1e-12, "width");
    // README group 0: u = 1081709696.0 λ, v = −3833722368.0 λ (float32 UU × ν; astropy prints
    // float32 → 1e-7 relative covers the float32 rounding of its printout).
    expectRel(vis.uLambda[0], 1081709696.0, 1e-7, "u0");
    expectRel(vis.vLambda[0], -3833722368.0, 1e-7, "v0");
    // README: stored RR = (−0.006917007, −0.012506705); after reading the data are conjugated
    // (CONVENTIONS.md), so im = +0.012506705. 7 significant digits printed → 2e-7 relative.
    expectRel(vis.reJy[0], -0.006917007, 2e-7, "re0");
    expectRel(vis.imJy[0], 0.012506705, 2e-7, "im0 (conjugated)");
    expectRel(vis.weight[0], 14626.2246, 1e-8, "w0");
    expect(vis.correlation[0]).toBe(-1);
    // BASELINE 261 = 256·1 + 5: antennas 1–5, AA–LM.
    expect([vis.antenna1[0], vis.antenna2[0]]).toEqual([1, 5]);
    expect(vis.antennaNames?.get(1)).toBe("AA");
    expect(vis.antennaNames?.get(5)).toBe("LM");
    expect(vis.antennaNames?.size).toBe(8);
  });

  it("matches the uv ranges, times, baselines and amplitude/weight statistics", () => {
    const r = uvRanges(vis);
    // README: 1.19783e5 .. 8.33472e9 λ; max |u| 8.23587e9; max |v| 5.48291e9 (6 digits → 1e-5).
    expectRel(r.min, 1.19783e5, 1e-5, "uv min");
    expectRel(r.max, 8.33472e9, 1e-5, "uv max");
    expectRel(r.maxU, 8.23587e9, 1e-5, "max|u|");
    expectRel(r.maxV, 5.48291e9, 1e-5, "max|v|");
    // README: 2017-04-05T00:46:05.000 .. 08:09:55.001 UTC, 701 distinct times. DATE fractions are
    // float32 (≈ 3 ms resolution) → 5 ms.
    const t0 = vis.timeS.reduce((a, b) => Math.min(a, b), Infinity);
    const t1 = vis.timeS.reduce((a, b) => Math.max(a, b), -Infinity);
    const jdMidnight = 2457848.5; // 2017-04-05T00:00 UTC (JD of MJD 57848, header card MJD)
    expectAbs(vis.timeRefJd, jdMidnight, 0, "time reference");
    expectAbs(t0, 46 * 60 + 5, 0.005, "start [s]");
    expectAbs(t1, 8 * 3600 + 9 * 60 + 55.001, 0.005, "end [s]");
    expect(new Set(vis.timeS).size).toBe(701);
    const bl = new Set<number>();
    for (let k = 0; k < vis.count; k++) bl.add(vis.antenna1[k] * 256 + vis.antenna2[k]);
    expect(bl.size).toBe(21);
    const amp: number[] = [];
    const w: number[] = [];
    for (let k = 0; k < vis.count; k++) {
      if (vis.correlation[k] === -1) amp.push(Math.hypot(vis.reJy[k], vis.imJy[k]));
      w.push(vis.weight[k]);
    }
    // README amplitude over usable RR: mean 0.196015, median 0.0956994, min 0.000681632, max 1.12782
    // (6 digits printed → 1e-5 relative).
    const a = stats(amp);
    expectRel(a.mean, 0.196015, 1e-5, "mean amp");
    expectRel(a.median, 0.0956994, 1e-5, "median amp");
    expectRel(a.min, 0.000681632, 1e-5, "min amp");
    expectRel(a.max, 1.12782, 1e-5, "max amp");
    // README weights over usable: min 9.50535, median 563.862, max 169243.
    const ws = stats(w);
    expectRel(ws.min, 9.50535, 1e-5, "min w");
    expectRel(ws.median, 563.862, 1e-5, "median w");
    expectRel(ws.max, 169243, 1e-5, "max w");
  });

  it("notes the unnamed length-1 axis and takes the phase centre from the RA/DEC axes", () => {
    expect(report.notes.some((n) => /axis 5 has no CTYPE5/.test(n))).toBe(true);
    // Header: CRVAL6 = 187.7059307575226, CRVAL7 = 12.39112323919932 (exact copy).
    expect(vis.phaseCentreDeg).toEqual([187.7059307575226, 12.39112323919932]);
  });
});

describe("readVisibilities on vis_multichan (VLBA 1996, 8 IFs × 16 channels, LL)", async () => {
  const { vis, report } = await readVisibilities(MULTI);

  it("counts entries, flags (negative and −0.0 weights) and usable entries", () => {
    // README: 65920 = 515 × 8 × 16; flagged 11504 (incl. 320 of −0.0); usable 54416.
    expect(report.entriesInFile).toBe(65920);
    expect(report.droppedFlagged).toBe(11504);
    expect(report.droppedNonFinite).toBe(0);
    expect(report.kept).toBe(54416);
    // README: flagged per IF 1456, 1456, 1408, 1424, 1504, 1424, 1392, 1440 of 515 × 16 = 8240 each.
    const perIf = new Array(8).fill(0);
    for (let k = 0; k < vis.count; k++) perIf[Math.floor(vis.channel[k] / 16)]++;
    expect(perIf).toEqual([1456, 1456, 1408, 1424, 1504, 1424, 1392, 1440].map((f) => 8240 - f));
    // README: 87 groups entirely flagged → 515 − 87 = 428 (time, baseline) rows keep something.
    const rows = new Set<string>();
    for (let k = 0; k < vis.count; k++) rows.add(`${vis.timeS[k]}|${vis.antenna1[k]}|${vis.antenna2[k]}`);
    expect(rows.size).toBe(428);
    for (let k = 0; k < vis.count; k++) if (vis.correlation[k] !== -2) throw new Error(`entry ${k} is not LL`);
  });

  it("computes every channel frequency from the FREQ axis plus uneven AIPS FQ IF offsets", () => {
    // README: CRVAL4 = 4600.99 MHz at CRPIX4 = 1, CDELT4 = 0.5 MHz; IF offsets 0, 1.3e8, 2.4e8,
    // 3.3e8, 4.0e8, 4.5e8, 4.8e8, 4.9e8 Hz. Exact decimal arithmetic → 1e-12 relative.
    const ifOff = [0, 1.3e8, 2.4e8, 3.3e8, 4.0e8, 4.5e8, 4.8e8, 4.9e8];
    expect(vis.channelFreqHz.length).toBe(128);
    for (let i = 0; i < 8; i++) {
      for (let k = 0; k < 16; k++) expectRel(vis.channelFreqHz[i * 16 + k], 4600.99e6 + k * 0.5e6 + ifOff[i], 1e-12, `IF${i + 1} ch${k + 1}`);
    }
    // README: range 4.600990 .. 5.098490 GHz.
    expectRel(vis.channelFreqHz[127], 5.09849e9, 1e-12, "top channel");
  });

  it("reads group 0 (u, v per channel, conjugated data), DATE split over two parameters, NOSTA mapping", () => {
    // README group 0: u = −53143251.05 λ, v = 4547321.06 λ at 4.60099 GHz; LL = (0.48442376, −0.11017693),
    // weight 1.67555475. u, v printed to 10 digits → 1e-9; data are float32 → 1e-7.
    expectRel(vis.uLambda[0], -53143251.05, 1e-9, "u0");
    expectRel(vis.vLambda[0], 4547321.06, 1e-9, "v0");
    expectRel(vis.reJy[0], 0.48442376, 1e-7, "re0");
    expectRel(vis.imJy[0], 0.11017693, 1e-7, "im0 (conjugated)");
    expectRel(vis.weight[0], 1.67555475, 1e-7, "w0");
    // u in wavelengths scales with each channel's frequency: channel 1 of IF1 is 0.5 MHz higher.
    expectRel(vis.uLambda[1] / vis.uLambda[0], 4601.49 / 4600.99, 1e-12, "u ∝ ν");
    // README: DATE sum = 2450240.3016782654 JD = 1996-06-05T19:14:25.002. Float32 fraction → 5 ms.
    expectAbs(vis.timeRefJd + vis.timeS[0] / 86400, 2450240.3016782654, 0.005 / 86400, "JD of group 0");
    expect([vis.antenna1[0], vis.antenna2[0]]).toEqual([1, 3]); // BASELINE 259 = 256 + 3
    // README: NOSTA = 1,2,3,4,5,6,7,9,10; PT = 9 and SC = 10, not the row index.
    expect(vis.antennaNames?.get(9)).toBe("PT");
    expect(vis.antennaNames?.get(10)).toBe("SC");
    expect(vis.antennaNames?.get(3)).toBe("HN");
    const used = new Set<number>();
    for (let k = 0; k < vis.count; k++) used.add(vis.antenna1[k]).add(vis.antenna2[k]);
    expect([...used].sort((a, b) => a - b)).toEqual([1, 2, 3, 4, 5, 6, 7, 9, 10]);
  });

  it("matches the uv ranges, amplitude and weight statistics and the time range", () => {
    const r = uvRanges(vis);
    // README: usable uv 3.16145e6 .. 1.25077e8 λ; max |u| 1.1865e8; max |v| 4.60076e7.
    expectRel(r.min, 3.16145e6, 1e-5, "uv min");
    expectRel(r.max, 1.25077e8, 1e-5, "uv max");
    expectRel(r.maxU, 1.1865e8, 1e-4, "max|u| (5 digits printed)");
    expectRel(r.maxV, 4.60076e7, 1e-5, "max|v|");
    const amp: number[] = [];
    for (let k = 0; k < vis.count; k++) amp.push(Math.hypot(vis.reJy[k], vis.imJy[k]));
    const a = stats(amp);
    // README: mean 0.376412, median 0.325662, min 0.00248265, max 3.80204.
    expectRel(a.mean, 0.376412, 1e-5, "mean amp");
    expectRel(a.median, 0.325662, 1e-5, "median amp");
    expectRel(a.min, 0.00248265, 1e-5, "min amp");
    expectRel(a.max, 3.80204, 1e-5, "max amp");
    const w = stats(Array.from(vis.weight));
    // README: weights min 0.137584, median 4.20051, max 10.5851.
    expectRel(w.min, 0.137584, 1e-5, "min w");
    expectRel(w.median, 4.20051, 1e-5, "median w");
    expectRel(w.max, 10.5851, 1e-5, "max w");
    // README: 19:14:25.002 .. 19:16:55.002 UTC, 16 distinct times; time ref = 1996-06-05T00:00 = JD 2450239.5.
    expect(vis.timeRefJd).toBe(2450239.5);
    const t0 = vis.timeS.reduce((p, q) => Math.min(p, q), Infinity);
    const t1 = vis.timeS.reduce((p, q) => Math.max(p, q), -Infinity);
    expectAbs(t0, 19 * 3600 + 14 * 60 + 25.002, 0.005, "start");
    expectAbs(t1, 19 * 3600 + 16 * 60 + 55.002, 0.005, "end");
    expect(new Set(vis.timeS).size).toBe(16);
  });

  it("repairs the non-standard header cards with notes instead of failing", () => {
    // README: unquoted RA/DEC, Fortran D exponents, unbalanced quote in REF_DOI/REFERENC.
    const notes = report.notes.join("\n");
    expect(notes).toMatch(/RA\): unquoted string "04:14:37.767426"/);
    expect(notes).toMatch(/RA_ERR\): Fortran exponent in 1.02D-09/);
    expect(notes).toMatch(/unbalanced quote/);
    // Phase centre from the RA/DEC axes (CRVAL6/7), pointing from OBSRA/OBSDEC (header values).
    expect(vis.phaseCentreDeg).toEqual([63.657374583333, 5.578446666667]);
    expect(vis.pointingCentreDeg).toEqual([63.6573708333, 5.57846111111]);
  });
});

describe("readVisibilities on the wsclean-checked point source (1.0″ E, 0.5″ N)", async () => {
  const { vis } = await readVisibilities(POINT);
  const { vis: I, report } = toStokesI(vis);

  it("forms 8010 Stokes I visibilities from XX and YY", () => {
    // data/reference/README.md: 8010 Stokes I visibilities (rows × channels); XX and YY only.
    expect(I.count).toBe(8010);
    expect(report.pairs).toBe(8010);
    expect(report.singleDropped + report.singleKept + report.crossHandsIgnored).toBe(0);
  });

  it("puts the peak of the direct-sum dirty image at (+1.0″, +0.5″): the sign convention", () => {
    // D(x, y) = Σ w Re[d e^{+2πi(ux + vy)}] (DESIGN.md D_p with h = 1) over a ±1.5″ grid in 0.05″
    // steps. The source is at (+1.0″, +0.5″) (reference README, checked with wsclean); a reader
    // that did not conjugate would put it at (−1.0″, −0.5″). Grid step 0.05″ ≪ beam 0.25″, and
    // the source lies on a grid node, so the maximum must be that node exactly.
    let best = -Infinity, bx = NaN, by = NaN;
    for (let i = -30; i <= 30; i++) {
      for (let j = -30; j <= 30; j++) {
        const x = i * 0.05 * ARCSEC_TO_RAD;
        const y = j * 0.05 * ARCSEC_TO_RAD;
        let s = 0;
        for (let k = 0; k < I.count; k++) {
          const ph = 2 * Math.PI * (I.uLambda[k] * x + I.vLambda[k] * y);
          s += I.weight[k] * (I.reJy[k] * Math.cos(ph) - I.imJy[k] * Math.sin(ph));
        }
        if (s > best) [best, bx, by] = [s, i * 0.05, j * 0.05];
      }
    }
    expectAbs(bx, 1.0, 1e-9, "peak x [arcsec]");
    expectAbs(by, 0.5, 1e-9, "peak y [arcsec]");
  });

  it("has Stokes I weights 1/(4 mJy)² and a residual scatter of 4 mJy about the 20 mJy point", () => {
    // README: σ = 4 mJy per part for Stokes I → w = 62500 Jy⁻² (XX, YY weights 31250 are exact in
    // float32, and 4·w²/(2w) = 2w exactly) → 1e-12.
    for (let k = 0; k < I.count; k++) if (Math.abs(I.weight[k] - 62500) > 62500 * 1e-12) throw new Error(`weight ${k}: ${I.weight[k]}`);
    // Residual d − F e^{−2πi(u x0 + v y0)} with F = 20 mJy (internal sign, CONVENTIONS.md).
    const x0 = 1.0 * ARCSEC_TO_RAD, y0 = 0.5 * ARCSEC_TO_RAD;
    let ss = 0;
    for (let k = 0; k < I.count; k++) {
      const ph = -2 * Math.PI * (I.uLambda[k] * x0 + I.vLambda[k] * y0);
      const rr = I.reJy[k] - 0.02 * Math.cos(ph);
      const ri = I.imJy[k] - 0.02 * Math.sin(ph);
      ss += rr * rr + ri * ri;
    }
    const sigma = Math.sqrt(ss / (2 * I.count));
    // 16020 real numbers → statistical spread 1/sqrt(2·16020) = 0.56 %; README χ²/dof = 1.0067
    // (σ ≈ 4.013 mJy). 3 % is > 5 standard errors and still catches a wrong sign (σ ≈ 14 mJy).
    expectRel(sigma, 0.004, 0.03, "Stokes I residual σ [Jy]");
  });
});
