/**
 * Earth-rotation synthesis: baseline coordinates (u, v, w) of every antenna pair over a range of
 * hour angles, for a source at declination δ seen from a site at latitude φ.
 *
 * Steps (Thompson, Moran & Swenson 2017, §4.1 and eq. 4.1):
 * 1. ENU → equatorial (X, Y, Z): X toward (H = 0, δ = 0), Y toward (H = −6 h, δ = 0), i.e. East,
 *    Z toward the celestial pole:  X = −sinφ·N + cosφ·U,  Y = E,  Z = cosφ·N + sinφ·U.
 * 2. (X, Y, Z) → (u, v, w) with hour angle H and declination δ:
 *      u =  sinH·X + cosH·Y
 *      v = −sinδ cosH·X + sinδ sinH·Y + cosδ·Z
 *      w =  cosδ cosH·X − cosδ sinH·Y + sinδ·Z
 *    u points East on the sky, v North, w toward the source (w = b·ŝ).
 * The baseline of the pair (i, j), i < j (1-based antenna numbers), is b = r_j − r_i. Swapping
 * the antennas negates (u, v, w); the visibility becomes its complex conjugate.
 *
 * Time: the hour angle advances at the sidereal rate, 1.00273790935 sidereal seconds per solar
 * (UT1) second (IAU 1982 sidereal-time relation; Aoki et al. 1982, A&A 105, 359 — from memory).
 * Time stamps are solar seconds from the start of the track.
 */
import { InputError } from "../errors.js";
import type { AntennaLayout } from "./layout.js";

/** Sidereal seconds per solar second (rate of the hour angle relative to UT1). */
export const SIDEREAL_PER_SOLAR = 1.00273790935;
/** Hour-angle rate [rad per solar second]. */
export const HOUR_ANGLE_RATE_RAD_PER_S = (2 * Math.PI * SIDEREAL_PER_SOLAR) / 86_400;
/**
 * Default elevation limit [deg]: times with the source lower than this are dropped. 15° is a
 * usual lower limit for sub-mm observing, where the atmospheric path grows quickly toward the
 * horizon (common practice, no source).
 */
export const DEFAULT_ELEVATION_LIMIT_DEG = 15;

/** Geometry of a track: where, what and when. Angles in radians. */
export interface TrackGeometry {
  /** Site latitude φ [rad]. */
  siteLatRad: number;
  /** Source (phase-centre) declination δ [rad]. */
  decRad: number;
  /** First and last hour angle of the track [rad]; end > start. */
  hourAngleStartRad: number;
  hourAngleEndRad: number;
  /** Integration time of one sample [s]. */
  integrationS: number;
  /** Samples with elevation below this are dropped [rad]. */
  elevationLimitRad: number;
}

/**
 * The uv track of an array in metres (frequency-independent), one row per (time, baseline),
 * time slowest. Divide by λ of each channel for wavelengths.
 */
export interface UvTrackM {
  /** Number of kept time samples and of baselines; rows = nTimes·nBaselines. */
  nTimes: number;
  nBaselines: number;
  /** Per row: u, v, w [m]. */
  uM: Float64Array;
  vM: Float64Array;
  wM: Float64Array;
  /** Per row: 1-based antenna numbers, antenna1 < antenna2. */
  antenna1: Uint16Array;
  antenna2: Uint16Array;
  /** Per row: index of the kept time sample (0..nTimes−1). */
  timeIndex: Uint32Array;
  /** Per kept time: centre of the integration [s since the track start] and hour angle [rad]. */
  timeS: Float64Array;
  hourAngleRad: Float64Array;
  /** Per kept time: source elevation [rad]. */
  elevationRad: Float64Array;
  /** Time samples dropped by the elevation limit. */
  droppedLowElevation: number;
}

/**
 * Convert one ENU vector to equatorial (X, Y, Z) at latitude φ.
 * @param eastM, northM, upM components [m]
 * @param latRad site latitude [rad]
 * @param out receives [X, Y, Z] [m]
 * Reference: Thompson, Moran & Swenson 2017, §4.1 (X toward H = 0, Y toward H = −6 h, Z to the pole).
 */
export function enuToXyz(eastM: number, northM: number, upM: number, latRad: number, out: Float64Array): void {
  const s = Math.sin(latRad);
  const c = Math.cos(latRad);
  out[0] = -s * northM + c * upM;
  out[1] = eastM;
  out[2] = c * northM + s * upM;
}

/**
 * Rotate an equatorial baseline (X, Y, Z) to (u, v, w) for hour angle H and declination δ.
 * @param xM, yM, zM baseline [m]
 * @param hourAngleRad H [rad]; @param decRad δ [rad]
 * @param out receives [u, v, w] in the units of the input
 * Reference: Thompson, Moran & Swenson 2017, eq. 4.1.
 */
export function xyzToUvw(xM: number, yM: number, zM: number, hourAngleRad: number, decRad: number, out: Float64Array): void {
  const sH = Math.sin(hourAngleRad);
  const cH = Math.cos(hourAngleRad);
  const sD = Math.sin(decRad);
  const cD = Math.cos(decRad);
  out[0] = sH * xM + cH * yM;
  out[1] = -sD * cH * xM + sD * sH * yM + cD * zM;
  out[2] = cD * cH * xM - cD * sH * yM + sD * zM;
}

