/**
 * The search of a pixelised-source fit: λ (when the model leaves it free), a kernel prior's
 * correlation length ℓ (likewise), an adaptive mesh's triangles and a regular grid's box are
 * held fixed while the lens moves, and re-set at each new maximum, until λ and ℓ settle.
 *
 * Why not optimise λ in every evaluation: that costs a 1-D search of about ten Cholesky
 * factorisations per lens instead of one, and the tolerance of that search adds noise to the
 * objective, which the quasi-Newton polish and the finite-difference curvature then chase. The
 * evidence depends on λ far more weakly than on the lens, so alternating the two converges in two
 * or three rounds to the joint maximum over (lens, λ).
 *
 * Reference: Suyu et al. 2006, MNRAS 371, 983, §5 (λ at the evidence maximum, set for the current
 * lens and refined as the lens converges; from memory).
 */
import type { BatchEvaluator } from "./evalPool.js";
import type { PixelisedProblem } from "./pixelisedProblem.js";
import { findMaximum, type SearchOptions, type SearchResult } from "./search.js";

/** log10 λ (and log10 ℓ) must move less than this between rounds to stop. */
export const LAMBDA_SETTLED_DEX = 0.05;
/** Rounds of (search, re-optimise λ) at most. */
export const MAX_LAMBDA_ROUNDS = 4;

/** A search result with the λ of each round. */
export interface PixelisedSearchResult extends SearchResult {
  /** λ used in each round; the last entry is the one held from the returned maximum on. */
  lambdaRounds: number[];
  /** ℓ [arcsec] of a kernel prior in each round (NaN entries without one). */
  scaleRounds: number[];
  /** True when λ (and ℓ) settled within LAMBDA_SETTLED_DEX before MAX_LAMBDA_ROUNDS. */
  lambdaSettled: boolean;
}

/**
 * Find the maximum of a pixelised problem. On return an adaptive mesh is triangulated for the
 * maximum and held, and, when the model leaves λ free, `problem.fixedLambda` holds the λ of the
 * maximum (for the curvature and the samplers). With λ given, one round: the search, then the
 * mesh settled at its maximum.
 * @param startFull the full parameter vector to start from (the model's init values)
 */
export async function findPixelisedMaximum(
  problem: PixelisedProblem,
  startFull: Float64Array,
  options: SearchOptions,
  evaluator: BatchEvaluator,
): Promise<PixelisedSearchResult> {
  // NaN when the start is not a physical lens: the first search then optimises λ per evaluation
  let prev = problem.settleAt(startFull);
  let found = await findMaximum(problem, options, evaluator);
  const global = found.global;
  let polishEvaluations = found.polish.nEvaluations;
  const rounds = [prev.lambda];
  const scales = [prev.scaleArcsec];
  let settled = false;
  for (let round = 1; round <= MAX_LAMBDA_ROUNDS && !options.shouldStop?.(); round++) {
    const next = problem.settleAt(found.full);
    rounds.push(next.lambda);
    scales.push(next.scaleArcsec);
    const movedScale = Number.isFinite(next.scaleArcsec) ? Math.abs(Math.log10(next.scaleArcsec / prev.scaleArcsec)) : 0;
    const moved = Math.max(Math.abs(Math.log10(next.lambda / prev.lambda)), Number.isNaN(movedScale) ? Infinity : movedScale);
    prev = next;
    if (moved < LAMBDA_SETTLED_DEX) {
      settled = true;
      break;
    }
    if (round === MAX_LAMBDA_ROUNDS) break;
    found = await findMaximum(problem, { ...options, skipGlobal: true, startFull: found.full }, evaluator);
    polishEvaluations += found.polish.nEvaluations;
  }
  const result: PixelisedSearchResult = {
    ...found,
    global,
    polish: { ...found.polish, nEvaluations: polishEvaluations },
    lambdaRounds: rounds,
    scaleRounds: scales,
    lambdaSettled: settled,
  };
  if (!settled && !options.shouldStop?.()) {
    result.converged = false;
    const scaleText = scales.some(Number.isFinite) ? `; kernel scale ${scales.map((l) => l.toPrecision(3)).join(" → ")}″` : "";
    result.reason = `${found.reason}; the regularisation λ had not settled after ${MAX_LAMBDA_ROUNDS} rounds (${rounds.map((l) => l.toPrecision(3)).join(" → ")}${scaleText})`;
  }
  return result;
}
