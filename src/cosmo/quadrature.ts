/**
 * Adaptive Gauss–Legendre quadrature for smooth 1D integrands (distance integrals, homoeoid
 * integrals in tests). Each interval is integrated with an n-point rule and with the same rule
 * on its two halves; the interval is accepted when they agree to the tolerance, else it is split.
 * The nodes are computed here by Newton iteration on the Legendre recurrence, so no tabulated
 * constant can be mistyped.
 * Reference: Press et al., Numerical Recipes 3rd ed. (2007), §4.6 (gauleg); the adaptive
 * bisection is the standard global-error-by-halving scheme (common practice).
 */

/** Nodes and weights of an n-point Gauss–Legendre rule on [−1, 1]. */
export interface GaussRule {
  nodes: Float64Array;
  weights: Float64Array;
}

const ruleCache = new Map<number, GaussRule>();

/**
 * n-point Gauss–Legendre nodes and weights on [−1, 1], by Newton iteration on P_n.
 * Reference: Numerical Recipes 3rd ed. §4.6.1 (gauleg).
 */
export function gaussLegendre(n: number): GaussRule {
  const cached = ruleCache.get(n);
  if (cached) return cached;
  const nodes = new Float64Array(n);
  const weights = new Float64Array(n);
  const m = (n + 1) >> 1;
  for (let i = 0; i < m; i++) {
    // Tricomi's initial guess for the i-th root, then Newton to machine precision
    let z = Math.cos((Math.PI * (i + 0.75)) / (n + 0.5));
    let dp = 0;
    for (let iter = 0; iter < 100; iter++) {
      let p0 = 1;
      let p1 = 0;
      for (let j = 1; j <= n; j++) {
        const p2 = p1;
        p1 = p0;
        p0 = ((2 * j - 1) * z * p1 - (j - 1) * p2) / j;
      }
      dp = (n * (z * p0 - p1)) / (z * z - 1);
      const dz = p0 / dp;
      z -= dz;
      if (Math.abs(dz) < 1e-16) break;
    }
    // recompute the derivative at the converged root for the weight
    let p0 = 1;
    let p1 = 0;
    for (let j = 1; j <= n; j++) {
      const p2 = p1;
      p1 = p0;
      p0 = ((2 * j - 1) * z * p1 - (j - 1) * p2) / j;
    }
    dp = (n * (z * p0 - p1)) / (z * z - 1);
    nodes[i] = -z;
    nodes[n - 1 - i] = z;
    weights[i] = weights[n - 1 - i] = 2 / ((1 - z * z) * dp * dp);
  }
  const rule = { nodes, weights };
  ruleCache.set(n, rule);
  return rule;
}

function fixedRule(f: (x: number) => number, a: number, b: number, rule: GaussRule): number {
  const half = 0.5 * (b - a);
  const mid = 0.5 * (a + b);
  let s = 0;
  for (let i = 0; i < rule.nodes.length; i++) s += rule.weights[i] * f(mid + half * rule.nodes[i]);
  return s * half;
}

/**
 * ∫_a^b f(x) dx for a smooth f, to |error| ≲ max(absTol, relTol·|result|).
 * @param f integrand (called with numbers, no allocation needed)
 * @param a lower limit
 * @param b upper limit
 * @param relTol relative tolerance (default 1e-13)
 * @param absTol absolute tolerance (default 0)
 * @returns the integral
 * Reference: Numerical Recipes 3rd ed. §4.6 (Gauss–Legendre), adaptive bisection.
 */
export function integrate(
  f: (x: number) => number,
  a: number,
  b: number,
  relTol = 1e-13,
  absTol = 0,
): number {
  if (a === b) return 0;
  const rule = gaussLegendre(16);
  const whole = fixedRule(f, a, b, rule);
  const scale = Math.abs(whole);
  return adapt(f, a, b, whole, rule, relTol, absTol, scale, 0);
}

function adapt(
  f: (x: number) => number,
  a: number,
  b: number,
  whole: number,
  rule: GaussRule,
  relTol: number,
  absTol: number,
  scale: number,
  depth: number,
): number {
  const m = 0.5 * (a + b);
  const left = fixedRule(f, a, m, rule);
  const right = fixedRule(f, m, b, rule);
  const sum = left + right;
  const tol = Math.max(absTol, relTol * Math.max(scale, Math.abs(sum)));
  if (Math.abs(sum - whole) <= tol || depth >= 40) return sum;
  return (
    adapt(f, a, m, left, rule, relTol, absTol * 0.5, scale, depth + 1) +
    adapt(f, m, b, right, rule, relTol, absTol * 0.5, scale, depth + 1)
  );
}
