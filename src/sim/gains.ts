/**
 * Antenna-based calibration errors for mock observations: complex gains g_i = a_i e^{iφ_i} per
 * antenna and time sample, applied to a visibility of the pair (i, j) as
 *
 *     V_ij ← g_i g_j* V_ij        (internal sign convention of CONVENTIONS.md)
 *
 * so the phase error of a baseline is φ_i − φ_j and its amplitude error a_i a_j. A writer that
 * conjugates to the file convention stores g_i* g_j times the true file-convention data
 * (CONVENTIONS.md, "Consequence for calibration"). Every antenna gets an error; there is no
 * reference antenna. The same gain multiplies both parallel hands.
 *
 * Models (this module's own definitions):
 * - "constant": ln a_i ~ N(0, amplitude_rms) and φ_i ~ N(0, phase_rms), fixed over the track.
 * - "random_walk": ln a_i and φ_i start at 0 and take an independent Gaussian step at every kept
 *   time sample, with step size rms/sqrt(n_times), so the rms over antennas reaches the requested
 *   value at the end of the track.
 * Amplitudes are log-normal so they stay positive; for small rms, a ≈ 1 + N(0, amplitude_rms).
 */
import { DEG_TO_RAD } from "../units.js";
import type { Rng } from "../random.js";

/** Requested calibration errors. */
export interface GainErrorSpec {
  /** rms antenna phase error [deg] (≥ 0). */
  phaseRmsDeg: number;
  /** rms of the natural log of the antenna amplitude (≈ fractional amplitude error) (≥ 0). */
  amplitudeRms: number;
  /** Constant over the track, or a Gaussian random walk in time. */
  model: "constant" | "random_walk";
}

/** Antenna gains per time sample; entry [t·nAnt + (antenna − 1)]. */
export interface AntennaGains {
  nAnt: number;
  nTimes: number;
  /** a_i(t), dimensionless, > 0. */
  amplitude: Float64Array;
  /** φ_i(t) [rad]. */
  phaseRad: Float64Array;
}

/**
 * Draw antenna gains. Phases are drawn before amplitudes, antenna by antenna, so a run with the
 * same seed and sizes is reproducible.
 * @param nAnt number of antennas
 * @param nTimes number of time samples
 * @param spec error model and rms values
 * @param rng seeded generator
 * Reference: module comment (definitions of this project).
 */
export function drawAntennaGains(nAnt: number, nTimes: number, spec: GainErrorSpec, rng: Rng): AntennaGains {
  const amplitude = new Float64Array(nAnt * nTimes);
  const phaseRad = new Float64Array(nAnt * nTimes);
  const phaseRms = spec.phaseRmsDeg * DEG_TO_RAD;
  const ampRms = spec.amplitudeRms;
  if (spec.model === "constant") {
    const phi = new Float64Array(nAnt);
    const lnA = new Float64Array(nAnt);
    for (let a = 0; a < nAnt; a++) phi[a] = phaseRms * rng.normal();
    for (let a = 0; a < nAnt; a++) lnA[a] = ampRms * rng.normal();
    for (let t = 0; t < nTimes; t++) {
      for (let a = 0; a < nAnt; a++) {
        phaseRad[t * nAnt + a] = phi[a];
        amplitude[t * nAnt + a] = Math.exp(lnA[a]);
      }
    }
  } else {
    const stepPhase = phaseRms / Math.sqrt(Math.max(1, nTimes));
    const stepLnA = ampRms / Math.sqrt(Math.max(1, nTimes));
    const phi = new Float64Array(nAnt);
    const lnA = new Float64Array(nAnt);
    for (let t = 0; t < nTimes; t++) {
      for (let a = 0; a < nAnt; a++) phi[a] += stepPhase * rng.normal();
      for (let a = 0; a < nAnt; a++) lnA[a] += stepLnA * rng.normal();
      for (let a = 0; a < nAnt; a++) {
        phaseRad[t * nAnt + a] = phi[a];
        amplitude[t * nAnt + a] = Math.exp(lnA[a]);
      }
    }
  }
  return { nAnt, nTimes, amplitude, phaseRad };
}

/**
 * The complex factor g_i g_j* for antennas (i, j) at time sample t.
 * @param gains antenna gains
 * @param t time-sample index
 * @param ant1, ant2 1-based antenna numbers i, j
 * @param out receives [re, im]
 */
export function baselineGain(gains: AntennaGains, t: number, ant1: number, ant2: number, out: Float64Array): void {
  const k1 = t * gains.nAnt + ant1 - 1;
  const k2 = t * gains.nAnt + ant2 - 1;
  const amp = gains.amplitude[k1] * gains.amplitude[k2];
  const dphi = gains.phaseRad[k1] - gains.phaseRad[k2];
  out[0] = amp * Math.cos(dphi);
  out[1] = amp * Math.sin(dphi);
}
