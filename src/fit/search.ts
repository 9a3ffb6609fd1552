/**
 * Stage 1 of a fit: find the maximum a posteriori without needing a good start. Differential
 * evolution over the search box (the model's init placed in the first population), then
 * Nelder–Mead polish from the best point. Fluxes are profiled (NNLS) inside every evaluation,
 * so the search explores only the nonlinear parameters.
 */
import { Rng } from "../random.js";
import { DifferentialEvolution, nelderMead, type OptimiseResult } from "./optimise.js";
import { quasiNewton } from "./quasiNewton.js";
import { SearchSpace } from "./searchSpace.js";
import type { FitProblem } from "./problem.js";
import { SerialEvaluator, type BatchEvaluator } from "./evalPool.js";

/** DE runs at least this many generations before the stall test applies. */
const MIN_GENERATIONS = 40;
/** Window of the stall test. */
const STALL_GENERATIONS = 20;
/** Distinct members of the final population polished locally; the best result wins. */
const POLISH_STARTS = 3;

export interface SearchOptions {
  seed: number;
  /** Population size (default clamp(3·dim, 24, 40)). */
  populationSize?: number;
  /** DE generations at most (default 100); it stops earlier once the best value stalls. */
  maxGenerations?: number;
  /** Wall-clock limit of the global stage [s] (default 600). */
  maxSeconds?: number;
  /** Skip the global stage and polish from the start (for --resume and quick refits). */
  skipGlobal?: boolean;
  /** Start point (full vector); default the model's init. */
  startFull?: Float64Array;
  onProgress?: (stage: "global" | "polish", evaluations: number, bestChi2: number) => void;
  shouldStop?: () => boolean;
}

export interface SearchResult {
  /** Best full vector (profiled fluxes filled in). */
  full: Float64Array;
  logPosterior: number;
  global?: OptimiseResult;
  polish: OptimiseResult;
  converged: boolean;
  reason: string;
}

