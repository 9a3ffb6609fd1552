/**
 * The in-memory visibility table: a structure of typed arrays, one entry per visibility
 * (one baseline × time × channel × correlation), in the INTERNAL sign convention of
 * CONVENTIONS.md: V(u, v) = Σ I(x, y) exp(−2πi (u x + v y)), x East, y North, u, v in
 * wavelengths of that entry's own channel frequency. Readers of UVFITS conjugate the stored
 * data to reach this convention; writers conjugate back.
 *
 * Only unflagged entries with finite weight > 0 are kept; the reader's ReadReport counts the
 * rest. Weights are w = 1/σ², σ the noise of the real (and of the imaginary) part in Jy.
 */

/** AIPS Memo 117 Stokes codes: 1 = I, 2 = Q, 3 = U, 4 = V, −1..−4 = RR, LL, RL, LR, −5..−8 = XX, YY, XY, YX. */
export type CorrelationCode = -8 | -7 | -6 | -5 | -4 | -3 | -2 | -1 | 1 | 2 | 3 | 4;

export const CORRELATION_NAMES: Record<number, string> = {
  1: "I", 2: "Q", 3: "U", 4: "V",
  [-1]: "RR", [-2]: "LL", [-3]: "RL", [-4]: "LR",
  [-5]: "XX", [-6]: "YY", [-7]: "XY", [-8]: "YX",
};

export interface Visibilities {
  /** Number of entries (length of every per-entry array). */
  count: number;
  /** u, v [wavelengths] at the entry's channel frequency. */
  uLambda: Float64Array;
  vLambda: Float64Array;
  /** w [wavelengths]; single precision is ample for the w-term check (fields are arcseconds). */
  wLambda: Float32Array;
  /**
   * Real and imaginary parts [Jy], internal sign convention. Single precision, as UVFITS
   * stores them (BITPIX −32): a 24-bit mantissa (relative rounding 6e-8) is far below the
   * thermal noise of any one visibility, and it halves the largest columns of the table.
   * Values read from here are doubles, so sums and products over them run in double precision.
   */
  reJy: Float32Array;
  imJy: Float32Array;
  /** w = 1/σ² [Jy⁻²], σ per real/imaginary part. Always finite and > 0 here. */
  weight: Float64Array;
  /** Index into `channelFreqHz` (flattened IF × channel, IF slowest). */
  channel: Uint16Array;
  /** Antenna numbers as in the file (1-based for UVFITS); 0 when unknown. */
  antenna1: Uint16Array;
  antenna2: Uint16Array;
  /** Time [s] since `timeRefJd` (centre of the integration). */
  timeS: Float64Array;
  /** Correlation code of each entry (CorrelationCode; 1 after Stokes I formation). */
  correlation: Int8Array;
  /** Frequency of each channel [Hz]; `channel` indexes it. */
  channelFreqHz: Float64Array;
  /** Channel width [Hz] (of one channel; 0 when unknown). */
  channelWidthHz: number;
  /** Julian date that `timeS` counts from. */
  timeRefJd: number;
  /** Phase centre [deg] (RA, Dec), J2000, when known. */
  phaseCentreDeg?: [number, number];
  /** Pointing centre [deg] where the primary beam peaks; defaults to the phase centre. */
  pointingCentreDeg?: [number, number];
  /** Dish diameter [m] when known (from the file or the user). */
  dishDiameterM?: number;
  /** Antenna names indexed by antenna number, when the file has an antenna table. */
  antennaNames?: Map<number, string>;
  /** Free-text metadata: telescope, object name, file it came from. */
  telescope?: string;
  objectName?: string;
  /** True when the two parallel hands are circular (RR/LL), false when linear, undefined if unknown. */
  circularFeeds?: boolean;
}

/** What a reader kept and dropped, and why; printed by `inspect`. */
export interface ReadReport {
  /** File format read. */
  format: "uvfits" | "hdf5" | "csv";
  /** Entries in the file (rows × IF × channels × correlations). */
  entriesInFile: number;
  /** Entries kept. */
  kept: number;
  /** Dropped because the weight was ≤ 0 (a flag in UVFITS, including −0.0). */
  droppedFlagged: number;
  /** Dropped because the weight or data was non-finite (NaN, ±inf). */
  droppedNonFinite: number;
  /** Dropped because they are autocorrelations (antenna1 = antenna2). */
  droppedAuto: number;
  /** Human-readable notes (repaired header cards, assumptions made). */
  notes: string[];
}

/** What Stokes-I formation did (CONVENTIONS.md). */
export interface StokesReport {
  /** Pairs of parallel hands combined. */
  pairs: number;
  /** Single-hand entries kept (circular feeds: RR or LL ≈ I when V ≈ 0). */
  singleKept: number;
  /** Single-hand entries dropped (linear feeds: XX alone is I + Q). */
  singleDropped: number;
  /** Cross-hand entries (RL, LR, XY, YX, Q, U, V) not used for I. */
  crossHandsIgnored: number;
  /** Entries already Stokes I. */
  alreadyI: number;
}