/**
 * Elevation of a source at hour angle H and declination δ from latitude φ:
 * sin e = sinφ sinδ + cosφ cosδ cosH.
 * @returns elevation [rad]
 * Reference: spherical astronomy, e.g. Smart, Textbook on Spherical Astronomy, §§ on the
 * astronomical triangle (from memory); Thompson, Moran & Swenson 2017 §4.2.
 */
export function elevationRad(hourAngleRad: number, decRad: number, latRad: number): number {
  const s = Math.sin(latRad) * Math.sin(decRad) + Math.cos(latRad) * Math.cos(decRad) * Math.cos(hourAngleRad);
  return Math.asin(Math.max(-1, Math.min(1, s)));
}

/**
 * Centres of the integrations covering [start, end] in hour angle: n = ⌊duration/τ⌋ samples
 * (a last partial integration is dropped), the k-th centred at (k + ½)·τ solar seconds.
 * @returns times [s since start] and hour angles [rad]
 * @throws InputError when the range is shorter than one integration
 */
export function trackTimes(
  hourAngleStartRad: number,
  hourAngleEndRad: number,
  integrationS: number,
): { timeS: Float64Array; hourAngleRad: Float64Array } {
  const durationS = (hourAngleEndRad - hourAngleStartRad) / HOUR_ANGLE_RATE_RAD_PER_S;
  // The small slack keeps an exact multiple (e.g. 1 h of 6 s samples) from losing its last sample to rounding.
  const n = Math.floor(durationS / integrationS + 1e-9);
  if (!(n >= 1)) {
    throw new InputError(
      `hour_angle_h: the track lasts ${durationS.toFixed(1)} s, shorter than one integration (${integrationS} s); widen the hour-angle range or shorten integration_s`,
    );
  }
  const timeS = new Float64Array(n);
  const hourAngleRad = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    timeS[k] = (k + 0.5) * integrationS;
    hourAngleRad[k] = hourAngleStartRad + timeS[k] * HOUR_ANGLE_RATE_RAD_PER_S;
  }
  return { timeS, hourAngleRad };
}

/**
 * Build the uv track [m] of every baseline (i < j) at every integration above the elevation limit.
 * @param layout antenna positions [m, ENU]
 * @param geom site, source and time range
 * @returns the track; `nTimes` may be 0 if the source never rises above the limit
 * Reference: Thompson, Moran & Swenson 2017, §4.1, eq. 4.1.
 */
export function buildUvTrack(layout: AntennaLayout, geom: TrackGeometry): UvTrackM {
  const nAnt = layout.eastM.length;
  const nBaselines = (nAnt * (nAnt - 1)) / 2;
  const { timeS: allTimes, hourAngleRad: allH } = trackTimes(geom.hourAngleStartRad, geom.hourAngleEndRad, geom.integrationS);

  // Antenna positions in XYZ once; baselines are differences, so the reference point cancels.
  const ax = new Float64Array(nAnt);
  const ay = new Float64Array(nAnt);
  const az = new Float64Array(nAnt);
  const tmp = new Float64Array(3);
  for (let k = 0; k < nAnt; k++) {
    enuToXyz(layout.eastM[k], layout.northM[k], layout.upM[k], geom.siteLatRad, tmp);
    ax[k] = tmp[0];
    ay[k] = tmp[1];
    az[k] = tmp[2];
  }

  const keep: number[] = [];
  const elev: number[] = [];
  for (let t = 0; t < allH.length; t++) {
    const e = elevationRad(allH[t], geom.decRad, geom.siteLatRad);
    if (e >= geom.elevationLimitRad) {
      keep.push(t);
      elev.push(e);
    }
  }
  const nTimes = keep.length;
  const rows = nTimes * nBaselines;
  const uM = new Float64Array(rows);
  const vM = new Float64Array(rows);
  const wM = new Float64Array(rows);
  const antenna1 = new Uint16Array(rows);
  const antenna2 = new Uint16Array(rows);
  const timeIndex = new Uint32Array(rows);
  const timeS = new Float64Array(nTimes);
  const hourAngleRad = new Float64Array(nTimes);
  const sD = Math.sin(geom.decRad);
  const cD = Math.cos(geom.decRad);
  let r = 0;
  for (let t = 0; t < nTimes; t++) {
    const h = allH[keep[t]];
    timeS[t] = allTimes[keep[t]];
    hourAngleRad[t] = h;
    const sH = Math.sin(h);
    const cH = Math.cos(h);
    for (let i = 0; i < nAnt; i++) {
      for (let j = i + 1; j < nAnt; j++) {
        const bx = ax[j] - ax[i];
        const by = ay[j] - ay[i];
        const bz = az[j] - az[i];
        // TMS eq. 4.1, inlined (same as xyzToUvw) to avoid a call per row.
        uM[r] = sH * bx + cH * by;
        vM[r] = -sD * cH * bx + sD * sH * by + cD * bz;
        wM[r] = cD * cH * bx - cD * sH * by + sD * bz;
        antenna1[r] = i + 1;
        antenna2[r] = j + 1;
        timeIndex[r] = t;
        r++;
      }
    }
  }
  return {
    nTimes,
    nBaselines,
    uM,
    vM,
    wM,
    antenna1,
    antenna2,
    timeIndex,
    timeS,
    hourAngleRad,
    elevationRad: Float64Array.from(elev),
    droppedLowElevation: allH.length - nTimes,
  };
}
