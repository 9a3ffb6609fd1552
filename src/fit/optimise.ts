/**
 * Minimisers over a finite box with optional periodic dimensions:
 * - differential evolution (global; needs no start point; seeded; resumable state),
 * - Nelder–Mead simplex with restarts (local polish, derivative-free),
 * - Levenberg–Marquardt for least-squares residual problems (numeric Jacobian),
 * - `globalOptimise`: several independent DE runs, each polished by Nelder–Mead.
 *
 * Box handling: a non-periodic coordinate is clamped into [lower, upper]; a periodic one
 * (e.g. a position angle, period 180°) is wrapped into [lower, lower + period), and DE takes
 * differences along it the short way round, so a minimum near the seam is found from both
 * sides.
 *
 * Reference: Storn & Price 1997, J. Global Optim. 11, 341 (DE/rand/1/bin, DE/best/1/bin);
 * Nelder & Mead 1965, Comput. J. 7, 308, with the dimension-adaptive coefficients of Gao & Han
 * 2012, Comput. Optim. Appl. 51, 259; Marquardt 1963, J. SIAM 11, 431 (damping scaled by
 * diag(JᵀJ)); Press et al. 2007, Numerical Recipes §15.5.2.
 */
import { solve, Matrix } from "ml-matrix";
import { InputError } from "../errors.js";
import { Rng, type RngState } from "../random.js";

/** Batch objective: writes `out[i] = f(points[i])`; may be async (parallel evaluation). */
export type ObjectiveBatch = (points: Float64Array[], out: Float64Array) => void | Promise<void>;

/** Wrap a plain scalar function as a batch objective. */
export function scalarToBatch(f: (x: Float64Array) => number): ObjectiveBatch {
  return (points, out) => {
    for (let i = 0; i < points.length; i++) out[i] = f(points[i]);
  };
}

/** A periodic coordinate: values are wrapped into [lower, lower + period). */
export interface PeriodicDim {
  /** Index of the coordinate. */
  dim: number;
  /** Period, in the coordinate's unit (e.g. 180 for a position angle in degrees). */
  period: number;
}

/** Search box. For a periodic coordinate, upper must equal lower + period. */
export interface Box {
  lower: Float64Array;
  upper: Float64Array;
  periodic?: PeriodicDim[];
}

/** Outcome of every optimiser. */
export interface OptimiseResult {
  /** Best point found (inside the box, periodic coordinates wrapped). */
  x: Float64Array;
  /** Objective at x (for Levenberg–Marquardt: Σ r²). */
  value: number;
  /** Generations (DE) or iterations (NM, LM). */
  iterations: number;
  nEvaluations: number;
  converged: boolean;
  /** Why it stopped, in words. */
  reason: string;
}

/** Progress report shared by the optimisers. */
export interface OptimiseProgress {
  method: "differential-evolution" | "nelder-mead" | "levenberg-marquardt";
  iteration: number;
  nEvaluations: number;
  bestValue: number;
  bestPoint: Float64Array;
}

/** Budget shared by the optimisers: stop (not converged) when any is reached. */
export interface OptimiseBudget {
  maxEvaluations?: number;
  maxSeconds?: number;
  shouldStop?: () => boolean;
}

/** Box validated once: period per coordinate (0 for non-periodic). */
class BoxPlan {
  readonly dim: number;
  readonly lower: Float64Array;
  readonly upper: Float64Array;
  readonly period: Float64Array;

  constructor(box: Box, where: string) {
    const d = box.lower.length;
    if (d === 0 || box.upper.length !== d) throw new InputError(`${where}: box lower/upper have lengths ${box.lower.length}/${box.upper.length}; both must equal the dimension (≥ 1)`);
    this.dim = d;
    this.lower = box.lower;
    this.upper = box.upper;
    this.period = new Float64Array(d);
    for (let i = 0; i < d; i++) {
      if (!Number.isFinite(box.lower[i]) || !Number.isFinite(box.upper[i]) || !(box.upper[i] > box.lower[i])) {
        throw new InputError(`${where}: box coordinate ${i} is [${box.lower[i]}, ${box.upper[i]}]; need finite lower < upper`);
      }
    }
    for (const p of box.periodic ?? []) {
      if (!Number.isInteger(p.dim) || p.dim < 0 || p.dim >= d) throw new InputError(`${where}: periodic dim ${p.dim} is not a coordinate index in [0, ${d})`);
      const width = box.upper[p.dim] - box.lower[p.dim];
      if (!(p.period > 0) || Math.abs(width - p.period) > 1e-9 * p.period) {
        throw new InputError(`${where}: periodic coordinate ${p.dim} has period ${p.period} but box width ${width}; set upper = lower + period`);
      }
      this.period[p.dim] = p.period;
    }
  }

