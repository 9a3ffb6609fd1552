/**
 * Nested sampling for the Bayesian evidence Z = ∫ L(θ) π(θ) dθ and weighted posterior samples.
 *
 * The prior is given as a transform from the unit cube (u ∈ [0,1)^d ↦ θ), so sampling from
 * the prior means sampling u uniformly. n_live points are kept; at iteration k the worst one
 * (lowest L) is removed with prior mass X_k = e^{−k/n} (the expected shrinkage), weight
 * w_k = X_k − X_{k+1}, and is replaced by a point drawn from the prior restricted to L > L_worst.
 *
 * Constrained draws (what is implemented here):
 * 1. Single-ellipsoid rejection: the live points' ellipsoid in the unit cube — their covariance,
 *    scaled to enclose every live point, then enlarged in volume by `enlargement` — is sampled
 *    uniformly (points outside the cube are redrawn without a likelihood call). While that
 *    ellipsoid is larger than the cube, the cube itself is sampled.
 * 2. Fallback, when rejection becomes inefficient (acceptance below `minEfficiency`, e.g. for
 *    several separated modes or curved degeneracies): slice sampling in the unit cube along
 *    random directions shaped by the same ellipsoid, started from a randomly chosen live point,
 *    `sliceSteps` moves per new point (stepping out, then shrinkage).
 * Rejection candidates are evaluated `batchSize` at a time, so a parallel likelihood can be used;
 * the first accepted candidate in draw order is kept, which keeps a run reproducible whatever the
 * batch evaluation order.
 *
 * Evidence error: sqrt(H/n_live), H the information (KL divergence of posterior from prior, nats).
 * Termination: when the largest possible remaining contribution, L_max·X_k, would change log Z
 * by less than `dlogz`; the live points are then added with weight X_k/n each.
 *
 * Reference: Skilling 2004, AIP Conf. Proc. 735, 395, and Skilling 2006, Bayesian Anal. 1, 833
 * (algorithm, X_k = e^{−k/n}, H and the error sqrt(H/n)); Mukherjee, Parkinson & Liddle 2006,
 * ApJ 638, L51 (ellipsoidal rejection with enlargement); Neal 2003, Ann. Stat. 31, 705 (slice
 * sampling, stepping out and shrinkage).
 */
import { InputError } from "../errors.js";
import { Rng, type RngState } from "../random.js";

/** Maps a unit-cube point u (length dim) to parameters θ (written into outTheta). */
export type PriorTransform = (u: Float64Array, outTheta: Float64Array) => void;

/** Log-likelihoods of a batch of parameter points; may be async. NaN is treated as −∞. */
export type LogLikeBatch = (thetas: Float64Array[], out: Float64Array) => void | Promise<void>;

export interface NestedOptions {
  dim: number;
  /** Number of live points (default 25·dim, at least 50). More → smaller evidence error ∝ 1/√n. */
  nLive?: number;
  /** Stop when the remaining evidence could change log Z by less than this (default 0.01). */
  dlogz?: number;
  /** Volume enlargement of the bounding ellipsoid (default 1.5). */
  enlargement?: number;
  /** Iterations between ellipsoid updates (default max(1, round(nLive/10))). */
  updateInterval?: number;
  /** Rejection candidates per likelihood batch (default 1; set to the number of workers). */
  batchSize?: number;
  /** Below this rejection acceptance, switch to slice sampling (default 0.05). */
  minEfficiency?: number;
  /** Slice-sampling moves per new point (default dim + 3). */
  sliceSteps?: number;
  onProgress?: (p: NestedProgress) => void;
}

export interface NestedProgress {
  iteration: number;
  nEvaluations: number;
  logZ: number;
  /** log(Z + L_max·X) − log Z: what the remaining prior volume could still add. */
  dlogzRemaining: number;
  logLMin: number;
  logLMax: number;
  /** Accepted / tried since the last ellipsoid update. */
  efficiency: number;
  mode: "cube" | "ellipsoid" | "slice";
}

