/**
 * Mock observations: uv tracks of an observation (uvw.ts), sky visibilities from a caller's
 * callback, optional antenna gain errors (gains.ts) and thermal noise from the radiometer
 * equation (noise.ts), returned as a `Visibilities` table in the internal sign convention.
 *
 * Entry order: time (slowest), baseline (i < j), channel, correlation (fastest).
 * Noise: σ of one correlation, per real/imaginary part, σ = SEFD/(η_c sqrt(2 Δν_ch τ)) with the
 * channel width Δν_ch = bandwidth/channels. Stokes I entries (default) carry σ_I = σ/sqrt(n_pol)
 * and weight 1/σ_I² = n_pol/σ²; parallel-hand entries (XX, YY or RR, LL) carry σ and weight 1/σ²,
 * so that forming I = (V₁ + V₂)/2 gives back σ/√2 (CONVENTIONS.md "Stokes I").
 * The sky is assumed unpolarised: each parallel hand sees V_I.
 * Reference: Thompson, Moran & Swenson 2017 §4.1 (eq. 4.1) and §6.2; REFERENCES.md §5–6.
 */
import { InputError } from "../errors.js";
import type { Rng } from "../random.js";
import { C_M_PER_S, DEG_TO_RAD } from "../units.js";
import type { CorrelationCode, Visibilities } from "../vis/types.js";
import type { SkyVisibilityFn } from "./analytic.js";
import { baselineGain, drawAntennaGains, type AntennaGains, type GainErrorSpec } from "./gains.js";
import { sefdJy, stokesISigmaJy, visibilitySigmaJy } from "./noise.js";
import { channelFrequenciesHz, type Observation } from "./observation.js";
import { buildUvTrack, type UvTrackM } from "./uvw.js";

/** Options of `simulateObservation`. */
export interface SimulateOptions {
  /**
   * Correlation products written: "stokes_i" (default; correlation code 1), "linear" (XX, YY;
   * codes −5, −6) or "circular" (RR, LL; codes −1, −2). The last two need n_pol = 2.
   */
  products?: "stokes_i" | "linear" | "circular";
  /** Add thermal noise (default true). Weights are set from σ either way. */
  noise?: boolean;
  /** Calibration errors to draw (default: the observation's `gainErrors`; none if absent). */
  gainErrors?: GainErrorSpec;
  /** Explicit antenna gains (nAnt × kept time samples); overrides `gainErrors`. */
  gains?: AntennaGains;
}

/** Everything a simulation produced, for callers that need more than the table. */
export interface SimulationResult {
  vis: Visibilities;
  /** The uv track in metres (kept time samples only). */
  track: UvTrackM;
  /** Gains applied, if any. */
  gains?: AntennaGains;
  /** σ of one correlation per real/imaginary part [Jy], per channel (all channels alike). */
  sigmaCorrelationJy: number;
  /** σ of one Stokes I visibility per real/imaginary part [Jy]. */
  sigmaStokesIJy: number;
}

/**
 * Simulate an observation and return the visibility table.
 * @param obs validated observation (observation.ts)
 * @param skyVisibilities sky model: V [Jy] at (u, v) [λ] for a frequency [Hz], internal convention
 * @param rng seeded generator: gains are drawn first, then the noise, in entry order
 * @param opts products, noise, calibration errors
 * @returns Visibilities (Stokes I by default), weights 1/σ², time since obs.timeRefJd
 * Reference: see module comment.
 */
export function simulateObservation(
  obs: Observation,
  skyVisibilities: SkyVisibilityFn,
  rng: Rng,
  opts: SimulateOptions = {},
): Visibilities {
  return runSimulation(obs, skyVisibilities, rng, opts).vis;
}

/**
 * As `simulateObservation`, returning also the track, the gains and the noise levels.
 * Reference: see module comment.
 */
