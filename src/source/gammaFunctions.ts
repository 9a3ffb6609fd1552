/**
 * ln Γ(x) and the regularised lower incomplete gamma function P(a, x) = γ(a, x)/Γ(a), written
 * here for the Sérsic b_n root.
 * - ln Γ: Stirling's series with Bernoulli-number coefficients up to B12, after shifting the
 *   argument above 15 with Γ(x + 1) = xΓ(x); the first omitted term is < 3e-16 there.
 *   Reference: Abramowitz & Stegun (1964) 6.1.40 (from memory).
 * - P(a, x): its power series for x < a + 1, and the continued fraction of Q = 1 − P (modified
 *   Lentz) otherwise. Reference: Press et al., Numerical Recipes 3rd ed. (2007) §6.2
 *   (gser/gcf).
 */

const HALF_LN_2PI = 0.5 * Math.log(2 * Math.PI);

/** ln Γ(x) for x > 0 (relative accuracy ~1e-15). */
export function lnGamma(x: number): number {
  if (!(x > 0)) return NaN;
  let shift = 0;
  let z = x;
  // ln Γ(x) = ln Γ(x + k) − ln(x (x+1) … (x+k−1)); accumulate the product in chunks
  let prod = 1;
  while (z < 15) {
    prod *= z;
    z += 1;
    if (prod > 1e250) {
      shift += Math.log(prod);
      prod = 1;
    }
  }
  shift += Math.log(prod);
  const iz = 1 / z;
  const iz2 = iz * iz;
  // Σ B_2k / (2k(2k−1) z^(2k−1)), k = 1..6
  const series =
    iz *
    (1 / 12 +
      iz2 * (-1 / 360 + iz2 * (1 / 1260 + iz2 * (-1 / 1680 + iz2 * (1 / 1188 + iz2 * (-691 / 360360))))));
  return (z - 0.5) * Math.log(z) - z + HALF_LN_2PI + series - shift;
}

/** Γ(x) for x > 0 (via ln Γ; overflows to Infinity above x ≈ 171). */
export function gamma(x: number): number {
  return Math.exp(lnGamma(x));
}

const EPS = 1e-16;
const TINY = 1e-300;
const MAX_ITER = 1000;

/** Regularised lower incomplete gamma P(a, x), a > 0, x ≥ 0. Reference: NR3 §6.2. */
export function regularizedGammaP(a: number, x: number): number {
  if (x <= 0) return 0;
  const lnPrefactor = -x + a * Math.log(x) - lnGamma(a);
  if (x < a + 1) {
    // series: γ(a,x) = e^−x x^a Σ x^n / (a (a+1) … (a+n))
    let ap = a;
    let del = 1 / a;
    let sum = del;
    for (let i = 0; i < MAX_ITER; i++) {
      ap += 1;
      del *= x / ap;
      sum += del;
      if (Math.abs(del) < Math.abs(sum) * EPS) break;
    }
    return sum * Math.exp(lnPrefactor);
  }
  // continued fraction for Q(a, x), modified Lentz
  let b = x + 1 - a;
  let c = 1 / TINY;
  let d = 1 / b;
  let h = d;
  for (let i = 1; i <= MAX_ITER; i++) {
    const an = -i * (i - a);
    b += 2;
    d = an * d + b;
    if (Math.abs(d) < TINY) d = TINY;
    c = b + an / c;
    if (Math.abs(c) < TINY) c = TINY;
    d = 1 / d;
    const del = d * c;
    h *= del;
    if (Math.abs(del - 1) < EPS) break;
  }
  return 1 - Math.exp(lnPrefactor) * h;
}