export interface NestedBudget {
  maxIterations?: number;
  maxEvaluations?: number;
  maxSeconds?: number;
  shouldStop?: () => boolean;
}

export interface NestedStatus {
  converged: boolean;
  reason: string;
  iteration: number;
  nEvaluations: number;
}

export interface NestedResult {
  /** Natural-log evidence and its 1σ error sqrt(H/n_live). */
  logZ: number;
  logZError: number;
  /** Information H in nats. */
  information: number;
  nIterations: number;
  nEvaluations: number;
  /** Dead points then final live points, nSamples × dim, in parameter space θ. */
  samples: Float64Array;
  logL: Float64Array;
  /** Normalised log importance weights (log w − log Z; the weights sum to 1). */
  logWeights: Float64Array;
  converged: boolean;
}

/** JSON-able snapshot for checkpoints. */
export interface NestedState {
  kind: "nested";
  version: 1;
  dim: number;
  nLive: number;
  iteration: number;
  nEvaluations: number;
  logZ: number | null;
  information: number;
  liveU: number[];
  liveTheta: number[];
  liveLogL: (number | null)[];
  deadTheta: number[];
  deadLogL: (number | null)[];
  deadLogWeight: (number | null)[];
  ellipsoidCentre: number[];
  ellipsoidTransform: number[];
  ellipsoidLogVolume: number;
  lastUpdate: number;
  tries: number;
  accepts: number;
  useSlice: boolean;
  rng: RngState;
}

/** Nested sampler; see the module comment. */
export class NestedSampler {
  readonly dim: number;
  readonly nLive: number;
  private readonly prior: PriorTransform;
  private readonly logLike: LogLikeBatch;
  private readonly rng: Rng;
  private readonly dlogz: number;
  private readonly enlargement: number;
  private readonly updateInterval: number;
  private readonly batchSize: number;
  private readonly minEfficiency: number;
  private readonly sliceSteps: number;
  private readonly onProgress?: (p: NestedProgress) => void;

  private liveU: Float64Array;
  private liveTheta: Float64Array;
  private liveLogL: Float64Array;
  private deadTheta: number[] = [];
  private deadLogL: number[] = [];
  private deadLogWt: number[] = [];
  private iteration = 0;
  private nEvals = 0;
  private logZ = -Infinity;
  private H = 0;
  private initialised = false;

  // bounding ellipsoid: u = centre + T·z, |z| ≤ 1 (T lower triangular)
  private centre: Float64Array;
  private T: Float64Array;
  private logVol = Infinity;
  private lastUpdate = 0;
  private tries = 0;
  private accepts = 0;
  private useSlice = false;

  // scratch
  private readonly candU: Float64Array[] = [];
  private readonly candTheta: Float64Array[] = [];
  private readonly candLogL: Float64Array;
  private readonly z: Float64Array;
  private readonly oneU: Float64Array;
  private readonly oneTheta: Float64Array[];
  private readonly oneOut = new Float64Array(1);
  private readonly dir: Float64Array;
  private readonly startU: Float64Array;
  private readonly sliceTheta: Float64Array;

