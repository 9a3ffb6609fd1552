/**
 * exp, atan and atanh written in JavaScript, for the per-ray loops of ray tracing (SIE and EPL
 * deflections, Sérsic and Gaussian brightness). V8 calls out to C for Math.exp, Math.atan and
 * Math.atanh (fdlibm ports); these small functions are inlined by the optimising compiler into
 * the calling loop and cost a division or none, a table load and a short polynomial instead.
 * Only what measured clearly faster in its loop is here: JS versions of log and log1p were
 * tried and were not faster than Math.log / Math.log1p, which stay.
 * Accuracy: within 2 ulp of Math.exp over [−708, 709], of Math.atan2 everywhere and of
 * Math.atanh (tested in test/lens/fastMath.test.ts at relative 1e-15); exp arguments outside
 * that range (underflow to subnormal or 0, overflow, ±∞, NaN) are passed to Math.exp, so its
 * special values are exact.
 * Method: table-driven argument reduction (Tang 1989, ACM TOMS 15, 144, "Table-driven
 * implementation of the exponential function", from memory), with short Taylor polynomials on
 * the reduced argument, evaluated in Estrin's scheme to keep the dependency chain short.
 */

/** 1.5·2^52: adding and subtracting it rounds a double of magnitude < 2^51 to an integer. */
const ROUND_SHIFT = 6755399441055744;
// ln 2 split so that k·LN2_HI is exact for |k| < 2^21 (LN2_HI has 32 significant bits; fdlibm's split).
const LN2_HI = 6.93147180369123816490e-1;
const LN2_LO = 1.90821492927058770002e-10;

// ---- exp: x = (256·k + j)·ln2/256 + r, |r| ≤ ln2/512; exp x = 2^k · 2^(j/256) · e^r.
const EXP_BITS = 8;
const EXP_N = 1 << EXP_BITS;
const EXP_MASK = EXP_N - 1;
const EXP_INV_STEP = EXP_N / Math.LN2;
// ln2/256 split: division by a power of two is exact, and m·STEP_HI stays exact for |m| < 2^21
const EXP_STEP_HI = LN2_HI / EXP_N;
const EXP_STEP_LO = LN2_LO / EXP_N;
/** Below this the result is subnormal or 0; above, 2^k overflows the table: Math.exp there. */
const EXP_MIN_ARG = -708;
const EXP_MAX_ARG = 709;
/** 2^(j/256), j = 0..255 (Math.pow's values). */
const EXP_TABLE = new Float64Array(EXP_N);
for (let j = 0; j < EXP_N; j++) EXP_TABLE[j] = Math.pow(2, j / EXP_N);
/** 2^k for k = −1100..1100, stored at k + POW2_BIAS: exact scaling without bit manipulation. */
const POW2_BIAS = 1100;
const POW2 = new Float64Array(2 * POW2_BIAS + 1);
for (let k = -POW2_BIAS; k <= POW2_BIAS; k++) POW2[k + POW2_BIAS] = Math.pow(2, k);

/**
 * e^x, within 2 ulp of Math.exp (identical outside [−708, 709], where it calls Math.exp).
 * @param x argument (dimensionless)
 * Reference: Tang (1989) table-driven exp (from memory).
 */
export function fastExp(x: number): number {
  if (!(x >= EXP_MIN_ARG && x <= EXP_MAX_ARG)) return Math.exp(x);
  const m = x * EXP_INV_STEP + ROUND_SHIFT - ROUND_SHIFT; // nearest integer to x·256/ln2
  const r = x - m * EXP_STEP_HI - m * EXP_STEP_LO; // |r| ≤ ln2/512 ≈ 1.35e-3
  const mi = m | 0;
  // e^r − 1 to r⁵: the next term r⁶/720 < 1e-20 relative
  const r2 = r * r;
  const p = r + r2 * (0.5 + r * (1 / 6)) + r2 * r2 * (1 / 24 + r * (1 / 120));
  const s = EXP_TABLE[mi & EXP_MASK] * POW2[(mi >> EXP_BITS) + POW2_BIAS];
  return s + s * p;
}