  /** Clamp or wrap x in place. */
  apply(x: Float64Array): void {
    for (let i = 0; i < this.dim; i++) {
      const P = this.period[i];
      if (P > 0) {
        let t = (x[i] - this.lower[i]) % P;
        if (t < 0) t += P;
        if (t >= P) t = 0; // rounding of a tiny negative
        x[i] = this.lower[i] + t;
      } else if (x[i] < this.lower[i]) x[i] = this.lower[i];
      else if (x[i] > this.upper[i]) x[i] = this.upper[i];
    }
  }

  /** b − a along coordinate i, the short way round for a periodic coordinate. */
  diff(i: number, b: number, a: number): number {
    const P = this.period[i];
    let d = b - a;
    if (P > 0) d -= P * Math.round(d / P);
    return d;
  }
}

function validValue(v: number): number {
  // NaN means "outside the model's domain": treat as the worst possible value
  return Number.isNaN(v) ? Infinity : v;
}

// ---------------------------------------------------------------------------------------
// Differential evolution
// ---------------------------------------------------------------------------------------

export interface DifferentialEvolutionOptions {
  box: Box;
  /** Population size (default max(20, 10·dim)); ≥ 5. */
  populationSize?: number;
  /** Mutation factor F range: a new F is drawn uniformly per generation ("dither"); default [0.5, 1]. */
  mutation?: [number, number];
  /** Crossover probability CR in [0, 1] (default 0.9). */
  crossover?: number;
  /** "rand1" (robust, default) or "best1" (faster, greedier). */
  strategy?: "rand1" | "best1";
  /** Converged when max − min of the population's values ≤ absTolerance + relTolerance·|best| (defaults 1e-6, 1e-6). */
  absTolerance?: number;
  relTolerance?: number;
  /** Generations per `run` call at most (default 1000). */
  maxGenerations?: number;
  /** Optional points placed in the initial population (e.g. the model file's start). */
  seeds?: Float64Array[];
  onProgress?: (p: OptimiseProgress) => void;
}

/** JSON-able DE state. */
export interface DifferentialEvolutionState {
  kind: "differential-evolution";
  version: 1;
  dim: number;
  populationSize: number;
  generation: number;
  nEvaluations: number;
  population: number[];
  values: (number | null)[];
  rng: RngState;
}

/**
 * Differential evolution (Storn & Price 1997) with binomial crossover and dithered F.
 * Out-of-box mutants are placed at a random point between the base vector and the violated
 * bound ("bounce-back"), which keeps the population inside without piling it on the edges.
 */
export class DifferentialEvolution {
  readonly dim: number;
  readonly populationSize: number;
  private readonly box: BoxPlan;
  private readonly f: ObjectiveBatch;
  private readonly rng: Rng;
  private readonly opts: DifferentialEvolutionOptions;
  private pop: Float64Array[] = [];
  private vals: Float64Array;
  private trials: Float64Array[] = [];
  private trialVals: Float64Array;
  private generation = 0;
  private nEvals = 0;
  private initialised = false;

  constructor(options: DifferentialEvolutionOptions, f: ObjectiveBatch, rng: Rng) {
    this.box = new BoxPlan(options.box, "differential evolution");
    this.dim = this.box.dim;
    this.populationSize = options.populationSize ?? Math.max(20, 10 * this.dim);
    if (!Number.isInteger(this.populationSize) || this.populationSize < 5) {
      throw new InputError(`differential evolution: populationSize = ${this.populationSize}; need an integer ≥ 5`);
    }
    const cr = options.crossover ?? 0.9;
    if (!(cr >= 0 && cr <= 1)) throw new InputError(`differential evolution: crossover = ${cr}; must lie in [0, 1]`);
    const [f0, f1] = options.mutation ?? [0.5, 1];
    if (!(f0 > 0 && f1 >= f0 && f1 <= 2)) throw new InputError(`differential evolution: mutation range [${f0}, ${f1}]; need 0 < min ≤ max ≤ 2`);
    this.f = f;
    this.rng = rng;
    this.opts = options;
    this.vals = new Float64Array(this.populationSize);
    this.trialVals = new Float64Array(this.populationSize);
    for (let i = 0; i < this.populationSize; i++) {
      this.pop.push(new Float64Array(this.dim));
      this.trials.push(new Float64Array(this.dim));
    }
  }