  constructor(options: NestedOptions, priorTransform: PriorTransform, logLike: LogLikeBatch, rng: Rng) {
    const d = options.dim;
    if (!Number.isInteger(d) || d < 1) throw new InputError(`nested sampler: dim = ${d}; must be an integer ≥ 1`);
    this.dim = d;
    this.nLive = options.nLive ?? Math.max(50, 25 * d);
    if (!Number.isInteger(this.nLive) || this.nLive < d + 2) {
      throw new InputError(`nested sampler: nLive = ${this.nLive}; need an integer ≥ dim + 2 = ${d + 2} (25·dim = ${25 * d} is a good start)`);
    }
    this.dlogz = options.dlogz ?? 0.01;
    if (!(this.dlogz > 0)) throw new InputError(`nested sampler: dlogz = ${this.dlogz}; must be > 0 (0.01 is usual)`);
    this.enlargement = options.enlargement ?? 1.5;
    if (!(this.enlargement >= 1)) throw new InputError(`nested sampler: enlargement = ${this.enlargement}; must be ≥ 1`);
    this.updateInterval = options.updateInterval ?? Math.max(1, Math.round(this.nLive / 10));
    this.batchSize = options.batchSize ?? 1;
    if (!Number.isInteger(this.batchSize) || this.batchSize < 1) throw new InputError(`nested sampler: batchSize = ${this.batchSize}; need an integer ≥ 1`);
    this.minEfficiency = options.minEfficiency ?? 0.05;
    this.sliceSteps = options.sliceSteps ?? d + 3;
    this.onProgress = options.onProgress;
    this.prior = priorTransform;
    this.logLike = logLike;
    this.rng = rng;
    this.liveU = new Float64Array(this.nLive * d);
    this.liveTheta = new Float64Array(this.nLive * d);
    this.liveLogL = new Float64Array(this.nLive);
    this.centre = new Float64Array(d);
    this.T = new Float64Array(d * d);
    for (let b = 0; b < this.batchSize; b++) {
      this.candU.push(new Float64Array(d));
      this.candTheta.push(new Float64Array(d));
    }
    this.candLogL = new Float64Array(this.batchSize);
    this.z = new Float64Array(d);
    this.oneU = new Float64Array(d);
    this.oneTheta = [new Float64Array(d)];
    this.dir = new Float64Array(d);
    this.startU = new Float64Array(d);
    this.sliceTheta = new Float64Array(d);
  }

  /** Draw the n_live initial points from the prior (one batch). */
  async initialise(): Promise<void> {
    const { nLive, dim, rng } = this;
    const thetas: Float64Array[] = [];
    for (let k = 0; k < nLive; k++) {
      const u = this.liveU.subarray(k * dim, (k + 1) * dim);
      for (let i = 0; i < dim; i++) u[i] = rng.uniform();
      const th = this.liveTheta.subarray(k * dim, (k + 1) * dim);
      this.prior(u, th);
      thetas.push(th);
    }
    await this.logLike(thetas, this.liveLogL);
    this.nEvals += nLive;
    for (let k = 0; k < nLive; k++) if (Number.isNaN(this.liveLogL[k])) this.liveLogL[k] = -Infinity;
    this.updateEllipsoid();
    this.initialised = true;
  }

  /** log(Z + L_max·X_k) − log Z. */
  dlogzRemaining(): number {
    let lmax = -Infinity;
    for (let k = 0; k < this.nLive; k++) lmax = Math.max(lmax, this.liveLogL[k]);
    const logRemain = lmax - this.iteration / this.nLive;
    if (this.logZ === -Infinity) return Infinity;
    return logAddExp(this.logZ, logRemain) - this.logZ;
  }

  /** Iterate until the termination criterion or a budget is met. */
  async run(budget: NestedBudget = {}): Promise<NestedStatus> {
    if (!this.initialised) await this.initialise();
    const t0 = Date.now();
    const it0 = this.iteration;
    const e0 = this.nEvals;
    for (;;) {
      const remaining = this.dlogzRemaining();
      if (remaining < this.dlogz) return this.status(true, `remaining evidence Δlog Z = ${remaining.toExponential(2)} < ${this.dlogz}`);
      if (budget.maxIterations !== undefined && this.iteration - it0 >= budget.maxIterations) return this.status(false, "iteration budget used");
      if (budget.maxEvaluations !== undefined && this.nEvals - e0 >= budget.maxEvaluations) return this.status(false, "evaluation budget used");
      if (budget.maxSeconds !== undefined && (Date.now() - t0) / 1000 >= budget.maxSeconds) return this.status(false, "time budget used");
      if (budget.shouldStop?.()) return this.status(false, "stopped by caller");
      await this.iterate();
      if (this.onProgress) {
        let lmin = Infinity;
        let lmax = -Infinity;
        for (let k = 0; k < this.nLive; k++) {
          lmin = Math.min(lmin, this.liveLogL[k]);
          lmax = Math.max(lmax, this.liveLogL[k]);
        }
        this.onProgress({
          iteration: this.iteration,
          nEvaluations: this.nEvals,
          logZ: this.logZ,
          dlogzRemaining: this.dlogzRemaining(),
          logLMin: lmin,
          logLMax: lmax,
          efficiency: this.tries > 0 ? this.accepts / this.tries : 1,
          mode: this.useSlice ? "slice" : this.logVol >= 0 ? "cube" : "ellipsoid",
        });
      }
    }
  }

