/**
 * One-call uses of an InversionPlan: the log-evidence of a traced sky for a search over lens
 * parameters, and a complete inversion (plan, lens, λ by evidence, solve) for one-off use.
 *
 * Reference: see inversion.ts.
 */
import { InputError } from "../errors.js";
import type { Lens } from "../lens/lens.js";
import type { RayTracePlan } from "../lens/raytrace.js";
import { InversionPlan, type InversionPlanOptions, type InversionResult } from "./inversion.js";
import type { LambdaSearchResult } from "./inversionLambda.js";
import type { LensedSky } from "./sky.js";

/** Options of pixelisedLogEvidence. */
export interface PixelisedEvidenceOptions {
  /** Fixed λ; absent: maximise the evidence over λ (warm-started from the previous call). */
  lambda?: number;
  /** Bracket tolerance of the λ search [decades] (default 0.02). */
  tolerance?: number;
}

/**
 * The log-evidence of the current lens of `sky` for a pixelised source, λ given or optimised, so
 * that a nonlinear search explores only the lens parameters. Reuses all of the plan's buffers.
 * @returns log E, the λ used, and χ² of the most probable source at that λ.
 */
export function pixelisedLogEvidence(
  sky: LensedSky,
  plan: InversionPlan,
  options: PixelisedEvidenceOptions = {},
): { logEvidence: number; lambda: number; chi2: number } {
  plan.setSky(sky);
  if (options.lambda !== undefined) {
    const t = plan.evaluate(options.lambda);
    return { logEvidence: t.logEvidence, lambda: options.lambda, chi2: t.chi2 };
  }
  const res = plan.optimiseLambda({ tolerance: options.tolerance });
  const t = plan.evaluate(res.lambda);
  return { logEvidence: t.logEvidence, lambda: res.lambda, chi2: t.chi2 };
}

/** Options of invert. */
export interface InvertOptions extends InversionPlanOptions {
  /** A traced sky (its grid must match `grid`), or rays + lens. */
  sky?: LensedSky;
  rays?: RayTracePlan;
  lens?: Lens;
  /** Fixed λ; absent: the λ of maximum evidence. */
  lambda?: number;
  /** Compute σ (default true). */
  sigma?: boolean;
}

/**
 * One-call inversion: build a plan, set the lens, choose λ (given or by evidence) and solve.
 * For repeated calls build an InversionPlan once instead.
 */
export function invert(options: InvertOptions): { plan: InversionPlan; result: InversionResult; lambdaSearch: LambdaSearchResult | null } {
  const plan = new InversionPlan(options);
  if (options.sky) plan.setSky(options.sky);
  else if (options.rays && options.lens) plan.setLens(options.rays, options.lens);
  else throw new InputError(`invert: give a traced sky, or rays and a lens`);
  let search: LambdaSearchResult | null = null;
  let lambda = options.lambda;
  if (lambda === undefined) {
    search = plan.optimiseLambda();
    lambda = search.lambda;
  }
  return { plan, result: plan.solve(lambda, { sigma: options.sigma ?? true }), lambdaSearch: search };
}