  /** Latin-hypercube initial population (plus any seeds), evaluated in one batch. */
  async initialise(): Promise<void> {
    const { dim, populationSize: np, rng, box } = this;
    for (let j = 0; j < dim; j++) {
      // a random permutation of the np strata along coordinate j
      const perm = new Int32Array(np);
      for (let i = 0; i < np; i++) perm[i] = i;
      for (let i = np - 1; i > 0; i--) {
        const k = rng.int(i + 1);
        const t = perm[i];
        perm[i] = perm[k];
        perm[k] = t;
      }
      const w = box.upper[j] - box.lower[j];
      for (let i = 0; i < np; i++) this.pop[i][j] = box.lower[j] + ((perm[i] + rng.uniform()) / np) * w;
    }
    const seeds = this.opts.seeds ?? [];
    for (let s = 0; s < Math.min(seeds.length, np); s++) {
      if (seeds[s].length !== dim) throw new InputError(`differential evolution: seed point ${s} has ${seeds[s].length} coordinates; expected ${dim}`);
      this.pop[s].set(seeds[s]);
      box.apply(this.pop[s]);
    }
    await this.f(this.pop, this.vals);
    for (let i = 0; i < np; i++) this.vals[i] = validValue(this.vals[i]);
    this.nEvals += np;
    this.generation = 0;
    this.initialised = true;
  }

  private bestIndex(): number {
    let b = 0;
    for (let i = 1; i < this.populationSize; i++) if (this.vals[i] < this.vals[b]) b = i;
    return b;
  }

  private spreadConverged(): boolean {
    let lo = Infinity;
    let hi = -Infinity;
    for (let i = 0; i < this.populationSize; i++) {
      lo = Math.min(lo, this.vals[i]);
      hi = Math.max(hi, this.vals[i]);
    }
    const atol = this.opts.absTolerance ?? 1e-6;
    const rtol = this.opts.relTolerance ?? 1e-6;
    return Number.isFinite(hi) && hi - lo <= atol + rtol * Math.abs(lo);
  }

  /** One generation: build all trial vectors, evaluate them as one batch, select. */
  private async generationStep(): Promise<void> {
    const { dim, populationSize: np, rng, box, pop } = this;
    const cr = this.opts.crossover ?? 0.9;
    const [f0, f1] = this.opts.mutation ?? [0.5, 1];
    const F = f0 + (f1 - f0) * rng.uniform();
    const best = this.opts.strategy === "best1" ? this.bestIndex() : -1;
    for (let i = 0; i < np; i++) {
      let r1: number;
      let r2: number;
      let r3: number;
      do r1 = rng.int(np);
      while (r1 === i);
      do r2 = rng.int(np);
      while (r2 === i || r2 === r1);
      do r3 = rng.int(np);
      while (r3 === i || r3 === r1 || r3 === r2);
      const base = best >= 0 ? best : r1;
      const t = this.trials[i];
      const jRand = rng.int(dim);
      for (let j = 0; j < dim; j++) {
        if (j === jRand || rng.uniform() < cr) {
          let v = pop[base][j] + F * box.diff(j, pop[r2][j], pop[r3][j]);
          if (box.period[j] === 0) {
            if (v < box.lower[j]) v = box.lower[j] + rng.uniform() * (pop[base][j] - box.lower[j]);
            else if (v > box.upper[j]) v = box.upper[j] - rng.uniform() * (box.upper[j] - pop[base][j]);
          }
          t[j] = v;
        } else t[j] = pop[i][j];
      }
      box.apply(t);
    }
    await this.f(this.trials, this.trialVals);
    this.nEvals += np;
    for (let i = 0; i < np; i++) {
      const v = validValue(this.trialVals[i]);
      // ≤ lets the population drift along flat valleys instead of stalling
      if (v <= this.vals[i]) {
        this.pop[i].set(this.trials[i]);
        this.vals[i] = v;
      }
    }
    this.generation++;
  }