  private status(converged: boolean, reason: string): NestedStatus {
    return { converged, reason, iteration: this.iteration, nEvaluations: this.nEvals };
  }

  /** One nested-sampling iteration: retire the worst live point, draw its replacement. */
  private async iterate(): Promise<void> {
    const { nLive, dim } = this;
    let worst = 0;
    for (let k = 1; k < nLive; k++) if (this.liveLogL[k] < this.liveLogL[worst]) worst = k;
    const lmin = this.liveLogL[worst];
    // weight X_k − X_{k+1} = e^{−k/n}(1 − e^{−1/n})
    const logWt = lmin - this.iteration / nLive + Math.log(-Math.expm1(-1 / nLive));
    this.accumulate(logWt, lmin);
    for (let i = 0; i < dim; i++) this.deadTheta.push(this.liveTheta[worst * dim + i]);
    this.deadLogL.push(lmin);
    this.deadLogWt.push(logWt);

    if (this.iteration - this.lastUpdate >= this.updateInterval) this.updateEllipsoid();
    const ok = !this.useSlice && (await this.drawRejection(lmin, worst));
    if (!ok) await this.drawSlice(lmin, worst);
    this.iteration++;
  }

  /** Skilling's running update of log Z and the information H. */
  private accumulate(logWt: number, logL: number): void {
    if (logWt === -Infinity) return;
    const zNew = logAddExp(this.logZ, logWt);
    const hTerm = Math.exp(logWt - zNew) * logL;
    const hOld = this.logZ === -Infinity ? 0 : Math.exp(this.logZ - zNew) * (this.H + this.logZ);
    this.H = hTerm + hOld - zNew;
    this.logZ = zNew;
  }

  /**
   * Rejection from the ellipsoid (or cube); writes the accepted point into slot `slot`.
   * Returns false (leaving the slot alone) when acceptance is too low: the caller then slices.
   */
  private async drawRejection(lmin: number, slot: number): Promise<boolean> {
    const { dim, batchSize } = this;
    const maxTriesHere = Math.ceil(2 / this.minEfficiency);
    let triesHere = 0;
    for (;;) {
      for (let b = 0; b < batchSize; b++) {
        this.drawInBound(this.candU[b]);
        this.prior(this.candU[b], this.candTheta[b]);
      }
      this.candLogL.fill(NaN);
      await this.logLike(this.candTheta, this.candLogL);
      this.nEvals += batchSize;
      this.tries += batchSize;
      triesHere += batchSize;
      for (let b = 0; b < batchSize; b++) {
        if (this.candLogL[b] > lmin) {
          this.accepts++;
          this.liveU.set(this.candU[b], slot * dim);
          this.liveTheta.set(this.candTheta[b], slot * dim);
          this.liveLogL[slot] = this.candLogL[b];
          return true;
        }
      }
      const eff = this.accepts / this.tries;
      if (triesHere >= maxTriesHere || (this.tries >= 4 / this.minEfficiency && eff < this.minEfficiency)) {
        this.useSlice = true;
        return false;
      }
    }
  }