export function runSimulation(
  obs: Observation,
  skyVisibilities: SkyVisibilityFn,
  rng: Rng,
  opts: SimulateOptions = {},
): SimulationResult {
  const products = opts.products ?? "stokes_i";
  const corrCodes: CorrelationCode[] =
    products === "stokes_i" ? [1] : products === "linear" ? [-5, -6] : products === "circular" ? [-1, -2] : [];
  if (corrCodes.length === 0) {
    throw new InputError(`products: expected "stokes_i", "linear" or "circular"; got ${JSON.stringify(products)}`);
  }
  if (products !== "stokes_i" && obs.nPol !== 2) {
    throw new InputError(`n_pol: ${products} products need two parallel hands; got n_pol ${obs.nPol} (set n_pol to 2 or write Stokes I)`);
  }
  const nCorr = corrCodes.length;
  const nAnt = obs.layout.eastM.length;

  const track = buildUvTrack(obs.layout, {
    siteLatRad: obs.siteLatDeg * DEG_TO_RAD,
    decRad: obs.phaseCentreDeg[1] * DEG_TO_RAD,
    hourAngleStartRad: obs.hourAngleH[0] * 15 * DEG_TO_RAD,
    hourAngleEndRad: obs.hourAngleH[1] * 15 * DEG_TO_RAD,
    integrationS: obs.integrationS,
    elevationLimitRad: obs.elevationLimitDeg * DEG_TO_RAD,
  });
  if (track.nTimes === 0) {
    throw new InputError(
      `${obs.name ?? "observation"}: no integration has the source above elevation_limit_deg ${obs.elevationLimitDeg}°; choose hour angles nearer 0 or lower the limit`,
    );
  }

  const freqs = channelFrequenciesHz(obs);
  const nChan = freqs.length;
  const channelWidthHz = obs.bandwidthHz / nChan;
  const sigmaCorr = visibilitySigmaJy(sefdJy(obs.tsysK, obs.dishM, obs.apertureEfficiency), channelWidthHz, obs.integrationS, obs.correlatorEfficiency);
  const sigmaI = stokesISigmaJy(sigmaCorr, obs.nPol);
  const sigmaEntry = products === "stokes_i" ? sigmaI : sigmaCorr;
  const weightEntry = 1 / (sigmaEntry * sigmaEntry);

  let gains = opts.gains;
  const gainSpec = opts.gainErrors ?? obs.gainErrors;
  if (!gains && gainSpec && (gainSpec.phaseRmsDeg > 0 || gainSpec.amplitudeRms > 0)) {
    gains = drawAntennaGains(nAnt, track.nTimes, gainSpec, rng);
  }
  if (gains && (gains.nAnt !== nAnt || gains.nTimes !== track.nTimes)) {
    throw new Error(`simulate: gains cover ${gains.nAnt} antennas × ${gains.nTimes} times; the track has ${nAnt} × ${track.nTimes}`);
  }

  const rows = track.nTimes * track.nBaselines;
  const count = rows * nChan * nCorr;
  const uLambda = new Float64Array(count);
  const vLambda = new Float64Array(count);
  const wLambda = new Float32Array(count);
  // Data in single precision, as `Visibilities` stores them: each write below (sky value, after
  // the gain, after the noise) rounds to float32, ≤ 2^-24 of the value each time — far below σ.
  const reJy = new Float32Array(count);
  const imJy = new Float32Array(count);
  const weight = new Float64Array(count).fill(weightEntry);
  const channel = new Uint16Array(count);
  const antenna1 = new Uint16Array(count);
  const antenna2 = new Uint16Array(count);
  const timeS = new Float64Array(count);
  const correlation = new Int8Array(count);

  // One sky call per channel over all rows; scratch reused across channels.
  const uScratch = new Float64Array(rows);
  const vScratch = new Float64Array(rows);
  for (let c = 0; c < nChan; c++) {
    const perM = freqs[c] / C_M_PER_S;
    for (let r = 0; r < rows; r++) {
      uScratch[r] = track.uM[r] * perM;
      vScratch[r] = track.vM[r] * perM;
    }
    const sky = skyVisibilities(uScratch, vScratch, freqs[c]);
    if (sky.re.length !== rows || sky.im.length !== rows) {
      throw new Error(`simulate: the sky callback returned ${sky.re.length}/${sky.im.length} values for ${rows} points`);
    }
    for (let r = 0; r < rows; r++) {
      const base = (r * nChan + c) * nCorr;
      const w = track.wM[r] * perM;
      for (let p = 0; p < nCorr; p++) {
        const e = base + p;
        uLambda[e] = uScratch[r];
        vLambda[e] = vScratch[r];
        wLambda[e] = w;
        reJy[e] = sky.re[r];
        imJy[e] = sky.im[r];
        channel[e] = c;
        correlation[e] = corrCodes[p];
      }
    }
  }

  // Row metadata, gains and noise, in entry order (the order the Rng is consumed in).
  const g = new Float64Array(2);
  const perRow = nChan * nCorr;
  const addNoise = opts.noise ?? true;
  for (let r = 0; r < rows; r++) {
    const t = track.timeIndex[r];
    const a1 = track.antenna1[r];
    const a2 = track.antenna2[r];
    const time = track.timeS[t];
    if (gains) baselineGain(gains, t, a1, a2, g);
    for (let e = r * perRow; e < (r + 1) * perRow; e++) {
      antenna1[e] = a1;
      antenna2[e] = a2;
      timeS[e] = time;
      if (gains) {
        const re = reJy[e];
        const im = imJy[e];
        reJy[e] = g[0] * re - g[1] * im;
        imJy[e] = g[0] * im + g[1] * re;
      }
      if (addNoise) {
        reJy[e] += sigmaEntry * rng.normal();
        imJy[e] += sigmaEntry * rng.normal();
      }
    }
  }

  const antennaNames = new Map<number, string>();
  obs.layout.names.forEach((nm, k) => antennaNames.set(k + 1, nm));
  const vis: Visibilities = {
    count,
    uLambda,
    vLambda,
    wLambda,
    reJy,
    imJy,
    weight,
    channel,
    antenna1,
    antenna2,
    timeS,
    correlation,
    channelFreqHz: freqs,
    channelWidthHz,
    timeRefJd: obs.timeRefJd,
    phaseCentreDeg: [obs.phaseCentreDeg[0], obs.phaseCentreDeg[1]],
    dishDiameterM: obs.dishM,
    antennaNames,
    telescope: "arcfringe simulation",
    objectName: obs.name,
    circularFeeds: products === "stokes_i" ? undefined : products === "circular",
  };
  return { vis, track, gains, sigmaCorrelationJy: sigmaCorr, sigmaStokesIJy: sigmaI };
}
