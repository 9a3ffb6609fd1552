/**
 * Affine-invariant ensemble MCMC with the stretch move, updated as two half-ensembles so that
 * the log-probabilities of a whole half can be evaluated in one (possibly parallel) batch.
 *
 * Walker k of one half proposes `Y = X_j + z (X_k − X_j)`, with X_j a walker drawn uniformly
 * from the other half and z drawn from g(z) ∝ 1/√z on [1/a, a] by `z = ((a−1)U + 1)²/a`;
 * it accepts with probability `min(1, z^(d−1) p(Y)/p(X_k))`. Updating one half while the other
 * is held fixed keeps detailed balance, which is why the halves alternate.
 * The chain is stored as steps × walkers × dim (row-major, dim fastest).
 *
 * Reference: Goodman & Weare 2010, Comm. App. Math. Comp. Sci. 5(1), 65 (stretch move, §3);
 * Foreman-Mackey et al. 2013, PASP 125, 306 (the parallel half-ensemble version of the move).
 */
import { InputError } from "../errors.js";
import { Rng, type RngState } from "../random.js";

/**
 * Evaluates log-probabilities of a batch of points: writes `out[i] = log p(points[i])`
 * (−Infinity outside the support). May return a Promise so the caller can spread the batch
 * over worker threads. Must not keep references to `points` (the arrays are reused).
 */
export type LogProbBatch = (points: Float64Array[], out: Float64Array) => void | Promise<void>;

/** Progress report after each completed step. */
export interface EnsembleProgress {
  /** Steps completed since the sampler was created (including restored ones). */
  step: number;
  /** Steps requested in the current `step(n)` call, and how many of them are done. */
  target: number;
  done: number;
  /** Mean acceptance fraction over walkers so far. */
  acceptance: number;
  /** Highest log-probability seen in the chain so far, and its position. */
  bestLogProb: number;
  bestPoint: Float64Array;
}

export interface EnsembleOptions {
  /** Number of walkers; even and at least 2·dim (recommended ≥ 4·dim). */
  nWalkers: number;
  /** Dimension of the parameter space (≥ 1). */
  dim: number;
  /** Stretch scale a > 1 (default 2, as Goodman & Weare 2010). */
  stretchScale?: number;
  /** Called after each step (cheap; the caller may draw a progress bar). */
  onProgress?: (p: EnsembleProgress) => void;
}

/** Budget for one `step` call: the call stops early (after a whole step) when any is reached. */
export interface EnsembleBudget {
  /** Stop when this many log-probability evaluations have been made in this call. */
  maxEvaluations?: number;
  /** Stop when this many seconds of wall time have elapsed in this call. */
  maxSeconds?: number;
  /** Polled after every step; returning true stops the run (e.g. on SIGINT). */
  shouldStop?: () => boolean;
}

/** Plain, JSON-able snapshot of a sampler; `chain`/`logProbChain` may be left out to keep it small. */
export interface EnsembleState {
  kind: "ensemble-stretch";
  version: 1;
  nWalkers: number;
  dim: number;
  stretchScale: number;
  /** Steps completed in total. */
  nSteps: number;
  /** Index of the first step held in `chain` (nonzero when a state without chain was restored). */
  firstStoredStep: number;
  positions: number[];
  logProb: number[];
  accepted: number[];
  nEvaluations: number;
  bestLogProb: number | null;
  bestPoint: number[];
  rng: RngState;
  chain?: number[];
  logProbChain?: number[];
}

/** Ensemble sampler; see the module comment. All randomness comes from the `Rng` passed in. */
export class EnsembleSampler {
  readonly nWalkers: number;
  readonly dim: number;
  readonly stretchScale: number;
  private readonly logProbBatch: LogProbBatch;
  private readonly rng: Rng;
  private readonly onProgress?: (p: EnsembleProgress) => void;