  /** Uniform draw inside bound ∩ unit cube. */
  private drawInBound(u: Float64Array): void {
    const { dim, rng, z, T, centre } = this;
    if (this.logVol >= 0) {
      for (let i = 0; i < dim; i++) u[i] = rng.uniform();
      return;
    }
    for (let attempt = 0; attempt < 10000; attempt++) {
      // uniform in the unit ball: normal direction, radius U^(1/d)
      let norm = 0;
      for (let i = 0; i < dim; i++) {
        z[i] = rng.normal();
        norm += z[i] * z[i];
      }
      const r = Math.pow(rng.uniform(), 1 / dim) / Math.sqrt(norm);
      let inside = true;
      for (let i = 0; i < dim; i++) {
        let v = centre[i];
        for (let j = 0; j <= i; j++) v += T[i * dim + j] * z[j] * r;
        u[i] = v;
        if (!(v >= 0 && v < 1)) inside = false;
      }
      if (inside) return;
    }
    // the ellipsoid barely meets the cube: fall back to the cube (still a valid proposal)
    for (let i = 0; i < dim; i++) u[i] = rng.uniform();
  }

  /** Random-direction slice sampling in the unit cube from a random live point. */
  private async drawSlice(lmin: number, slot: number): Promise<void> {
    const { dim, nLive, rng, dir, T } = this;
    let start = rng.int(nLive - 1);
    if (start >= slot) start++; // any live point except the one being replaced
    const x = this.startU;
    x.set(this.liveU.subarray(start * dim, (start + 1) * dim));
    let xLogL = this.liveLogL[start];
    const xTheta = this.sliceTheta;
    xTheta.set(this.liveTheta.subarray(start * dim, (start + 1) * dim));
    for (let s = 0; s < this.sliceSteps; s++) {
      // direction: a random unit vector mapped through the ellipsoid's shape
      let norm = 0;
      for (let i = 0; i < dim; i++) {
        this.z[i] = rng.normal();
        norm += this.z[i] * this.z[i];
      }
      norm = Math.sqrt(norm);
      for (let i = 0; i < dim; i++) {
        let v = 0;
        for (let j = 0; j <= i; j++) v += T[i * dim + j] * this.z[j];
        dir[i] = v / norm;
      }
      const r0 = rng.uniform();
      let lo = -r0;
      let hi = 1 - r0;
      for (let k = 0; k < 100 && (await this.insideSlice(x, lo, lmin)); k++) lo -= 1;
      for (let k = 0; k < 100 && (await this.insideSlice(x, hi, lmin)); k++) hi += 1;
      for (let k = 0; ; k++) {
        const t = lo + rng.uniform() * (hi - lo);
        if (await this.insideSlice(x, t, lmin)) {
          for (let i = 0; i < dim; i++) x[i] += t * dir[i];
          xLogL = this.oneOut[0];
          xTheta.set(this.oneTheta[0]);
          break;
        }
        if (t < 0) lo = t;
        else hi = t;
        if (k > 1000) throw new Error("nested sampler: slice shrinkage did not terminate (likelihood discontinuous at its threshold?)");
      }
    }
    this.liveU.set(x, slot * dim);
    this.liveTheta.set(xTheta, slot * dim);
    this.liveLogL[slot] = xLogL;
  }

  /** Is x + t·dir inside the cube and above lmin? Leaves θ and log L in the one-point scratch. */
  private async insideSlice(x: Float64Array, t: number, lmin: number): Promise<boolean> {
    const { dim, dir } = this;
    const u = this.oneU;
    for (let i = 0; i < dim; i++) {
      u[i] = x[i] + t * dir[i];
      if (!(u[i] >= 0 && u[i] < 1)) return false;
    }
    this.prior(u, this.oneTheta[0]);
    this.oneOut[0] = NaN;
    await this.logLike(this.oneTheta, this.oneOut);
    this.nEvals++;
    return this.oneOut[0] > lmin;
  }

