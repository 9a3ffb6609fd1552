import { describe, expect, it } from "vitest";
import {
  analyticSkyVisibilities,
  drawAntennaGains,
  parseObservation,
  runSimulation,
  simulateObservation,
  type AntennaGains,
  type Observation,
} from "../../src/sim/index.js";
import { Rng } from "../../src/random.js";
import { ARCSEC_TO_RAD, C_M_PER_S } from "../../src/units.js";
import { expectAbs, expectRel } from "../helpers.js";

/**
 * The REFERENCES.md §6 worked example as an observation: T_sys = 100 K, D = 12 m, η_a = 0.7,
 * η_c = 0.88, one 7.5 GHz channel, τ = 6 s → σ = 13.2117 mJy per correlation per part.
 */
function refObs(patch: Record<string, unknown> = {}): Observation {
  return parseObservation(
    {
      array: { generate: "disc", n_ant: 10, max_baseline_m: 500, seed: 21 },
      dish_m: 12,
      site_lat_deg: -23,
      phase_centre_deg: [150, -30],
      hour_angle_h: [-1, 1],
      integration_s: 6,
      freq_ghz: 345,
      bandwidth_ghz: 7.5,
      channels: 1,
      tsys_k: 100,
      aperture_efficiency: 0.7,
      correlator_efficiency: 0.88,
      ...patch,
    },
    "obs.json",
    ".",
  );
}

/** Largest relative rounding of one float32 store (round to nearest, 24-bit mantissa): 2^-24 (analytic, IEEE 754). */
const F32_REL = 2 ** -24;

const SIGMA_CORR_JY = 13.2117e-3; // REFERENCES.md §6, η = 0.88, τ = 6 s, printed to 1e-7 Jy
const ZERO_SKY = analyticSkyVisibilities([]);

/** Sample standard deviation of re and im together, and their mean. */
function scatter(re: Float32Array | Float64Array, im: Float32Array | Float64Array): { sd: number; mean: number; n: number } {
  let s = 0, s2 = 0;
  for (let i = 0; i < re.length; i++) { s += re[i] + im[i]; s2 += re[i] * re[i] + im[i] * im[i]; }
  const n = 2 * re.length;
  const mean = s / n;
  return { sd: Math.sqrt(s2 / n - mean * mean), mean, n };
}

describe("simulateObservation: noise", () => {
  it("Stokes I scatter and weights match σ/√2 of the radiometer equation within 2%", () => {
    // 45 baselines × 1196 integrations = 53 820 Stokes I visibilities → 107 640 Gaussian
    // samples; the relative sd of a sample sd is 1/sqrt(2n) = 0.22%, so 2% is 9 sd.
    const { vis, sigmaStokesIJy } = runSimulation(refObs(), ZERO_SKY, new Rng(1));
    const sigmaI = SIGMA_CORR_JY / Math.SQRT2;
    expect(vis.count).toBe(45 * 1196);
    // σ_I itself against the table: half a unit of the printed digit (5e-8 Jy) over √2.
    expectAbs(sigmaStokesIJy, sigmaI, 5e-8 / Math.SQRT2, "σ_I");
    expectRel(vis.weight[0], 1 / (sigmaStokesIJy * sigmaStokesIJy), 1e-15, "weight = 1/σ_I²");
    expect(vis.weight.every((w) => w === vis.weight[0])).toBe(true);
    const { sd, mean, n } = scatter(vis.reJy, vis.imJy);
    expectRel(sd, sigmaI, 0.02, "sample sd");
    expectAbs(mean, 0, (5 * sigmaI) / Math.sqrt(n), "mean (5 sd)");
    expect(Array.from(new Set(vis.correlation))).toEqual([1]);
    expect(vis.circularFeeds).toBeUndefined();
  });

  it("XX/YY hands carry σ each, and their mean has σ/√2 and weight 4w₁w₂/(w₁+w₂) (CONVENTIONS.md)", () => {
    // Same sample size per hand as above (2% ≈ 9 sd).
    const { vis } = runSimulation(refObs(), ZERO_SKY, new Rng(2), { products: "linear" });
    expect(vis.count).toBe(2 * 45 * 1196);
    const n = vis.count / 2;
    const xxRe = new Float64Array(n), xxIm = new Float64Array(n), iRe = new Float64Array(n), iIm = new Float64Array(n);
    let badCodes = 0;
    for (let k = 0; k < n; k++) {
      if (vis.correlation[2 * k] !== -5 || vis.correlation[2 * k + 1] !== -6) badCodes++;
      xxRe[k] = vis.reJy[2 * k];
      xxIm[k] = vis.imJy[2 * k];
      iRe[k] = (vis.reJy[2 * k] + vis.reJy[2 * k + 1]) / 2;
      iIm[k] = (vis.imJy[2 * k] + vis.imJy[2 * k + 1]) / 2;
    }
    expect(badCodes).toBe(0);
    expectRel(scatter(xxRe, xxIm).sd, SIGMA_CORR_JY, 0.02, "XX sd");
    expectRel(scatter(iRe, iIm).sd, SIGMA_CORR_JY / Math.SQRT2, 0.02, "(XX+YY)/2 sd");
    const w1 = vis.weight[0], w2 = vis.weight[1];
    expectRel(w1, 1 / SIGMA_CORR_JY ** 2, 1e-5, "w_XX = 1/σ² (table rounding 4e-6 on σ)");
    const { vis: visI } = runSimulation(refObs(), ZERO_SKY, new Rng(2));
    expectRel((4 * w1 * w2) / (w1 + w2), visI.weight[0], 1e-14, "w_I from the hands = Stokes I weight");
    expect(vis.circularFeeds).toBe(false);
  });

  it("n_pol = 1 gives Stokes I noise σ, and parallel hands are refused", () => {
    const { sigmaStokesIJy } = runSimulation(refObs({ n_pol: 1 }), ZERO_SKY, new Rng(3), { noise: false });
    expectAbs(sigmaStokesIJy, SIGMA_CORR_JY, 5e-8, "σ_I with one hand");
    expect(() => simulateObservation(refObs({ n_pol: 1 }), ZERO_SKY, new Rng(3), { products: "circular" }))
      .toThrow("n_pol: circular products need two parallel hands; got n_pol 1 (set n_pol to 2 or write Stokes I)");
  });

  it("is reproducible with a fixed seed", () => {
    const obs = refObs({ hour_angle_h: [0, 0.1] });
    const a = simulateObservation(obs, ZERO_SKY, new Rng(7));
    const b = simulateObservation(obs, ZERO_SKY, new Rng(7));
    const c = simulateObservation(obs, ZERO_SKY, new Rng(8));
    expect(Array.from(b.reJy)).toEqual(Array.from(a.reJy));
    expect(Array.from(c.reJy)).not.toEqual(Array.from(a.reJy));
  });
});