  /** Run generations until the population's values agree (converged) or a limit is reached. */
  async run(budget: OptimiseBudget = {}): Promise<OptimiseResult> {
    const t0 = Date.now();
    const e0 = this.nEvals; // the initial population counts against this call's budget
    if (!this.initialised) await this.initialise();
    const maxGen = this.opts.maxGenerations ?? 1000;
    let reason = "";
    let converged = false;
    let gens = 0;
    for (;;) {
      if (this.spreadConverged()) {
        converged = true;
        reason = "population values agree within tolerance";
        break;
      }
      if (gens >= maxGen) {
        reason = `reached maxGenerations = ${maxGen}`;
        break;
      }
      if (budget.maxEvaluations !== undefined && this.nEvals - e0 + this.populationSize > budget.maxEvaluations) {
        reason = "evaluation budget used";
        break;
      }
      if (budget.maxSeconds !== undefined && (Date.now() - t0) / 1000 >= budget.maxSeconds) {
        reason = "time budget used";
        break;
      }
      if (budget.shouldStop?.()) {
        reason = "stopped by caller";
        break;
      }
      await this.generationStep();
      gens++;
      if (this.opts.onProgress) {
        const b = this.bestIndex();
        this.opts.onProgress({ method: "differential-evolution", iteration: this.generation, nEvaluations: this.nEvals, bestValue: this.vals[b], bestPoint: this.pop[b] });
      }
    }
    const b = this.bestIndex();
    return { x: this.pop[b].slice(), value: this.vals[b], iterations: this.generation, nEvaluations: this.nEvals, converged, reason };
  }

  /** Current population (populationSize arrays of dim; views). */
  /** Objective value of each population member (same order as `population`). */
  get values(): Readonly<Float64Array> {
    return this.vals;
  }

  get population(): readonly Float64Array[] {
    return this.pop;
  }

  getState(): DifferentialEvolutionState {
    const population: number[] = [];
    for (const p of this.pop) for (let j = 0; j < this.dim; j++) population.push(p[j]);
    return {
      kind: "differential-evolution",
      version: 1,
      dim: this.dim,
      populationSize: this.populationSize,
      generation: this.generation,
      nEvaluations: this.nEvals,
      population,
      values: Array.from(this.vals, (v) => (Number.isFinite(v) ? v : null)),
      rng: this.rng.getState(),
    };
  }

  setState(s: DifferentialEvolutionState): void {
    if (s.kind !== "differential-evolution" || s.dim !== this.dim || s.populationSize !== this.populationSize) {
      throw new InputError(`differential evolution: checkpoint (dim ${s.dim}, population ${s.populationSize}) does not match this run (dim ${this.dim}, population ${this.populationSize})`);
    }
    for (let i = 0; i < this.populationSize; i++) {
      for (let j = 0; j < this.dim; j++) this.pop[i][j] = s.population[i * this.dim + j];
      const v = s.values[i];
      this.vals[i] = v === null ? Infinity : v;
    }
    this.generation = s.generation;
    this.nEvals = s.nEvaluations;
    this.rng.setState(s.rng);
    this.initialised = true;
  }
}

// ---------------------------------------------------------------------------------------
// Nelder–Mead
// ---------------------------------------------------------------------------------------

export interface NelderMeadOptions {
  /** Optional box (clamping / periodic wrap of every evaluated point). */
  box?: Box;
  /** Initial simplex edge per coordinate (parameter units); default 5% of |x0| or 0.1·box width, else 0.05. */
  initialStep?: Float64Array;
  /** Converged when every vertex is within xTolerance·initialStep of the best, per coordinate (default 1e-6) … */
  xTolerance?: number;
  /** … and the values differ by ≤ fTolerance (absolute, default 1e-9). */
  fTolerance?: number;
  /** Fresh simplexes started at the best point after convergence (default 2); stops early when one brings no improvement > fTolerance. */
  restarts?: number;
  /** Evaluation limit over all restarts (default 2000·dim). */
  maxEvaluations?: number;
  onProgress?: (p: OptimiseProgress) => void;
}

/**
 * Nelder–Mead downhill simplex with Gao–Han (2012) adaptive coefficients and restarts.
 * @param x0 start point (parameter units)
 */