  private positions: Float64Array; // nWalkers × dim
  private logProb: Float64Array; // nWalkers
  private accepted: Float64Array; // per-walker accepted proposals
  private initialised = false;
  private nStepsDone = 0;
  private firstStored = 0;
  private storedCapacity = 0; // in steps
  private chainBuf = new Float64Array(0);
  private logProbBuf = new Float64Array(0);
  private nEvals = 0;
  private best = -Infinity;
  private bestX: Float64Array;

  // scratch, allocated once
  private readonly proposals: Float64Array[];
  private readonly proposalLogProb: Float64Array;
  private readonly zs: Float64Array;

  constructor(options: EnsembleOptions, logProbBatch: LogProbBatch, rng: Rng) {
    const { nWalkers, dim } = options;
    const a = options.stretchScale ?? 2;
    if (!Number.isInteger(dim) || dim < 1) throw new InputError(`ensemble sampler: dim = ${dim}; must be an integer ≥ 1`);
    if (!Number.isInteger(nWalkers) || nWalkers % 2 !== 0 || nWalkers < 2 * dim) {
      throw new InputError(
        `ensemble sampler: nWalkers = ${nWalkers}; must be even and ≥ 2·dim = ${2 * dim} (try ${Math.max(4 * dim, 8) + ((Math.max(4 * dim, 8)) % 2)})`,
      );
    }
    if (!(a > 1)) throw new InputError(`ensemble sampler: stretchScale = ${a}; must be > 1 (2 is standard)`);
    this.nWalkers = nWalkers;
    this.dim = dim;
    this.stretchScale = a;
    this.logProbBatch = logProbBatch;
    this.rng = rng;
    this.onProgress = options.onProgress;
    this.positions = new Float64Array(nWalkers * dim);
    this.logProb = new Float64Array(nWalkers);
    this.accepted = new Float64Array(nWalkers);
    this.bestX = new Float64Array(dim);
    const half = nWalkers / 2;
    this.proposals = [];
    for (let i = 0; i < half; i++) this.proposals.push(new Float64Array(dim));
    this.proposalLogProb = new Float64Array(half);
    this.zs = new Float64Array(half);
  }

  /**
   * Start the walkers from explicit positions (nWalkers × dim, row-major). Every walker must
   * have a finite log-probability.
   */
  async initialise(positions: Float64Array): Promise<void> {
    const { nWalkers, dim } = this;
    if (positions.length !== nWalkers * dim) {
      throw new InputError(`ensemble sampler: initial positions have ${positions.length} numbers; expected nWalkers·dim = ${nWalkers * dim}`);
    }
    const pts: Float64Array[] = [];
    for (let k = 0; k < nWalkers; k++) pts.push(positions.slice(k * dim, (k + 1) * dim));
    const lp = new Float64Array(nWalkers);
    await this.logProbBatch(pts, lp);
    this.nEvals += nWalkers;
    for (let k = 0; k < nWalkers; k++) {
      if (!(lp[k] > -Infinity)) {
        throw new InputError(`ensemble sampler: walker ${k} starts where log-probability is ${lp[k]}; start every walker inside the support`);
      }
    }
    this.positions.set(positions);
    this.logProb.set(lp);
    for (let k = 0; k < nWalkers; k++) this.noteBest(lp[k], pts[k]);
    this.initialised = true;
  }