describe("simulateObservation: geometry and sky", () => {
  const obs = refObs({ channels: 3, bandwidth_ghz: 6, hour_angle_h: [-0.5, 0.5], integration_s: 60, date: "2025-01-15T03:00:00Z" });

  it("a point source at (−0.7″, +0.3″) gives F e^{−2πi(u x0 + v y0)} at every simulated (u, v)", () => {
    // CONVENTIONS.md measurement equation / REFERENCES.md §5 point-source form, evaluated here
    // independently of analytic.ts. Rounding of the phase (|phase| ≲ 1e3 rad) → 1e-12; the data
    // are stored as float32 (one store each, no gains or noise) → ≤ 2^-24 × |re| or |im| ≤ 2^-24 F
    // = 2.5e-9 Jy (analytic). A sign or position error would be of order F = 0.042 Jy.
    const x0 = -0.7 * ARCSEC_TO_RAD, y0 = 0.3 * ARCSEC_TO_RAD, F = 0.042;
    const vis = simulateObservation(obs, analyticSkyVisibilities([{ type: "point_source", flux: F, x: -0.7, y: 0.3 }]), new Rng(1), { noise: false });
    let maxErr = 0;
    for (let k = 0; k < vis.count; k++) {
      const ph = -2 * Math.PI * (vis.uLambda[k] * x0 + vis.vLambda[k] * y0);
      maxErr = Math.max(maxErr, Math.abs(vis.reJy[k] - F * Math.cos(ph)), Math.abs(vis.imJy[k] - F * Math.sin(ph)));
    }
    expectAbs(maxErr, 0, F32_REL * F + 1e-12, "max |V − F e^{−2πi(u x0 + v y0)}|");
  });

  it("u, v, w in wavelengths are the metre track times ν/c of each channel", () => {
    const { vis, track } = runSimulation(obs, ZERO_SKY, new Rng(1), { noise: false });
    expect(Array.from(vis.channelFreqHz)).toEqual([343e9, 345e9, 347e9]);
    expect(vis.channelWidthHz).toBe(2e9);
    let maxRelUv = 0, maxRelW = 0, badMeta = 0;
    for (let r = 0; r < track.uM.length; r++) {
      for (let c = 0; c < 3; c++) {
        const e = r * 3 + c;
        const perM = vis.channelFreqHz[c] / C_M_PER_S;
        const bLen = Math.hypot(track.uM[r], track.vM[r], track.wM[r]) * perM;
        maxRelUv = Math.max(maxRelUv, Math.abs(vis.uLambda[e] - track.uM[r] * perM) / bLen, Math.abs(vis.vLambda[e] - track.vM[r] * perM) / bLen);
        maxRelW = Math.max(maxRelW, Math.abs(vis.wLambda[e] - track.wM[r] * perM) / bLen);
        if (vis.channel[e] !== c || vis.antenna1[e] !== track.antenna1[r] || vis.antenna2[e] !== track.antenna2[r] ||
            vis.timeS[e] !== track.timeS[track.timeIndex[r]]) badMeta++;
      }
    }
    // u, v: one multiplication → 1e-15 of |b|/λ; w stored as float32 → 1e-7 of |b|/λ.
    expect(maxRelUv).toBeLessThan(1e-15);
    expect(maxRelW).toBeLessThan(1e-7);
    expect(badMeta).toBe(0);
    expect(vis.antennaNames?.get(1)).toBe("A01");
    expect(vis.dishDiameterM).toBe(12);
    expect(vis.phaseCentreDeg).toEqual([150, -30]);
    // 2025-01-15T03:00:00Z = JD 2460690.625 (JD 2451545.0 at 2000-01-01T12:00Z plus 9145.625 days).
    expectAbs(vis.timeRefJd, 2460690.625, 1e-9, "time reference");
  });

  it("swapping antenna order conjugates the visibilities (Hermitian symmetry)", () => {
    // V(−u, −v) = V(u, v)* for a real sky (analytic); the swapped layout negates every baseline.
    const sky = analyticSkyVisibilities([{ type: "gaussian", flux: 1, sigma: 0.15, q: 0.5, pa: 40, x: 0.4, y: -0.2 }]);
    const swapped: Observation = {
      ...obs,
      layout: {
        eastM: obs.layout.eastM.slice().reverse(),
        northM: obs.layout.northM.slice().reverse(),
        upM: obs.layout.upM.slice().reverse(),
        names: obs.layout.names.slice().reverse(),
      },
    };
    const a = simulateObservation(obs, sky, new Rng(1), { noise: false });
    const b = simulateObservation(swapped, sky, new Rng(1), { noise: false });
    const nAnt = obs.layout.eastM.length;
    // Pair (i, j) of the original is (n+1−j, n+1−i) in the swapped layout: same rows in another order.
    const index = new Map<string, number>();
    for (let k = 0; k < b.count; k++) index.set(`${b.timeS[k]}:${b.antenna1[k]}:${b.antenna2[k]}:${b.channel[k]}`, k);
    let maxErrU = 0, maxErrV = 0;
    for (let k = 0; k < a.count; k++) {
      const m = index.get(`${a.timeS[k]}:${nAnt + 1 - a.antenna2[k]}:${nAnt + 1 - a.antenna1[k]}:${a.channel[k]}`)!;
      maxErrU = Math.max(maxErrU, Math.abs(b.uLambda[m] + a.uLambda[k]));
      maxErrV = Math.max(maxErrV, Math.abs(b.reJy[m] - a.reJy[k]), Math.abs(b.imJy[m] + a.imJy[k]));
    }
    // u to 1e-3 λ (the negation is exact: same differences of the same positions).
    expectAbs(maxErrU, 0, 1e-3, "max |u(j,i) + u(i,j)| [λ]");
    // Visibilities: the two doubles agree to 1e-12 Jy (rounding of the phase), but each is stored
    // as float32, and two doubles that close can round to neighbouring floats: one ulp ≤ 2^-23 ×
    // |V| ≤ 2^-23 × F (F = 1 Jy, the largest |V|) = 1.2e-7 Jy (analytic). Broken symmetry (a sign
    // or conjugation error) would be of order |Im V| ~ 0.1–1 Jy for this offset source.
    expectAbs(maxErrV, 0, 2 * F32_REL * 1 + 1e-12, "max deviation from Hermitian symmetry [Jy]");
  });
});