  /** Bounding ellipsoid of the live points (see the module comment). */
  private updateEllipsoid(): void {
    const { dim, nLive, liveU } = this;
    const c = this.centre;
    c.fill(0);
    for (let k = 0; k < nLive; k++) for (let i = 0; i < dim; i++) c[i] += liveU[k * dim + i];
    for (let i = 0; i < dim; i++) c[i] /= nLive;
    const cov = new Float64Array(dim * dim);
    for (let k = 0; k < nLive; k++) {
      for (let i = 0; i < dim; i++) {
        const di = liveU[k * dim + i] - c[i];
        for (let j = 0; j <= i; j++) cov[i * dim + j] += di * (liveU[k * dim + j] - c[j]);
      }
    }
    for (let i = 0; i < dim; i++) for (let j = 0; j <= i; j++) cov[i * dim + j] /= nLive;
    const L = new Float64Array(dim * dim);
    let jitter = 0;
    while (!cholesky(cov, dim, L, jitter)) {
      // degenerate live set (points on a lower-dimensional set): widen slightly
      jitter = jitter === 0 ? 1e-12 : jitter * 100;
    }
    // largest Mahalanobis radius of a live point: solve L y = u − c
    let r2max = 0;
    const y = new Float64Array(dim);
    for (let k = 0; k < nLive; k++) {
      let r2 = 0;
      for (let i = 0; i < dim; i++) {
        let v = liveU[k * dim + i] - c[i];
        for (let j = 0; j < i; j++) v -= L[i * dim + j] * y[j];
        y[i] = v / L[i * dim + i];
        r2 += y[i] * y[i];
      }
      r2max = Math.max(r2max, r2);
    }
    const scale = Math.sqrt(r2max) * Math.pow(this.enlargement, 1 / dim);
    let logDet = 0;
    for (let i = 0; i < dim; i++) {
      for (let j = 0; j <= i; j++) this.T[i * dim + j] = scale * L[i * dim + j];
      logDet += Math.log(this.T[i * dim + i]);
    }
    this.logVol = logUnitBallVolume(dim) + logDet;
    this.lastUpdate = this.iteration;
    this.tries = 0;
    this.accepts = 0;
    this.useSlice = false;
  }

  /** Evidence, its error and the weighted posterior samples (dead points plus live points). */
  result(): NestedResult {
    if (!this.initialised) throw new Error("NestedSampler.result: call run (or initialise / setState) first");
    const { dim, nLive } = this;
    let logZ = this.logZ;
    let H = this.H;
    const order = Array.from({ length: nLive }, (_, k) => k).sort((a, b) => this.liveLogL[a] - this.liveLogL[b]);
    const nDead = this.deadLogL.length;
    const n = nDead + nLive;
    const samples = new Float64Array(n * dim);
    const logL = new Float64Array(n);
    const logW = new Float64Array(n);
    samples.set(this.deadTheta);
    for (let k = 0; k < nDead; k++) {
      logL[k] = this.deadLogL[k];
      logW[k] = this.deadLogWt[k];
    }
    const logXLive = -this.iteration / nLive - Math.log(nLive);
    for (let m = 0; m < nLive; m++) {
      const k = order[m];
      const lw = this.liveLogL[k] + logXLive;
      if (lw > -Infinity) {
        const zNew = logAddExp(logZ, lw);
        H = Math.exp(lw - zNew) * this.liveLogL[k] + (logZ === -Infinity ? 0 : Math.exp(logZ - zNew) * (H + logZ)) - zNew;
        logZ = zNew;
      }
      samples.set(this.liveTheta.subarray(k * dim, (k + 1) * dim), (nDead + m) * dim);
      logL[nDead + m] = this.liveLogL[k];
      logW[nDead + m] = lw;
    }
    for (let k = 0; k < n; k++) logW[k] -= logZ;
    const Hpos = Math.max(H, 0);
    return {
      logZ,
      logZError: Math.sqrt(Hpos / nLive),
      information: Hpos,
      nIterations: this.iteration,
      nEvaluations: this.nEvals,
      samples,
      logL,
      logWeights: logW,
      converged: this.dlogzRemaining() < this.dlogz,
    };
  }

  get nEvaluations(): number {
    return this.nEvals;
  }

  get nIterations(): number {
    return this.iteration;
  }