  /**
   * Start the walkers in a small Gaussian ball: walker k at `centre + scale ⊙ N(0, 1)`.
   * Points with log-probability −∞ (or NaN) are redrawn, up to `maxTries` rounds.
   * @param centre starting point (length dim), in parameter units
   * @param scale per-parameter ball radius (length dim), in parameter units; > 0
   */
  async initialiseBall(centre: Float64Array, scale: Float64Array, maxTries = 100): Promise<void> {
    const { nWalkers, dim, rng } = this;
    if (centre.length !== dim || scale.length !== dim) {
      throw new InputError(`ensemble sampler: ball centre/scale have lengths ${centre.length}/${scale.length}; expected dim = ${dim}`);
    }
    for (let i = 0; i < dim; i++) {
      if (!(scale[i] > 0) || !Number.isFinite(scale[i])) {
        throw new InputError(`ensemble sampler: ball scale[${i}] = ${scale[i]}; must be a finite number > 0`);
      }
    }
    const pos = new Float64Array(nWalkers * dim);
    const lp = new Float64Array(nWalkers).fill(-Infinity);
    let pending: number[] = [];
    for (let k = 0; k < nWalkers; k++) pending.push(k);
    for (let attempt = 0; attempt < maxTries && pending.length > 0; attempt++) {
      const pts: Float64Array[] = [];
      for (const k of pending) {
        const p = new Float64Array(dim);
        for (let i = 0; i < dim; i++) p[i] = centre[i] + scale[i] * rng.normal();
        pts.push(p);
      }
      const out = new Float64Array(pending.length);
      await this.logProbBatch(pts, out);
      this.nEvals += pending.length;
      const still: number[] = [];
      for (let m = 0; m < pending.length; m++) {
        const k = pending[m];
        if (out[m] > -Infinity) {
          pos.set(pts[m], k * dim);
          lp[k] = out[m];
          this.noteBest(out[m], pts[m]);
        } else still.push(k);
      }
      pending = still;
    }
    if (pending.length > 0) {
      throw new InputError(
        `ensemble sampler: ${pending.length} of ${nWalkers} walkers found no finite log-probability in ${maxTries} draws around the start point; move the start inside the prior or shrink the ball`,
      );
    }
    this.positions.set(pos);
    this.logProb.set(lp);
    this.initialised = true;
  }

  /**
   * Advance the ensemble by up to `n` steps (each step updates both halves once).
   * @returns the number of steps actually made (fewer than n if the budget ran out)
   */
  async step(n: number, budget: EnsembleBudget = {}): Promise<number> {
    if (!this.initialised) throw new Error("EnsembleSampler.step: call initialise or initialiseBall first");
    if (!Number.isInteger(n) || n < 0) throw new InputError(`ensemble sampler: steps = ${n}; must be an integer ≥ 0`);
    this.ensureCapacity(this.nStepsDone - this.firstStored + n);
    const t0 = Date.now();
    const evals0 = this.nEvals;
    let done = 0;
    while (done < n) {
      if (budget.shouldStop?.()) break;
      if (budget.maxSeconds !== undefined && (Date.now() - t0) / 1000 >= budget.maxSeconds) break;
      if (budget.maxEvaluations !== undefined && this.nEvals - evals0 + this.nWalkers > budget.maxEvaluations) break;
      await this.updateHalf(0);
      await this.updateHalf(1);
      this.record();
      done++;
      if (this.onProgress) {
        this.onProgress({
          step: this.nStepsDone,
          target: n,
          done,
          acceptance: this.meanAcceptance(),
          bestLogProb: this.best,
          bestPoint: this.bestX,
        });
      }
    }
    return done;
  }

  /** Update walkers of half `h` (0: first nWalkers/2, 1: the rest) against the other half. */
  private async updateHalf(h: number): Promise<void> {
    const { dim, rng, positions, proposals, zs } = this;
    const half = this.nWalkers / 2;
    const a = this.stretchScale;
    const own = h * half;
    const other = (1 - h) * half;
    // Draw all randomness for the proposals first, in a fixed order, so a run is reproducible
    // however the batch is evaluated.
    for (let m = 0; m < half; m++) {
      const k = own + m;
      const j = other + rng.int(half);
      const z = drawStretch(rng, a);
      zs[m] = z;
      const y = proposals[m];
      const ok = k * dim;
      const oj = j * dim;
      for (let i = 0; i < dim; i++) y[i] = positions[oj + i] + z * (positions[ok + i] - positions[oj + i]);
    }
    const lpY = this.proposalLogProb;
    lpY.fill(NaN);
    await this.logProbBatch(proposals, lpY);
    this.nEvals += half;
    for (let m = 0; m < half; m++) {
      const k = own + m;
      const lq = lpY[m];
      const u = rng.uniform(); // always drawn, so the stream does not depend on the values
      // NaN is treated as outside the support: the proposal is rejected.
      if (!(lq > -Infinity)) continue;
      const logRatio = (dim - 1) * Math.log(zs[m]) + lq - this.logProb[k];
      if (Math.log(u) < logRatio) {
        this.positions.set(proposals[m], k * dim);
        this.logProb[k] = lq;
        this.accepted[k] += 1;
        this.noteBest(lq, proposals[m]);
      }
    }
  }