describe("simulateObservation: antenna gain errors", () => {
  const obs = refObs({ hour_angle_h: [-0.2, 0.2], integration_s: 60 });

  it("applies V_ij ← g_i g_j* V_ij with given gains", () => {
    const nAnt = obs.layout.eastM.length;
    const { track } = runSimulation(obs, ZERO_SKY, new Rng(1), { noise: false });
    const gains: AntennaGains = {
      nAnt, nTimes: track.nTimes,
      amplitude: new Float64Array(nAnt * track.nTimes).map((_, k) => 1 + 0.01 * (k % 7)),
      phaseRad: new Float64Array(nAnt * track.nTimes).map((_, k) => 0.3 * Math.sin(k)),
    };
    const F = 0.5, x0 = 0.2, y0 = 0.1;
    const sky = analyticSkyVisibilities([{ type: "point_source", flux: F, x: x0, y: y0 }]);
    const vis = simulateObservation(obs, sky, new Rng(1), { noise: false, gains });
    let r = 0;
    for (let k = 0; k < vis.count; k++, r++) {
      const t = track.timeIndex[r];
      const i = vis.antenna1[k] - 1, j = vis.antenna2[k] - 1;
      const amp = gains.amplitude[t * nAnt + i] * gains.amplitude[t * nAnt + j];
      const ph = -2 * Math.PI * (vis.uLambda[k] * x0 + vis.vLambda[k] * y0) * ARCSEC_TO_RAD + gains.phaseRad[t * nAnt + i] - gains.phaseRad[t * nAnt + j];
      // Two float32 stores (analytic bound): the sky value, whose re and im errors (≤ 2^-24 F each,
      // ≤ √2·2^-24·F together) the gain scales by amp and rotates into both parts, then the gained
      // value (≤ 2^-24·F·amp) → (1 + √2)·2^-24·F·amp, plus 1e-12 for the phase rounding. A wrong
      // gain (conjugate, swapped antenna) would be off by ~0.01–0.3 × F.
      const tol = (1 + Math.SQRT2) * F32_REL * F * amp + 1e-12;
      expectAbs(vis.reJy[k], F * amp * Math.cos(ph), tol, "re");
      expectAbs(vis.imJy[k], F * amp * Math.sin(ph), tol, "im");
    }
  });

  it("drawn antenna-based errors leave closure phases of a point source at 0", () => {
    // Closure phases are immune to antenna-based phase errors (Thompson, Moran & Swenson 2017
    // §10.3, from memory); a point source at the phase centre has all true phases 0. The sky value
    // 1 + 0i is exact in float32; the gained value is stored once as float32, re and im each to
    // ≤ 2^-24 of itself, so |δV| ≤ 2^-24 |V| and each baseline phase is off by ≤ 2^-24 rad (to
    // first order); three of them in a closure → 3·2^-24 = 1.8e-7 rad, taken as 4·2^-24 for the
    // second-order terms and atan2 (analytic). Non-closing gains would give errors ~ 40° = 0.7 rad.
    const sky = analyticSkyVisibilities([{ type: "point_source", flux: 1, x: 0, y: 0 }]);
    const vis = simulateObservation(obs, sky, new Rng(5), {
      noise: false, gainErrors: { phaseRmsDeg: 40, amplitudeRms: 0.1, model: "random_walk" },
    });
    const ph = new Map<string, number>();
    for (let k = 0; k < vis.count; k++) ph.set(`${vis.timeS[k]}:${vis.antenna1[k]}:${vis.antenna2[k]}`, Math.atan2(vis.imJy[k], vis.reJy[k]));
    const t0 = vis.timeS[0];
    let nonzero = 0;
    for (let a = 1; a <= 8; a++) {
      const closure = ph.get(`${t0}:${a}:${a + 1}`)! + ph.get(`${t0}:${a + 1}:${a + 2}`)! - ph.get(`${t0}:${a}:${a + 2}`)!;
      expectAbs(Math.atan2(Math.sin(closure), Math.cos(closure)), 0, 4 * F32_REL, "closure phase");
      if (Math.abs(ph.get(`${t0}:${a}:${a + 1}`)!) > 0.01) nonzero++;
    }
    expect(nonzero).toBeGreaterThan(4); // the baseline phases themselves are corrupted
  });

  it("drawn gains have the requested rms (constant; random walk at the end of the track)", () => {
    // rms over 4000 antennas: relative sd of an rms estimate is 1/sqrt(2·4000) = 1.1%; assert 5%.
    const c = drawAntennaGains(4000, 3, { phaseRmsDeg: 20, amplitudeRms: 0.05, model: "constant" }, new Rng(11));
    const w = drawAntennaGains(4000, 50, { phaseRmsDeg: 20, amplitudeRms: 0.05, model: "random_walk" }, new Rng(12));
    const rms = (a: Float64Array, from: number, n: number, f: (x: number) => number) => {
      let s = 0;
      for (let k = from; k < from + n; k++) s += f(a[k]) ** 2;
      return Math.sqrt(s / n);
    };
    const deg = (x: number) => (x * 180) / Math.PI;
    expectRel(rms(c.phaseRad, 0, 4000, deg), 20, 0.05, "constant phase rms");
    expectRel(rms(c.amplitude, 0, 4000, Math.log), 0.05, 0.05, "constant ln-amplitude rms");
    expect(c.phaseRad[2 * 4000 + 17]).toBe(c.phaseRad[17]); // constant in time
    expectRel(rms(w.phaseRad, 49 * 4000, 4000, deg), 20, 0.05, "random-walk phase rms at the end");
    expectRel(rms(w.amplitude, 49 * 4000, 4000, Math.log), 0.05, 0.05, "random-walk ln-amplitude rms at the end");
    // Random walk: variance grows linearly, so at the middle (25 of 50 steps) rms = 20/√2.
    expectRel(rms(w.phaseRad, 24 * 4000, 4000, deg), 20 / Math.SQRT2, 0.05, "random-walk phase rms halfway");
  });
});
