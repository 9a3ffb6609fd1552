/**
 * A summary of an observation before simulating it: array size, time on source after the
 * elevation limit, and the expected noise per visibility and in a natural-weighted image.
 * Used by `simulate` and `plan` to print what an observation file asks for.
 * Reference: radiometer equation, REFERENCES.md §6; resolution rule λ/B_max, REFERENCES.md §5
 * (common practice).
 */
import { C_M_PER_S, DEG_TO_RAD, RAD_TO_ARCSEC } from "../units.js";
import { maxBaselineLengthM, minBaselineLengthM } from "./layout.js";
import { imageSigmaJyPerBeam, sefdJy, stokesISigmaJy, visibilitySigmaJy } from "./noise.js";
import type { Observation } from "./observation.js";
import { elevationRad, trackTimes } from "./uvw.js";

export interface ObservationSummary {
  nAnt: number;
  nBaselines: number;
  /** Integrations kept (source above the elevation limit) and dropped. */
  nTimes: number;
  droppedLowElevation: number;
  /** Time on source [s] = kept integrations × integration time. */
  onSourceS: number;
  /** Stokes I visibilities the simulation will write (baselines × times × channels). */
  nVisibilities: number;
  sefdJy: number;
  /** σ per real/imaginary part of one correlation, one channel, one integration [Jy]. */
  sigmaCorrelationJy: number;
  /** The same for one Stokes I visibility [Jy]. */
  sigmaStokesIJy: number;
  /** Natural-weighted Stokes I image noise over the whole band and kept time [Jy/beam]. */
  imageSigmaJyPerBeam: number;
  /** Longest and shortest baseline [m] (3-D). */
  maxBaselineM: number;
  minBaselineM: number;
  /** λ/B_max at the band centre [arcsec] (common-practice resolution). */
  resolutionArcsec: number;
}

/**
 * Summarise an observation without simulating it.
 * @param obs validated observation
 * Reference: see module comment.
 */
export function summariseObservation(obs: Observation): ObservationSummary {
  const nAnt = obs.layout.eastM.length;
  const { hourAngleRad } = trackTimes(obs.hourAngleH[0] * 15 * DEG_TO_RAD, obs.hourAngleH[1] * 15 * DEG_TO_RAD, obs.integrationS);
  const lat = obs.siteLatDeg * DEG_TO_RAD;
  const dec = obs.phaseCentreDeg[1] * DEG_TO_RAD;
  const limit = obs.elevationLimitDeg * DEG_TO_RAD;
  let nTimes = 0;
  for (let t = 0; t < hourAngleRad.length; t++) if (elevationRad(hourAngleRad[t], dec, lat) >= limit) nTimes++;
  const sefd = sefdJy(obs.tsysK, obs.dishM, obs.apertureEfficiency);
  const sigmaCorr = visibilitySigmaJy(sefd, obs.bandwidthHz / obs.channels, obs.integrationS, obs.correlatorEfficiency);
  const onSourceS = nTimes * obs.integrationS;
  const maxB = maxBaselineLengthM(obs.layout);
  return {
    nAnt,
    nBaselines: (nAnt * (nAnt - 1)) / 2,
    nTimes,
    droppedLowElevation: hourAngleRad.length - nTimes,
    onSourceS,
    nVisibilities: ((nAnt * (nAnt - 1)) / 2) * nTimes * obs.channels,
    sefdJy: sefd,
    sigmaCorrelationJy: sigmaCorr,
    sigmaStokesIJy: stokesISigmaJy(sigmaCorr, obs.nPol),
    imageSigmaJyPerBeam: imageSigmaJyPerBeam(sefd, obs.correlatorEfficiency, nAnt, obs.bandwidthHz, onSourceS, obs.nPol),
    maxBaselineM: maxB,
    minBaselineM: minBaselineLengthM(obs.layout),
    resolutionArcsec: (C_M_PER_S / obs.freqHz / maxB) * RAD_TO_ARCSEC,
  };
}