export async function nelderMead(f: ObjectiveBatch, x0: Float64Array, options: NelderMeadOptions = {}, budget: OptimiseBudget = {}): Promise<OptimiseResult> {
  const n = x0.length;
  if (n === 0) throw new InputError("nelder-mead: empty start point");
  const box = options.box ? new BoxPlan(options.box, "nelder-mead") : null;
  if (box && box.dim !== n) throw new InputError(`nelder-mead: box has ${box.dim} coordinates but the start point has ${n}`);
  const xTol = options.xTolerance ?? 1e-6;
  const fTol = options.fTolerance ?? 1e-9;
  const restarts = options.restarts ?? 2;
  const maxEval = Math.min(options.maxEvaluations ?? 2000 * n, budget.maxEvaluations ?? Infinity);
  const step = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    if (options.initialStep) step[i] = options.initialStep[i];
    else if (box) step[i] = 0.1 * (box.upper[i] - box.lower[i]);
    else step[i] = x0[i] !== 0 ? 0.05 * Math.abs(x0[i]) : 0.05;
    if (!(step[i] > 0)) throw new InputError(`nelder-mead: initial step ${i} is ${step[i]}; must be > 0`);
  }
  // Gao & Han 2012 coefficients (reduce to 1, 2, 0.5, 0.5 for n = 2)
  const alpha = 1;
  const beta = 1 + 2 / n;
  const gamma = 0.75 - 1 / (2 * n);
  const delta = 1 - 1 / n;

  const t0 = Date.now();
  let nEvals = 0;
  let iterations = 0;
  const one = new Float64Array(1);
  const evalOne = async (x: Float64Array): Promise<number> => {
    box?.apply(x);
    await f([x], one);
    nEvals++;
    return validValue(one[0]);
  };
  const simplex: Float64Array[] = [];
  for (let i = 0; i <= n; i++) simplex.push(new Float64Array(n));
  const fs = new Float64Array(n + 1);
  const centroid = new Float64Array(n);
  const xr = new Float64Array(n);
  const xe = new Float64Array(n);
  const xc = new Float64Array(n);
  const best = x0.slice();
  box?.apply(best);
  let bestF = await evalOne(best.slice());
  let converged = false;
  let reason = "";
  const outOfBudget = (): string => {
    if (nEvals >= maxEval) return "evaluation budget used";
    if (budget.maxSeconds !== undefined && (Date.now() - t0) / 1000 >= budget.maxSeconds) return "time budget used";
    if (budget.shouldStop?.()) return "stopped by caller";
    return "";
  };

  for (let round = 0; round <= restarts; round++) {
    const startF = bestF;
    // simplex: best point plus one step along each axis (the other way if it would leave the box)
    simplex[0].set(best);
    fs[0] = bestF;
    for (let i = 0; i < n; i++) {
      const v = simplex[i + 1];
      v.set(best);
      v[i] += step[i];
      if (box && box.period[i] === 0 && v[i] > box.upper[i]) v[i] = best[i] - step[i];
      fs[i + 1] = await evalOne(v);
    }
    let roundConverged = false;
    for (;;) {
      // order: insertion sort of (n + 1) vertices by value
      for (let i = 1; i <= n; i++) {
        const fv = fs[i];
        const xv = simplex[i];
        let k = i - 1;
        while (k >= 0 && fs[k] > fv) {
          fs[k + 1] = fs[k];
          simplex[k + 1] = simplex[k];
          k--;
        }
        fs[k + 1] = fv;
        simplex[k + 1] = xv;
      }
      let xSmall = true;
      for (let i = 1; i <= n && xSmall; i++) {
        for (let j = 0; j < n; j++) {
          const d = box ? box.diff(j, simplex[i][j], simplex[0][j]) : simplex[i][j] - simplex[0][j];
          if (Math.abs(d) > xTol * step[j]) {
            xSmall = false;
            break;
          }
        }
      }
      if (xSmall && fs[n] - fs[0] <= fTol) {
        roundConverged = true;
        break;
      }
      const why = outOfBudget();
      if (why) {
        reason = why;
        break;
      }
      iterations++;
      centroid.fill(0);
      for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) centroid[j] += simplex[i][j] / n;
      const worst = simplex[n];
      for (let j = 0; j < n; j++) xr[j] = centroid[j] + alpha * (centroid[j] - worst[j]);
      const fr = await evalOne(xr);
      if (fr < fs[0]) {
        for (let j = 0; j < n; j++) xe[j] = centroid[j] + beta * (xr[j] - centroid[j]);
        const fe = await evalOne(xe);
        if (fe < fr) {
          worst.set(xe);
          fs[n] = fe;
        } else {
          worst.set(xr);
          fs[n] = fr;
        }
      } else if (fr < fs[n - 1]) {
        worst.set(xr);
        fs[n] = fr;
      } else {
        const outside = fr < fs[n];
        for (let j = 0; j < n; j++) xc[j] = outside ? centroid[j] + gamma * (xr[j] - centroid[j]) : centroid[j] - gamma * (centroid[j] - worst[j]);
        const fc = await evalOne(xc);
        if (fc < (outside ? fr : fs[n])) {
          worst.set(xc);
          fs[n] = fc;
        } else {
          // shrink toward the best vertex; the n new vertices form one batch
          const pts: Float64Array[] = [];
          for (let i = 1; i <= n; i++) {
            for (let j = 0; j < n; j++) simplex[i][j] = simplex[0][j] + delta * (simplex[i][j] - simplex[0][j]);
            box?.apply(simplex[i]);
            pts.push(simplex[i]);
          }
          const out = new Float64Array(n);
          await f(pts, out);
          nEvals += n;
          for (let i = 1; i <= n; i++) fs[i] = validValue(out[i - 1]);
        }
      }
      if (options.onProgress) {
        let b = 0;
        for (let i = 1; i <= n; i++) if (fs[i] < fs[b]) b = i;
        options.onProgress({ method: "nelder-mead", iteration: iterations, nEvaluations: nEvals, bestValue: fs[b], bestPoint: simplex[b] });
      }
    }
    for (let i = 0; i <= n; i++) {
      if (fs[i] < bestF) {
        bestF = fs[i];
        best.set(simplex[i]);
      }
    }
    if (!roundConverged) break;
    if (startF - bestF <= fTol && round > 0) {
      converged = true;
      reason = "simplex converged and a restart brought no further improvement";
      break;
    }
    if (round === restarts) {
      converged = true;
      reason = `simplex converged (${restarts} restart${restarts === 1 ? "" : "s"} done)`;
    }
  }
  return { x: best, value: bestF, iterations, nEvaluations: nEvals, converged, reason };
}