/** Run the global search and the polish; returns the MAP full vector. */
export async function findMaximum(problem: FitProblem, options: SearchOptions, evaluator: BatchEvaluator = new SerialEvaluator(problem)): Promise<SearchResult> {
  const rng = new Rng(options.seed);
  const space = new SearchSpace(problem);
  const box = space.box;
  const dim = box.lower.length;
  const searchVec = new Float64Array(dim);
  let best = Infinity;
  let bestChi2 = Infinity;
  // Points outside the prior's ellipticity range are rejected here; the rest go to the
  // evaluator (several threads when available) as one batch.
  const batch = async (points: Float64Array[], out: Float64Array): Promise<void> => {
    const valid: Float64Array[] = [];
    const where: number[] = [];
    for (let i = 0; i < points.length; i++) {
      const x = new Float64Array(dim);
      if (space.toSearch(points[i], x)) {
        valid.push(x);
        where.push(i);
      } else out[i] = Infinity;
    }
    const r = await evaluator.search(valid);
    for (let k = 0; k < valid.length; k++) {
      const lp = r.logPosterior[k];
      const v = Number.isFinite(lp) ? -lp : Infinity;
      out[where[k]] = v;
      if (v < best) {
        best = v;
        bestChi2 = r.chi2[k];
      }
    }
  };
  const startSearch = problem.toSearch(options.startFull ?? problem.initialFull());
  const start = space.fromSearch(startSearch);
  for (let s = 0; s < dim; s++) start[s] = Math.min(Math.max(start[s], box.lower[s]), box.upper[s]);

  let globalResult: OptimiseResult | undefined;
  let globalPopulation: { x: Float64Array; value: number }[] = [];
  let x0 = start;
  if (!options.skipGlobal && dim > 0) {
    // DE only has to deliver the right basin; the polish finds its bottom. So it stops when the
    // population agrees to Δ(−log P) = 0.05, or when the best value has improved by less than
    // 0.5 (a 1σ step) over the last `STALL_GENERATIONS` generations.
    const history: number[] = [];
    let stalled = false;
    const de = new DifferentialEvolution(
      {
        box,
        populationSize: options.populationSize ?? Math.min(40, Math.max(24, 3 * dim)),
        maxGenerations: options.maxGenerations ?? 100,
        absTolerance: 0.05,
        relTolerance: 0,
        seeds: [start],
        onProgress: (p) => {
          history.push(p.bestValue);
          const g = history.length;
          if (g > MIN_GENERATIONS && history[g - 1 - STALL_GENERATIONS] - p.bestValue < 0.5) stalled = true;
          options.onProgress?.("global", p.nEvaluations, bestChi2);
        },
      },
      batch,
      rng,
    );
    globalResult = await de.run({
      maxSeconds: options.maxSeconds ?? 600,
      shouldStop: () => stalled || (options.shouldStop?.() ?? false),
    });
    if (stalled) globalResult = { ...globalResult, converged: true, reason: `best value stalled for ${STALL_GENERATIONS} generations` };
    globalPopulation = de.population.map((x, i) => ({ x: Float64Array.from(x), value: de.values[i] }));
    x0 = globalResult.x;
  }
  // Quasi-Newton polish (smooth surfaces) from the best few distinct members of the final
  // population (a stalled population can straddle two basins), then a simplex check from the
  // best end point: the simplex needs no gradient, so it also settles kinks.
  const starts = polishStarts(x0, globalPopulation, box);
  let qnBest: OptimiseResult | undefined;
  let qnEvaluations = 0;
  for (const s0 of starts) {
    const qn = await quasiNewton(batch, s0, {
      box,
      // BFGS's own curvature estimate is rough, so it must predict a tiny remaining decrease
      // before the true distance to the maximum is well below Δχ² = 0.1.
      fTolerance: 1e-4,
      maxEvaluations: 40 * Math.max(1, dim) * Math.max(1, dim),
      onProgress: (_it, evals) => options.onProgress?.("polish", qnEvaluations + evals, bestChi2),
      shouldStop: options.shouldStop,
    });
    qnEvaluations += qn.nEvaluations;
    if (!qnBest || qn.value < qnBest.value) qnBest = qn;
  }
  const qn = qnBest as OptimiseResult;
  const nm = await nelderMead(batch, qn.x, {
    box,
    // Δ(−log P) of 0.01 is far below the statistical resolution (0.5 for a 1σ step).
    fTolerance: 0.01,
    xTolerance: 1e-6,
    restarts: 0,
    maxEvaluations: (qn.converged ? 20 : 300) * Math.max(1, dim),
    onProgress: (p) => options.onProgress?.("polish", qnEvaluations + p.nEvaluations, bestChi2),
  }, { shouldStop: options.shouldStop });
  const polish: OptimiseResult = {
    ...nm,
    nEvaluations: qnEvaluations + nm.nEvaluations,
    converged: qn.converged || nm.converged,
    reason: `quasi-Newton from ${starts.length} start(s): ${qn.reason}; simplex: ${nm.reason}`,
  };
  const full = new Float64Array(problem.names.length);
  space.toSearch(polish.x, searchVec);
  const lp = problem.evaluateSearch(searchVec, full);
  const reason = globalResult ? `global search: ${globalResult.reason}; polish: ${polish.reason}` : `polish: ${polish.reason}`;
  return { full, logPosterior: lp, global: globalResult, polish, converged: polish.converged, reason };
}

/**
 * Start points of the polish: the global best, then the best population members close to it in
 * value that differ from every chosen start by more than 5% of the box in some coordinate.
 */
function polishStarts(best: Float64Array, population: { x: Float64Array; value: number }[], box: { lower: Float64Array; upper: Float64Array }): Float64Array[] {
  const starts = [best];
  // Only members nearly as good as the best (within Δ(−log P) = 25) are worth a polish.
  const bestValue = population.reduce((m, p) => Math.min(m, p.value), Infinity);
  const sorted = population.filter((p) => Number.isFinite(p.value) && p.value < bestValue + 25).sort((a, b) => a.value - b.value);
  for (const p of sorted) {
    if (starts.length >= POLISH_STARTS) break;
    const distinct = starts.every((s) => s.some((v, i) => Math.abs(v - p.x[i]) > 0.05 * (box.upper[i] - box.lower[i])));
    if (distinct) starts.push(p.x);
  }
  return starts;
}