// ---- atan: for 0 ≤ z ≤ 1, atan z = atan c + atan d, c = j/32 the nearest table point and
// d = (z − c)/(1 + z c), |d| ≤ 1/64; for |x| > 1, atan |x| = π/2 − atan(1/|x|).
const ATAN_N = 32;
/** atan(j/32), j = 0..32 (Math.atan's values). */
const ATAN_TABLE = new Float64Array(ATAN_N + 1);
for (let j = 0; j <= ATAN_N; j++) ATAN_TABLE[j] = Math.atan(j / ATAN_N);
// π/2 = HALF_PI_HI + HALF_PI_LO to about 1e-33
const HALF_PI_HI = 1.5707963267948966;
const HALF_PI_LO = 6.123233995736766e-17;

/**
 * atan(num/den) [rad] for den > 0, within 2 ulp of Math.atan(num/den) (NaN for NaN input; +0
 * for num = −0). Taking the ratio apart saves a division: |num|/den or den/|num|, whichever
 * is ≤ 1, is the reduced argument.
 * @param num numerator (any unit)
 * @param den denominator (same unit), > 0
 * Reference: the addition formula atan z − atan c = atan((z − c)/(1 + zc)) with a table of
 * atan c (Tang's table-driven method, from memory) and the Taylor series of atan d.
 */
export function fastAtanRatio(num: number, den: number): number {
  const an = Math.abs(num);
  const big = an > den;
  const z = (big ? den : an) / (big ? an : den); // in [0, 1]; ∞/den → 0 with big
  const jd = z * ATAN_N + ROUND_SHIFT - ROUND_SHIFT;
  const c = jd / ATAN_N;
  const d = (z - c) / (1 + z * c); // z − c exact (Sterbenz) for c > 0; d = z for c = 0
  // atan d to d⁹: the next term d¹¹/11 is < 1e-19 relative to d
  const d2 = d * d;
  const d4 = d2 * d2;
  const p = d + d * d2 * (-1 / 3 + d2 * 0.2) + d * d4 * d2 * (-1 / 7 + d2 * (1 / 9));
  const a = ATAN_TABLE[jd | 0] + p;
  const r = big ? HALF_PI_HI - a + HALF_PI_LO : a;
  return num < 0 ? -r : r;
}

// ---- atanh: for 0 ≤ z ≤ 0.9, atanh z = atanh c + atanh d, c = j/128 the nearest table point and
// d = (z − c)/(1 − z c), |d| ≤ (1/256)/(1 − 0.9²) < 0.021; above 0.9, log1p (where the table
// would need more terms as z → 1).
const ATANH_N = 128;
const ATANH_Z_MAX = 0.9;
/** atanh(j/128), j = 0..116 (Math.atanh's values; 116 = round(128·0.9) + 1 for safety). */
const ATANH_TABLE = new Float64Array(117);
for (let j = 0; j < ATANH_TABLE.length; j++) ATANH_TABLE[j] = Math.atanh(j / ATANH_N);

/**
 * atanh(num/den) for den > 0, within 2 ulp of Math.atanh(num/den): ±∞ at |num| = den, NaN for
 * |num| > den or NaN input. One division for |num/den| ≤ 0.9 and no call into C.
 * @param num numerator (any unit)
 * @param den denominator (same unit), > 0
 * Reference: the addition formula atanh z − atanh c = atanh((z − c)/(1 − zc)) with a table of
 * atanh c and the Taylor series of atanh d (analytic); atanh z = ½ log1p(2z/(1 − z)) beyond.
 */
export function fastAtanhRatio(num: number, den: number): number {
  const an = Math.abs(num);
  const z = an / den;
  let a: number;
  if (z <= ATANH_Z_MAX) {
    const jd = z * ATANH_N + ROUND_SHIFT - ROUND_SHIFT;
    const c = jd / ATANH_N;
    const d = (z - c) / (1 - z * c); // z − c exact (Sterbenz) for c > 0; d = z for c = 0
    // atanh d to d⁹: the next term d¹¹/11 is < 2e-18 relative to d
    const d2 = d * d;
    const d4 = d2 * d2;
    const p = d + d * d2 * (1 / 3 + d2 * 0.2) + d * d4 * d2 * (1 / 7 + d2 * (1 / 9));
    a = ATANH_TABLE[jd | 0] + p;
  } else {
    // exact to rounding near z = 1 too: 2|num|/(den − |num|) has no cancellation (NaN passes)
    a = 0.5 * Math.log1p((2 * an) / (den - an));
  }
  return num < 0 ? -a : a;
}