// ---------------------------------------------------------------------------------------
// Levenberg–Marquardt
// ---------------------------------------------------------------------------------------

/** Residual callback: writes the m residuals (data − model)/σ at x into `out`. */
export type ResidualFn = (x: Float64Array, out: Float64Array) => void | Promise<void>;

export interface LevenbergMarquardtOptions {
  /** Number of residuals m. */
  nResiduals: number;
  /** Optional box: steps are projected (clamped / wrapped) into it. */
  box?: Box;
  /** Forward-difference step per parameter (parameter units); default √ε·max(|x|, typicalScale). */
  jacobianSteps?: Float64Array;
  /** Scale per parameter for the default Jacobian step (default 1). */
  typicalScale?: Float64Array;
  /** Stop when a successful step lowers Σr² by ≤ fTolerance·Σr² (default 1e-12) … */
  fTolerance?: number;
  /** … or moves x by ≤ xTolerance·(|x| + xTolerance) in every coordinate (default 1e-10) … */
  xTolerance?: number;
  /** … or the gradient ‖Jᵀr‖∞ ≤ gTolerance (default 1e-10). */
  gTolerance?: number;
  /** Maximum number of Jacobian evaluations (default 200). */
  maxIterations?: number;
  /** Initial damping λ (default 1e-3). */
  initialDamping?: number;
  onProgress?: (p: OptimiseProgress) => void;
}

export interface LevenbergMarquardtResult extends OptimiseResult {
  /** JᵀJ at the solution (dim × dim row-major): the Hessian of ½Σr², whose inverse is the covariance. */
  jtj: Float64Array;
  /** Residuals at the solution. */
  residuals: Float64Array;
}

/**
 * Levenberg–Marquardt minimisation of Σ r(x)² with a forward-difference Jacobian.
 * The m + 1 evaluations of one Jacobian are issued together (Promise.all), so an async
 * residual function can run them in parallel.
 * @param x0 start point (parameter units)
 */