  private noteBest(lp: number, x: Float64Array): void {
    if (lp > this.best) {
      this.best = lp;
      this.bestX.set(x);
    }
  }

  private ensureCapacity(steps: number): void {
    if (steps <= this.storedCapacity) return;
    const cap = Math.max(steps, Math.ceil(this.storedCapacity * 1.5), 16);
    const stride = this.nWalkers * this.dim;
    const c = new Float64Array(cap * stride);
    c.set(this.chainBuf.subarray(0, (this.nStepsDone - this.firstStored) * stride));
    const l = new Float64Array(cap * this.nWalkers);
    l.set(this.logProbBuf.subarray(0, (this.nStepsDone - this.firstStored) * this.nWalkers));
    this.chainBuf = c;
    this.logProbBuf = l;
    this.storedCapacity = cap;
  }

  private record(): void {
    const s = this.nStepsDone - this.firstStored;
    this.ensureCapacity(s + 1);
    this.chainBuf.set(this.positions, s * this.nWalkers * this.dim);
    this.logProbBuf.set(this.logProb, s * this.nWalkers);
    this.nStepsDone++;
  }

  /** Steps completed in total (including those before a restore). */
  get nSteps(): number {
    return this.nStepsDone;
  }

  /** Number of steps held in `chain` (nSteps − firstStoredStep). */
  get nStoredSteps(): number {
    return this.nStepsDone - this.firstStored;
  }

  /** Index of the first step held in `chain`. */
  get firstStoredStep(): number {
    return this.firstStored;
  }

  /** Stored chain, nStoredSteps × nWalkers × dim (a view; copy it before stepping again). */
  get chain(): Float64Array {
    return this.chainBuf.subarray(0, this.nStoredSteps * this.nWalkers * this.dim);
  }

  /** Stored log-probabilities, nStoredSteps × nWalkers (a view). */
  get logProbChain(): Float64Array {
    return this.logProbBuf.subarray(0, this.nStoredSteps * this.nWalkers);
  }

  /** Current walker positions, nWalkers × dim (a view). */
  get currentPositions(): Float64Array {
    return this.positions;
  }

  /** Current walker log-probabilities (a view). */
  get currentLogProb(): Float64Array {
    return this.logProb;
  }

  /** Log-probability evaluations made so far (including initialisation). */
  get nEvaluations(): number {
    return this.nEvals;
  }

  /** Best log-probability seen and its position (a copy). */
  bestSample(): { logProb: number; point: Float64Array } {
    return { logProb: this.best, point: this.bestX.slice() };
  }

  /** Acceptance fraction of each walker over all steps so far. */
  acceptanceFraction(): Float64Array {
    const out = new Float64Array(this.nWalkers);
    const n = Math.max(this.nStepsDone, 1);
    for (let k = 0; k < this.nWalkers; k++) out[k] = this.accepted[k] / n;
    return out;
  }

  /** Mean acceptance fraction over walkers. */
  meanAcceptance(): number {
    let s = 0;
    for (let k = 0; k < this.nWalkers; k++) s += this.accepted[k];
    return s / (this.nWalkers * Math.max(this.nStepsDone, 1));
  }

