/**
 * Integrated autocorrelation time of MCMC chains, and a convergence check built on it.
 *
 * τ = 1 + 2 Σ_{t≥1} ρ(t) (so an uncorrelated chain has τ = 1 and N/τ independent samples).
 * ρ(t) is the normalised autocorrelation of each walker's series, computed by FFT with zero
 * padding to ≥ 2N (no circular wrap), and averaged over walkers before summing. The sum is cut
 * at the automated window: the smallest M with M ≥ c·τ̂(M), c = 5, which keeps the variance of
 * the estimate bounded while the bias from the neglected tail stays small when τ ≪ N.
 *
 * Reference: Sokal 1997, NATO ASI Series B 361, 131 (integrated time, automated windowing);
 * Foreman-Mackey et al. 2013, PASP 125, 306 (walker-averaged autocorrelation).
 */
import FFT from "fft.js";
import { InputError } from "../errors.js";

/** Options of the τ estimate. */
export interface AutocorrOptions {
  /** Window constant c: the sum stops at the smallest M ≥ c·τ̂(M) (default 5). */
  windowFactor?: number;
  /** Leading steps to drop as burn-in (default 0). */
  discard?: number;
  /** The estimate is flagged reliable only if the chain is longer than this many τ (default 50). */
  minLengthFactor?: number;
}

/** τ estimate per parameter. */
export interface AutocorrResult {
  /** Integrated autocorrelation time per parameter, in steps. */
  tau: Float64Array;
  /** Window M used per parameter, in steps. */
  window: Int32Array;
  /** Steps used (after discard). */
  nSteps: number;
  /**
   * False when the chain is not longer than minLengthFactor·τ for some parameter (or a
   * parameter never moved): τ̂ is then biased low and only a lower bound on τ.
   */
  reliable: boolean;
}

/** Reusable FFT workspace for series of one length; avoids reallocating per walker. */
export class AutocorrPlan {
  readonly n: number;
  readonly nfft: number;
  private readonly fft: FFT;
  private readonly input: Float64Array;
  private readonly spec: number[];
  private readonly back: number[];
  private readonly cplx: number[];

  constructor(n: number) {
    if (!Number.isInteger(n) || n < 2) throw new InputError(`autocorrelation: series length ${n}; need at least 2 steps`);
    this.n = n;
    let m = 4; // fft.js needs a power of two ≥ 4
    while (m < 2 * n) m *= 2; // zero padding to ≥ 2n removes the circular wrap-around
    this.nfft = m;
    this.fft = new FFT(m);
    this.input = new Float64Array(m);
    this.spec = this.fft.createComplexArray();
    this.back = this.fft.createComplexArray();
    this.cplx = this.fft.createComplexArray();
  }

  /**
   * As `accumulate`, for two series at once: one complex FFT of a + i·b gives both spectra
   * (A_k = (Z_k + Z*_{N−k})/2, B_k = (Z_k − Z*_{N−k})/2i), and one inverse FFT of
   * |A|² + i|B|² gives both autocovariances (each real, so they separate into Re and Im).
   * About twice as fast as two real transforms. Returns how many series contributed.
   */
  accumulatePair(x: Float64Array, offsetA: number, offsetB: number, stride: number, acc: Float64Array): number {
    const { n, nfft, cplx, spec, back } = this;
    let ma = 0;
    let mb = 0;
    for (let t = 0; t < n; t++) {
      ma += x[offsetA + t * stride];
      mb += x[offsetB + t * stride];
    }
    ma /= n;
    mb /= n;
    for (let t = 0; t < n; t++) {
      cplx[2 * t] = x[offsetA + t * stride] - ma;
      cplx[2 * t + 1] = x[offsetB + t * stride] - mb;
    }
    cplx.fill(0, 2 * n);
    this.fft.transform(spec, cplx);
    for (let k = 0; k < nfft; k++) {
      const j = k === 0 ? 0 : nfft - k;
      const zr = spec[2 * k];
      const zi = spec[2 * k + 1];
      const cr = spec[2 * j]; // conj(Z_{N−k}) = (cr, −ci)
      const ci = -spec[2 * j + 1];
      const ar = zr + cr;
      const ai = zi + ci;
      const br = zr - cr;
      const bi = zi - ci;
      cplx[2 * k] = 0.25 * (ar * ar + ai * ai);
      cplx[2 * k + 1] = 0.25 * (br * br + bi * bi);
    }
    this.fft.inverseTransform(back, cplx);
    const ca = back[0];
    const cb = back[1];
    let used = 0;
    if (ca > 0) {
      for (let t = 0; t < n; t++) acc[t] += back[2 * t] / ca;
      used++;
    }
    if (cb > 0) {
      for (let t = 0; t < n; t++) acc[t] += back[2 * t + 1] / cb;
      used++;
    }
    return used;
  }