export async function levenbergMarquardt(
  residual: ResidualFn,
  x0: Float64Array,
  options: LevenbergMarquardtOptions,
  budget: OptimiseBudget = {},
): Promise<LevenbergMarquardtResult> {
  const n = x0.length;
  const m = options.nResiduals;
  if (n === 0) throw new InputError("levenberg-marquardt: empty start point");
  if (!Number.isInteger(m) || m < 1) throw new InputError(`levenberg-marquardt: nResiduals = ${m}; need an integer ≥ 1`);
  const box = options.box ? new BoxPlan(options.box, "levenberg-marquardt") : null;
  if (box && box.dim !== n) throw new InputError(`levenberg-marquardt: box has ${box.dim} coordinates but the start point has ${n}`);
  const fTol = options.fTolerance ?? 1e-12;
  const xTol = options.xTolerance ?? 1e-10;
  const gTol = options.gTolerance ?? 1e-10;
  const maxIter = options.maxIterations ?? 200;
  const sqrtEps = Math.sqrt(2.220446049250313e-16);
  const t0 = Date.now();

  let nEvals = 0;
  const x = x0.slice();
  box?.apply(x);
  const r = new Float64Array(m);
  const rTry = new Float64Array(m);
  const xTry = new Float64Array(n);
  const J = new Float64Array(m * n); // row-major m × n
  const jtj = new Float64Array(n * n);
  const g = new Float64Array(n);
  const colBufs: Float64Array[] = [];
  const colPts: Float64Array[] = [];
  for (let j = 0; j < n; j++) {
    colBufs.push(new Float64Array(m));
    colPts.push(new Float64Array(n));
  }
  const evalR = async (p: Float64Array, out: Float64Array): Promise<number> => {
    await residual(p, out);
    nEvals++;
    let s = 0;
    for (let i = 0; i < m; i++) s += out[i] * out[i];
    return Number.isNaN(s) ? Infinity : s;
  };
  const hs = new Float64Array(n);
  let jacobianAt = -1; // ≥ 0 while J, JᵀJ and g belong to the current x; −1 once x has moved
  /** Forward-difference Jacobian at x (backward at an upper bound), then JᵀJ and g = Jᵀr. */
  const jacobian = async (): Promise<void> => {
    for (let j = 0; j < n; j++) {
      let h = options.jacobianSteps ? options.jacobianSteps[j] : sqrtEps * Math.max(Math.abs(x[j]), options.typicalScale ? options.typicalScale[j] : 1);
      if (box && box.period[j] === 0 && x[j] + h > box.upper[j]) h = -h;
      const p = colPts[j];
      p.set(x);
      p[j] = x[j] + h;
      hs[j] = p[j] - x[j]; // the step actually representable
    }
    await Promise.all(colPts.map((p, j) => residual(p, colBufs[j])));
    nEvals += n;
    for (let j = 0; j < n; j++) {
      const col = colBufs[j];
      for (let i = 0; i < m; i++) J[i * n + j] = (col[i] - r[i]) / hs[j];
    }
    jtj.fill(0);
    g.fill(0);
    for (let i = 0; i < m; i++) {
      const ri = r[i];
      for (let a = 0; a < n; a++) {
        const ja = J[i * n + a];
        g[a] += ja * ri;
        for (let b = a; b < n; b++) jtj[a * n + b] += ja * J[i * n + b];
      }
    }
    for (let a = 0; a < n; a++) for (let b = 0; b < a; b++) jtj[a * n + b] = jtj[b * n + a];
    jacobianAt = nEvals;
  };
  let cost = await evalR(x, r);
  if (!Number.isFinite(cost)) throw new InputError("levenberg-marquardt: residuals are not finite at the start point; start inside the model's domain");
  let lambda = options.initialDamping ?? 1e-3;
  let iterations = 0;
  let converged = false;
  let reason = "";

  outer: for (;;) {
    if (iterations >= maxIter) {
      reason = `reached maxIterations = ${maxIter}`;
      break;
    }
    if (budget.maxEvaluations !== undefined && nEvals + n + 1 > budget.maxEvaluations) {
      reason = "evaluation budget used";
      break;
    }
    if (budget.maxSeconds !== undefined && (Date.now() - t0) / 1000 >= budget.maxSeconds) {
      reason = "time budget used";
      break;
    }
    if (budget.shouldStop?.()) {
      reason = "stopped by caller";
      break;
    }
    iterations++;
    await jacobian();
    let gInf = 0;
    for (let a = 0; a < n; a++) gInf = Math.max(gInf, Math.abs(g[a]));
    if (gInf <= gTol) {
      converged = true;
      reason = "gradient below tolerance";
      break;
    }
    let maxDiag = 0;
    for (let a = 0; a < n; a++) maxDiag = Math.max(maxDiag, jtj[a * n + a]);
    for (;;) {
      const A = new Matrix(n, n);
      const b = new Matrix(n, 1);
      for (let a = 0; a < n; a++) {
        for (let c = 0; c < n; c++) A.set(a, c, jtj[a * n + c]);
        // Marquardt's scaling by diag(JᵀJ), floored so a parameter with no leverage still gets damped
        A.set(a, a, jtj[a * n + a] + lambda * Math.max(jtj[a * n + a], 1e-12 * maxDiag, 1e-300));
        b.set(a, 0, -g[a]);
      }
      const delta = solve(A, b);
      for (let a = 0; a < n; a++) xTry[a] = x[a] + delta.get(a, 0);
      box?.apply(xTry);
      const costTry = await evalR(xTry, rTry);
      if (costTry < cost) {
        jacobianAt = -1; // x moves: the Jacobian no longer belongs to it
        let small = true;
        for (let a = 0; a < n; a++) {
          const d = box ? box.diff(a, xTry[a], x[a]) : xTry[a] - x[a];
          if (Math.abs(d) > xTol * (Math.abs(x[a]) + xTol)) small = false;
        }
        const drop = cost - costTry;
        x.set(xTry);
        r.set(rTry);
        const prev = cost;
        cost = costTry;
        lambda = Math.max(lambda / 10, 1e-15);
        options.onProgress?.({ method: "levenberg-marquardt", iteration: iterations, nEvaluations: nEvals, bestValue: cost, bestPoint: x });
        if (drop <= fTol * prev) {
          converged = true;
          reason = "relative reduction of Σr² below tolerance";
          break outer;
        }
        if (small) {
          converged = true;
          reason = "step below tolerance";
          break outer;
        }
        break;
      }
      lambda *= 10;
      if (lambda > 1e16) {
        converged = true;
        reason = "no downhill step exists at machine precision (at a minimum)";
        break outer;
      }
      if (budget.maxEvaluations !== undefined && nEvals >= budget.maxEvaluations) {
        reason = "evaluation budget used";
        break outer;
      }
    }
  }
  // report JᵀJ at the returned point (the covariance needs it there)
  if (jacobianAt < 0) await jacobian();
  return { x, value: cost, iterations, nEvaluations: nEvals, converged, reason, jtj: jtj.slice(), residuals: r.slice() };
}

