/**
 * Stage 1 of a fit: find the maximum a posteriori without needing a good start. Differential
 * evolution over the search box (the model's init placed in the first population), then
 * Nelder–Mead polish from the best point. Fluxes are profiled (NNLS) inside every evaluation,
 * so the search explores only the nonlinear parameters.
 */
import { Rng } from "../random.js";
import { DifferentialEvolution, nelderMead, type OptimiseResult } from "./optimise.js";
import type { FitProblem } from "./problem.js";

export interface SearchOptions {
  seed: number;
  /** Population size (default clamp(8·dim, 24, 64)). */
  populationSize?: number;
  /** DE generations at most (default 120). */
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
export async function findMaximum(problem: FitProblem, options: SearchOptions): Promise<SearchResult> {
  const rng = new Rng(options.seed);
  const box = problem.searchBox();
  const dim = box.lower.length;
  const scratch = new Float64Array(problem.names.length);
  const chi2 = new Float64Array(problem.nDatasets);
  let best = Infinity;
  let bestChi2 = Infinity;
  const objective = (x: Float64Array): number => {
    const lp = problem.evaluateSearch(x, scratch, chi2);
    const v = Number.isFinite(lp) ? -lp : Number.MAX_VALUE;
    if (v < best) {
      best = v;
      bestChi2 = chi2.reduce((a, b) => a + b, 0);
    }
    return v;
  };
  const batch = (points: Float64Array[], out: Float64Array): void => {
    for (let i = 0; i < points.length; i++) out[i] = objective(points[i]);
  };
  const start = problem.toSearch(options.startFull ?? problem.initialFull());
  for (let s = 0; s < dim; s++) start[s] = Math.min(Math.max(start[s], box.lower[s]), box.upper[s]);

  let globalResult: OptimiseResult | undefined;
  let x0 = start;
  if (!options.skipGlobal && dim > 0) {
    const de = new DifferentialEvolution(
      {
        box,
        populationSize: options.populationSize ?? Math.min(64, Math.max(24, 8 * dim)),
        maxGenerations: options.maxGenerations ?? 120,
        // Converged when the population agrees to Δ(−log P) of 0.05: well below the 0.5 that
        // a 1σ change makes, so the polish starts inside the right basin.
        absTolerance: 0.05,
        relTolerance: 0,
        seeds: [start],
        onProgress: (p) => options.onProgress?.("global", p.nEvaluations, bestChi2),
      },
      batch,
      rng,
    );
    globalResult = await de.run({ maxSeconds: options.maxSeconds ?? 600, shouldStop: options.shouldStop });
    x0 = globalResult.x;
  }
  const polish = await nelderMead(batch, x0, {
    box,
    // Δ(−log P) of 1e-4 is far below the statistical resolution (0.5 per σ²).
    fTolerance: 1e-4,
    xTolerance: 1e-7,
    restarts: 2,
    maxEvaluations: 400 * Math.max(1, dim),
    onProgress: (p) => options.onProgress?.("polish", p.nEvaluations, bestChi2),
  }, { shouldStop: options.shouldStop });
  const full = new Float64Array(problem.names.length);
  const lp = problem.evaluateSearch(polish.x, full);
  const reason = globalResult ? `global search: ${globalResult.reason}; polish: ${polish.reason}` : `polish: ${polish.reason}`;
  return { full, logPosterior: lp, global: globalResult, polish, converged: polish.converged, reason };
}