  /**
   * Add the normalised autocorrelation ρ(t), t = 0..n−1, of `x[offset + t·stride]` to `acc`.
   * A constant series contributes nothing (ρ undefined); returns false in that case.
   */
  accumulate(x: Float64Array, offset: number, stride: number, acc: Float64Array): boolean {
    const { n, nfft, input, spec, back } = this;
    let mean = 0;
    for (let t = 0; t < n; t++) mean += x[offset + t * stride];
    mean /= n;
    for (let t = 0; t < n; t++) input[t] = x[offset + t * stride] - mean;
    input.fill(0, n);
    this.fft.realTransform(spec, input);
    this.fft.completeSpectrum(spec);
    for (let k = 0; k < nfft; k++) {
      const re = spec[2 * k];
      const im = spec[2 * k + 1];
      spec[2 * k] = re * re + im * im;
      spec[2 * k + 1] = 0;
    }
    this.fft.inverseTransform(back, spec);
    const c0 = back[0];
    if (!(c0 > 0)) return false;
    for (let t = 0; t < n; t++) acc[t] += back[2 * t] / c0;
    return true;
  }
}

/**
 * Integrated autocorrelation time per parameter of an ensemble chain.
 * @param chain steps × walkers × dim, row-major (as `EnsembleSampler.chain`)
 * @returns τ in steps per parameter, with the window used
 * Reference: Sokal 1997 (windowing, c = 5); Foreman-Mackey et al. 2013 (walker averaging).
 */
export function integratedTime(
  chain: Float64Array,
  nSteps: number,
  nWalkers: number,
  dim: number,
  options: AutocorrOptions = {},
): AutocorrResult {
  const c = options.windowFactor ?? 5;
  const lengthFactor = options.minLengthFactor ?? 50;
  const discard = options.discard ?? 0;
  if (chain.length !== nSteps * nWalkers * dim) {
    throw new InputError(`autocorrelation: chain has ${chain.length} numbers; expected steps·walkers·dim = ${nSteps * nWalkers * dim}`);
  }
  if (!(c > 0)) throw new InputError(`autocorrelation: windowFactor = ${c}; must be > 0 (5 is standard)`);
  const n = nSteps - discard;
  if (!Number.isInteger(discard) || discard < 0 || n < 2) {
    throw new InputError(`autocorrelation: discard = ${discard} leaves ${n} of ${nSteps} steps; need at least 2`);
  }
  const plan = new AutocorrPlan(n);
  const acc = new Float64Array(n);
  const tau = new Float64Array(dim);
  const window = new Int32Array(dim);
  let reliable = true;
  const stride = nWalkers * dim;
  for (let p = 0; p < dim; p++) {
    acc.fill(0);
    let used = 0;
    const base = discard * stride + p;
    let w = 0;
    for (; w + 1 < nWalkers; w += 2) used += plan.accumulatePair(chain, base + w * dim, base + (w + 1) * dim, stride, acc);
    if (w < nWalkers && plan.accumulate(chain, base + w * dim, stride, acc)) used++;
    if (used === 0) {
      // Every walker constant: no information; report τ = NaN rather than a fake number.
      tau[p] = NaN;
      window[p] = 0;
      reliable = false;
      continue;
    }
    const r = windowedSum(acc, used, c);
    tau[p] = r.tau;
    window[p] = r.window;
    if (!(n > lengthFactor * r.tau)) reliable = false;
  }
  return { tau, window, nSteps: n, reliable };
}