  /**
   * Flatten stored steps ≥ `discard` (absolute step index) into samples × dim, walker order
   * within each step. Useful for posterior summaries.
   */
  flatSamples(discard = 0): Float64Array {
    const from = Math.max(discard - this.firstStored, 0);
    const stride = this.nWalkers * this.dim;
    return this.chain.slice(from * stride);
  }

  /**
   * JSON-able snapshot. With `includeChain = false` the stored chain is left out (the caller
   * saves it elsewhere, e.g. HDF5); a sampler restored from such a state continues the run
   * exactly but holds only the steps made after the restore.
   */
  getState(includeChain = true): EnsembleState {
    const s: EnsembleState = {
      kind: "ensemble-stretch",
      version: 1,
      nWalkers: this.nWalkers,
      dim: this.dim,
      stretchScale: this.stretchScale,
      nSteps: this.nStepsDone,
      firstStoredStep: includeChain ? this.firstStored : this.nStepsDone,
      positions: Array.from(this.positions),
      logProb: Array.from(this.logProb, jsonNumber),
      accepted: Array.from(this.accepted),
      nEvaluations: this.nEvals,
      bestLogProb: Number.isFinite(this.best) ? this.best : null,
      bestPoint: Array.from(this.bestX),
      rng: this.rng.getState(),
    };
    if (includeChain) {
      s.chain = Array.from(this.chain);
      s.logProbChain = Array.from(this.logProbChain, jsonNumber);
    }
    return s;
  }

  /** Restore a snapshot from `getState` (the sampler's nWalkers, dim and stretch must match). */
  setState(s: EnsembleState): void {
    if (s.kind !== "ensemble-stretch" || s.version !== 1) throw new InputError(`ensemble sampler: checkpoint kind "${s.kind}" v${s.version} is not an ensemble-stretch v1 state`);
    if (s.nWalkers !== this.nWalkers || s.dim !== this.dim || s.stretchScale !== this.stretchScale) {
      throw new InputError(
        `ensemble sampler: checkpoint has nWalkers=${s.nWalkers}, dim=${s.dim}, a=${s.stretchScale}; this run has ${this.nWalkers}, ${this.dim}, ${this.stretchScale}; resume with the same settings`,
      );
    }
    const stride = this.nWalkers * this.dim;
    this.positions.set(s.positions);
    this.logProb.set(s.logProb.map(fromJsonNumber));
    this.accepted.set(s.accepted);
    this.nStepsDone = s.nSteps;
    this.nEvals = s.nEvaluations;
    this.best = s.bestLogProb === null ? -Infinity : s.bestLogProb;
    this.bestX.set(s.bestPoint);
    this.rng.setState(s.rng);
    const stored = s.chain ? s.chain.length / stride : 0;
    this.firstStored = s.chain ? s.firstStoredStep : s.nSteps;
    if (this.firstStored + stored !== s.nSteps) {
      throw new InputError(`ensemble sampler: checkpoint chain holds ${stored} steps from step ${this.firstStored} but nSteps = ${s.nSteps}; the checkpoint is inconsistent`);
    }
    this.storedCapacity = 0;
    this.chainBuf = new Float64Array(0);
    this.logProbBuf = new Float64Array(0);
    this.ensureCapacity(stored);
    if (s.chain && s.logProbChain) {
      this.chainBuf.set(s.chain);
      this.logProbBuf.set(s.logProbChain.map(fromJsonNumber));
    }
    this.initialised = true;
  }
}

/** −Infinity does not survive JSON; store it as null. */
function jsonNumber(v: number): number {
  return Number.isFinite(v) ? v : (null as unknown as number);
}

function fromJsonNumber(v: number | null): number {
  return v === null ? -Infinity : v;
}

/** Draw one stretch factor z with density ∝ 1/√z on [1/a, a] (exported for tests). */
export function drawStretch(rng: Rng, a: number): number {
  const t = (a - 1) * rng.uniform() + 1;
  return (t * t) / a;
}
