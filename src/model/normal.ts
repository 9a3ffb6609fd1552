/**
 * The standard normal distribution to double precision: the complementary error function,
 * the CDF Φ and its inverse Φ⁻¹. Priors (model/priors.ts) use them for normalised densities
 * of truncated normals and for the inverse-CDF prior transform of nested sampling.
 *
 * erfc: for |x| < 1 the everywhere-positive series
 *   erf(x) = (2/√π) e^{−x²} Σ_{n≥0} 2ⁿ x^{2n+1} / (1·3·5···(2n+1))
 * (Abramowitz & Stegun 1964, eq. 7.1.6), and for x ≥ 1 the continued fraction
 *   erfc(x) = (e^{−x²}/√π) · 1/(x + (1/2)/(x + 1/(x + (3/2)/(x + 2/(x + ...)))))
 * (A&S eq. 7.1.14) evaluated by the modified Lentz method (Press et al., Numerical Recipes,
 * 3rd ed. 2007, §5.2). Both keep the relative error near 1e-15 (tested against tabulated values).
 *
 * Φ⁻¹: Acklam's rational approximation (P. J. Acklam 2003, "An algorithm for computing the
 * inverse normal cumulative distribution function", relative error 1.15e-9, from memory) followed
 * by one Halley step on Φ(x) − p, which brings it to full double precision.
 */

const SQRT_PI = Math.sqrt(Math.PI);
const SQRT2 = Math.SQRT2;
const SQRT_2PI = Math.sqrt(2 * Math.PI);

/**
 * Complementary error function erfc(x) = 1 − erf(x), relative error ~1e-15.
 * Reference: Abramowitz & Stegun (1964) eqs. 7.1.6 and 7.1.14.
 */
export function erfc(x: number): number {
  if (Number.isNaN(x)) return NaN;
  if (x < 0) return 2 - erfc(-x);
  if (x < 1) return 1 - erfSeries(x);
  if (x > 27.3) return 0; // erfc(27.3) < 1e-325: below the smallest double
  return (Math.exp(-x * x) / SQRT_PI) / erfcContinuedFraction(x);
}

/** erf(x) for 0 ≤ x < 1 by the series of positive terms (no cancellation). */
function erfSeries(x: number): number {
  const x2 = 2 * x * x;
  let term = x;
  let sum = x;
  // Terms fall at least by a factor 2x²/(2n+3) ≤ 2/3 here; 60 terms reach 1e-17 with room.
  for (let n = 0; n < 200; n++) {
    term *= x2 / (2 * n + 3);
    sum += term;
    if (term < 1e-17 * sum) break;
  }
  return (2 / SQRT_PI) * Math.exp(-x * x) * sum;
}

/** The continued fraction K(x) = x + (1/2)/(x + 1/(x + ...)) for x ≥ 1 (modified Lentz). */
function erfcContinuedFraction(x: number): number {
  const tiny = 1e-300;
  let f = x;
  let c = x;
  let d = 0;
  // At x = 1 convergence to 1e-16 takes about 190 terms; fewer for larger x.
  for (let n = 1; n < 2000; n++) {
    const a = n / 2;
    d = x + a * d;
    if (d === 0) d = tiny;
    c = x + a / c;
    if (c === 0) c = tiny;
    d = 1 / d;
    const delta = c * d;
    f *= delta;
    if (Math.abs(delta - 1) < 1e-16) break;
  }
  return f;
}

/**
 * Standard normal cumulative distribution Φ(z) = ½ erfc(−z/√2). Accurate in relative terms in
 * the lower tail (down to about z = −38); use `normalCdf(−z)` for an accurate upper tail.
 * Reference: Abramowitz & Stegun (1964) eq. 26.2.29.
 */
export function normalCdf(z: number): number {
  return 0.5 * erfc(-z / SQRT2);
}

/** Standard normal density φ(z) = exp(−z²/2)/√(2π). */
export function normalPdf(z: number): number {
  return Math.exp(-0.5 * z * z) / SQRT_2PI;
}

// Acklam's coefficients (from memory; the Halley step below corrects any residual error).
const A = [-3.969683028665376e1, 2.209460984245205e2, -2.759285104469687e2, 1.38357751867269e2, -3.066479806614716e1, 2.506628277459239];
const B = [-5.447609879822406e1, 1.615858368580409e2, -1.556989798598866e2, 6.680131188771972e1, -1.328068155288572e1];
const C = [-7.784894002430293e-3, -3.223964580411365e-1, -2.400758277161838, -2.549732539343734, 4.374664141464968, 2.938163982698783];
const D = [7.784695709041462e-3, 3.224671290700398e-1, 2.445134137142996, 3.754408661907416];
const P_LOW = 0.02425;

/**
 * Inverse of the standard normal CDF: the z with Φ(z) = p. Returns −∞ at p = 0, +∞ at p = 1,
 * NaN outside [0, 1]. Full double precision (relative ~1e-15) over the whole range.
 * Reference: Acklam (2003) rational approximation, refined by one Halley step.
 */
export function normalQuantile(p: number): number {
  if (!(p >= 0 && p <= 1)) return NaN;
  if (p === 0) return -Infinity;
  if (p === 1) return Infinity;
  // 1 − p is exact for p ≥ 0.5 (Sterbenz), so the upper half is solved as a lower tail,
  // where Φ is accurate in relative terms.
  if (p > 0.5) return -lowerQuantile(1 - p);
  return lowerQuantile(p);
}

/** Φ⁻¹(p) for 0 < p ≤ 0.5. */
function lowerQuantile(p: number): number {
  let x: number;
  if (p < P_LOW) {
    const q = Math.sqrt(-2 * Math.log(p));
    x = (((((C[0] * q + C[1]) * q + C[2]) * q + C[3]) * q + C[4]) * q + C[5]) /
      ((((D[0] * q + D[1]) * q + D[2]) * q + D[3]) * q + 1);
  } else {
    const q = p - 0.5;
    const r = q * q;
    x = ((((((A[0] * r + A[1]) * r + A[2]) * r + A[3]) * r + A[4]) * r + A[5]) * q) /
      (((((B[0] * r + B[1]) * r + B[2]) * r + B[3]) * r + B[4]) * r + 1);
  }
  // One Halley step on f(x) = Φ(x) − p: x ← x − u/(1 + x·u/2), u = f/φ(x).
  const pdf = normalPdf(x);
  if (pdf > 0) {
    const u = (normalCdf(x) - p) / pdf;
    const next = x - u / (1 + 0.5 * x * u);
    if (Number.isFinite(next)) x = next;
  }
  return x;
}
