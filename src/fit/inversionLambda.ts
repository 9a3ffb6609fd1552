/**
 * The regularisation strength λ that maximises the Bayesian evidence: a coarse scan in log λ
 * (extended while the best point sits at an end of the range), then golden-section search on
 * the bracket around the best scan point. Every evaluation is kept, so the caller can plot the
 * curve log E(λ).
 *
 * Reference: Suyu et al. 2006, MNRAS 371, 983, §2.3 (λ by maximum evidence; from memory); Kiefer
 * 1953, Proc. Am. Math. Soc. 4, 502 (golden-section search; from memory).
 */

/** Options of the λ search (log10 of λ throughout). */
export interface LambdaSearchOptions {
  /** Initial scan range of log10 λ. */
  log10Min: number;
  log10Max: number;
  /** Points of the coarse scan (≥ 3, default 7). */
  scanPoints?: number;
  /** Stop when the bracket is narrower than this many decades (default 0.02). */
  tolerance?: number;
  /** The scan may extend beyond the range by at most this many decades on each side (default 6). */
  maxExtension?: number;
}

/** Result of the λ search. */
export interface LambdaSearchResult {
  lambda: number;
  logEvidence: number;
  /** Every evaluation, sorted by λ. */
  curve: { lambda: Float64Array; logEvidence: Float64Array };
  evaluations: number;
}

const GOLDEN = (Math.sqrt(5) - 1) / 2;

/**
 * Maximise f(log10 λ) (the log-evidence; −∞ where it cannot be evaluated).
 */
export function maximiseOverLogLambda(f: (log10Lambda: number) => number, options: LambdaSearchOptions): LambdaSearchResult {
  const nScan = Math.max(3, options.scanPoints ?? 7);
  const tol = options.tolerance ?? 0.02;
  const maxExt = options.maxExtension ?? 6;
  const xs: number[] = [];
  const fs: number[] = [];
  const evalAt = (x: number): number => {
    const v = f(x);
    xs.push(x);
    fs.push(Number.isFinite(v) ? v : -Infinity);
    return fs[fs.length - 1];
  };
  const lo0 = Math.min(options.log10Min, options.log10Max);
  const hi0 = Math.max(options.log10Min, options.log10Max);
  const step = (hi0 - lo0) / (nScan - 1);
  for (let i = 0; i < nScan; i++) evalAt(lo0 + i * step);
  // extend the scan while the best point is at an end
  let lo = lo0;
  let hi = hi0;
  for (;;) {
    const best = argmax(fs);
    const xb = xs[best];
    if (xb <= lo + 1e-12 && lo > lo0 - maxExt) {
      lo -= step;
      evalAt(lo);
    } else if (xb >= hi - 1e-12 && hi < hi0 + maxExt) {
      hi += step;
      evalAt(hi);
    } else break;
  }
  // bracket around the best point
  const best = argmax(fs);
  let a = Math.max(lo, xs[best] - step);
  let b = Math.min(hi, xs[best] + step);
  let c = b - GOLDEN * (b - a);
  let d = a + GOLDEN * (b - a);
  let fc = evalAt(c);
  let fd = evalAt(d);
  while (b - a > tol) {
    if (fc >= fd) {
      b = d;
      d = c;
      fd = fc;
      c = b - GOLDEN * (b - a);
      fc = evalAt(c);
    } else {
      a = c;
      c = d;
      fc = fd;
      d = a + GOLDEN * (b - a);
      fd = evalAt(d);
    }
  }
  const iBest = argmax(fs);
  const order = xs.map((_, i) => i).sort((i, j) => xs[i] - xs[j]);
  return {
    lambda: Math.pow(10, xs[iBest]),
    logEvidence: fs[iBest],
    curve: {
      lambda: Float64Array.from(order, (i) => Math.pow(10, xs[i])),
      logEvidence: Float64Array.from(order, (i) => fs[i]),
    },
    evaluations: xs.length,
  };
}

function argmax(v: readonly number[]): number {
  let b = 0;
  for (let i = 1; i < v.length; i++) if (v[i] > v[b]) b = i;
  return b;
}