// ---------------------------------------------------------------------------------------
// Multi-start global search
// ---------------------------------------------------------------------------------------

export interface GlobalOptimiseOptions extends DifferentialEvolutionOptions {
  /** Independent DE runs, each with its own seeded stream (default 1). */
  nStarts?: number;
  /** Polish each DE result with Nelder–Mead (default true). */
  polish?: boolean;
  nelderMead?: Omit<NelderMeadOptions, "box">;
}

export interface GlobalOptimiseResult extends OptimiseResult {
  /** Result of every start (after polish), in start order. */
  starts: OptimiseResult[];
}

/**
 * Several independent DE runs (streams drawn from `rng`), each polished by Nelder–Mead inside
 * the same box; returns the best. Agreement between starts is a useful check that the global
 * minimum was found.
 */
export async function globalOptimise(f: ObjectiveBatch, options: GlobalOptimiseOptions, rng: Rng, budget: OptimiseBudget = {}): Promise<GlobalOptimiseResult> {
  const nStarts = options.nStarts ?? 1;
  if (!Number.isInteger(nStarts) || nStarts < 1) throw new InputError(`global optimiser: nStarts = ${nStarts}; need an integer ≥ 1`);
  const starts: OptimiseResult[] = [];
  let totalEvals = 0;
  for (let s = 0; s < nStarts; s++) {
    const de = new DifferentialEvolution(options, f, new Rng(rng.nextUint32()));
    const remaining = budget.maxEvaluations !== undefined ? budget.maxEvaluations - totalEvals : undefined;
    let res = await de.run({ ...budget, maxEvaluations: remaining });
    totalEvals += res.nEvaluations;
    if (options.polish ?? true) {
      const rem2 = budget.maxEvaluations !== undefined ? budget.maxEvaluations - totalEvals : undefined;
      const box = new BoxPlan(options.box, "global optimiser");
      const step = new Float64Array(box.dim);
      // simplex size from the final population's spread (≥ a tiny fraction of the box)
      for (let j = 0; j < box.dim; j++) {
        let spread = 0;
        for (const p of de.population) spread = Math.max(spread, Math.abs(box.diff(j, p[j], res.x[j])));
        step[j] = Math.max(spread, 1e-6 * (box.upper[j] - box.lower[j]));
      }
      const nm = await nelderMead(f, res.x, { initialStep: step, ...options.nelderMead, box: options.box }, { ...budget, maxEvaluations: rem2 });
      totalEvals += nm.nEvaluations;
      res = {
        x: nm.value <= res.value ? nm.x : res.x,
        value: Math.min(nm.value, res.value),
        iterations: res.iterations + nm.iterations,
        nEvaluations: res.nEvaluations + nm.nEvaluations,
        converged: nm.converged,
        reason: `DE: ${res.reason}; polish: ${nm.reason}`,
      };
    }
    starts.push(res);
    if (budget.shouldStop?.()) break;
  }
  let b = 0;
  for (let i = 1; i < starts.length; i++) if (starts[i].value < starts[b].value) b = i;
  return { ...starts[b], x: starts[b].x.slice(), nEvaluations: totalEvals, starts };
}