/** τ of a single series (one walker, one parameter). */
export function integratedTime1d(x: Float64Array, options: AutocorrOptions = {}): { tau: number; window: number; reliable: boolean } {
  const r = integratedTime(x, x.length, 1, 1, options);
  return { tau: r.tau[0], window: r.window[0], reliable: r.reliable };
}

/**
 * τ̂(M) = 2 Σ_{t=0}^{M} ρ(t) − 1 (= 1 + 2 Σ_{t=1}^{M} ρ(t)); return it at the smallest
 * M ≥ c·τ̂(M). Such an M always exists: with the mean subtracted, the full two-sided sum of
 * the autocovariance is (Σ(x − x̄))² = 0, so τ̂(n − 1) = 0; a window found near the end of a
 * short chain is what the length check then flags.
 */
function windowedSum(accRho: Float64Array, nSeries: number, c: number): { tau: number; window: number } {
  let cum = 0;
  for (let m = 0; m < accRho.length; m++) {
    cum += accRho[m] / nSeries;
    const tauM = 2 * cum - 1;
    if (m >= c * tauM) return { tau: tauM, window: m };
  }
  return { tau: 2 * cum - 1, window: accRho.length - 1 };
}

/** Outcome of the convergence check. */
export interface ConvergenceCheck {
  converged: boolean;
  /** Human-readable reason (which condition failed, with numbers). */
  reason: string;
  /** Largest τ over parameters, in steps. */
  maxTau: number;
  /** Largest relative change of τ since the previous estimate (Infinity without one). */
  maxRelChange: number;
}

/**
 * Chain convergence by the autocorrelation time: converged when the chain (after burn-in) is
 * longer than `lengthFactor`·τ for every parameter and every τ changed by less than
 * `relTolerance` (relative) since the previous estimate.
 * @param nSteps steps the τ estimate used
 * @param tau current τ per parameter, in steps
 * @param previousTau the τ estimate from an earlier check (or undefined for the first)
 * Reference: Sokal 1997 (a chain needs many τ); lengthFactor 50 and relTolerance 0.01 are
 * common practice, no single source.
 */
export function checkConvergence(
  nSteps: number,
  tau: Float64Array,
  previousTau?: Float64Array,
  options: { lengthFactor?: number; relTolerance?: number } = {},
): ConvergenceCheck {
  const factor = options.lengthFactor ?? 50;
  const relTol = options.relTolerance ?? 0.01;
  let maxTau = 0;
  let maxRel = previousTau ? 0 : Infinity;
  for (let p = 0; p < tau.length; p++) {
    if (!Number.isFinite(tau[p])) {
      return { converged: false, reason: `τ of parameter ${p} is undefined (constant chain)`, maxTau: NaN, maxRelChange: Infinity };
    }
    maxTau = Math.max(maxTau, tau[p]);
    if (previousTau) maxRel = Math.max(maxRel, Math.abs(tau[p] - previousTau[p]) / tau[p]);
  }
  if (nSteps <= factor * maxTau) {
    return { converged: false, reason: `chain of ${nSteps} steps is not longer than ${factor}·τ = ${(factor * maxTau).toFixed(0)}`, maxTau, maxRelChange: maxRel };
  }
  if (!(maxRel < relTol)) {
    return {
      converged: false,
      reason: previousTau ? `τ changed by ${(100 * maxRel).toFixed(2)}% since the last check (need < ${100 * relTol}%)` : "no previous τ estimate to check stability",
      maxTau,
      maxRelChange: maxRel,
    };
  }
  return { converged: true, reason: `chain is ${(nSteps / maxTau).toFixed(0)}·τ long and τ is stable to ${(100 * maxRel).toFixed(2)}%`, maxTau, maxRelChange: maxRel };
}