  getState(): NestedState {
    return {
      kind: "nested",
      version: 1,
      dim: this.dim,
      nLive: this.nLive,
      iteration: this.iteration,
      nEvaluations: this.nEvals,
      logZ: finiteOrNull(this.logZ),
      information: this.H,
      liveU: Array.from(this.liveU),
      liveTheta: Array.from(this.liveTheta),
      liveLogL: Array.from(this.liveLogL, finiteOrNull),
      deadTheta: this.deadTheta.slice(),
      deadLogL: this.deadLogL.map(finiteOrNull),
      deadLogWeight: this.deadLogWt.map(finiteOrNull),
      ellipsoidCentre: Array.from(this.centre),
      ellipsoidTransform: Array.from(this.T),
      ellipsoidLogVolume: this.logVol,
      lastUpdate: this.lastUpdate,
      tries: this.tries,
      accepts: this.accepts,
      useSlice: this.useSlice,
      rng: this.rng.getState(),
    };
  }

  setState(s: NestedState): void {
    if (s.kind !== "nested" || s.version !== 1) throw new InputError(`nested sampler: checkpoint kind "${s.kind}" v${s.version} is not a nested v1 state`);
    if (s.dim !== this.dim || s.nLive !== this.nLive) {
      throw new InputError(`nested sampler: checkpoint has dim=${s.dim}, nLive=${s.nLive}; this run has ${this.dim}, ${this.nLive}; resume with the same settings`);
    }
    this.iteration = s.iteration;
    this.nEvals = s.nEvaluations;
    this.logZ = s.logZ === null ? -Infinity : s.logZ;
    this.H = s.information;
    this.liveU.set(s.liveU);
    this.liveTheta.set(s.liveTheta);
    this.liveLogL.set(s.liveLogL.map(nullToMinusInf));
    this.deadTheta = s.deadTheta.slice();
    this.deadLogL = s.deadLogL.map(nullToMinusInf);
    this.deadLogWt = s.deadLogWeight.map(nullToMinusInf);
    this.centre.set(s.ellipsoidCentre);
    this.T.set(s.ellipsoidTransform);
    this.logVol = s.ellipsoidLogVolume;
    this.lastUpdate = s.lastUpdate;
    this.tries = s.tries;
    this.accepts = s.accepts;
    this.useSlice = s.useSlice;
    this.rng.setState(s.rng);
    this.initialised = true;
  }
}

function finiteOrNull(v: number): number | null {
  return Number.isFinite(v) ? v : null;
}

function nullToMinusInf(v: number | null): number {
  return v === null ? -Infinity : v;
}

/** log(e^a + e^b) without overflow. */
export function logAddExp(a: number, b: number): number {
  if (a === -Infinity) return b;
  if (b === -Infinity) return a;
  return a > b ? a + Math.log1p(Math.exp(b - a)) : b + Math.log1p(Math.exp(a - b));
}

/** log of the volume of the unit d-ball, π^(d/2)/Γ(d/2 + 1). */
export function logUnitBallVolume(d: number): number {
  // Γ(d/2 + 1) by the recursion from Γ(1) = 1 or Γ(1/2) = √π (d is a small integer)
  let logGamma = d % 2 === 0 ? 0 : 0.5 * Math.log(Math.PI);
  for (let x = d % 2 === 0 ? 1 : 0.5; x < d / 2 + 1 - 1e-9; x += 1) logGamma += Math.log(x);
  return (d / 2) * Math.log(Math.PI) - logGamma;
}

/** Lower Cholesky factor of (a + jitter·I) (lower triangle of a used); false if not PD. */
function cholesky(a: Float64Array, n: number, l: Float64Array, jitter: number): boolean {
  l.fill(0);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j <= i; j++) {
      let s = a[i * n + j] + (i === j ? jitter : 0);
      for (let k = 0; k < j; k++) s -= l[i * n + k] * l[j * n + k];
      if (i === j) {
        if (!(s > 0)) return false;
        l[i * n + i] = Math.sqrt(s);
      } else l[i * n + j] = s / l[j * n + j];
    }
  }
  return true;
}
