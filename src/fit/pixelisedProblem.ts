/**
 * The fit problem with a pixelised source (issue 6): the source is solved linearly for every
 * lens (semi-linear inversion, Warren & Dye 2003) and marginalised, so the search explores only
 * the lens parameters (and λ when the model frees it); the objective is the Bayesian evidence
 * of the regularised source (Suyu et al. 2006) times the lens prior. With λ not given, the search
 * holds λ at its evidence maximum for a round and re-sets it at each new maximum
 * (pixelisedSearch.ts); the curvature and the samplers then hold λ at its value there, so that the
 * surface they see is smooth. While fixedLambda is NaN, each evaluation maximises over λ.
 * The evidence uses the stored weights (fix them first with --rescale-weights if the data's
 * scatter disagrees); datasets share one source, with no flux scales.
 */
import { InputError } from "../errors.js";
import { wrapToBox, type ModelSpec } from "../model/parameters.js";
import type { NumericModel, PixelisedNumbers } from "../model/types.js";
import type { FitDataset } from "./dataset.js";
import type { FitOutcome } from "./outcome.js";
import { dataLogNormalisation, InversionPlan, inversionTerms, type InversionResult } from "./inversion.js";
import type { UvLikelihood } from "./likelihood.js";
import { FitProblem } from "./problem.js";

export class PixelisedProblem extends FitProblem {
  /**
   * Curvature steps of 0.3 σ (not 0.1): the evidence is only piecewise smooth in the lens, since
   * each ray's bilinear weights change slope where it crosses a cell edge, and differences over
   * 0.1 σ pick up that roughness. In our resolved-arc simulation, 0.1 σ left the curvature of one
   * noise seed in five with a negative eigenvalue (−0.008 of the largest); 0.3 σ gave all five
   * positive definite, while a quadratic over ±0.3 σ still describes a Gaussian posterior exactly.
   */
  override readonly curvatureStepSigma = 0.3;
  readonly plan: InversionPlan;
  readonly source: PixelisedNumbers;
  /** λ held fixed after the search (NaN: optimised per evaluation or taken from the model). */
  fixedLambda = NaN;
  /** λ of the last evaluation. */
  lastLambda = NaN;

  constructor(spec: ModelSpec, like: UvLikelihood, initialModel: NumericModel, datasets: readonly FitDataset[]) {
    super(spec, like, initialModel, new Float64Array(datasets.length).fill(1), { fluxScales: false });
    const pix = initialModel.source.filter((s) => s.type === "pixelised");
    if (pix.length !== 1 || initialModel.source.length !== 1) {
      throw new InputError(`${spec.label}: a pixelised source must be the only source component (mixing it with analytic sources is not supported yet)`);
    }
    this.source = pix[0] as PixelisedNumbers;
    const grid = like.sky.grid;
    this.plan = new InversionPlan({
      terms: inversionTerms(
        datasets.map((d) => d.stats!),
        datasets.map((d) => d.beams ?? null),
      ),
      grid: { n: grid.n, cellArcsec: grid.cellArcsec, supersample: grid.supersample },
      source: { grid: this.source.grid, cells: this.source.cells, regularisation: this.source.regularisation, scaleArcsec: this.source.scale },
      dataLogNormalisation: dataLogNormalisation(datasets.map((d) => d.vis.weight)),
      mask: annulusMask(spec.label, this.source, initialModel, grid.n, grid.cellArcsec),
    });
  }

  /** True when the source has a kernel prior whose correlation length the evidence sets. */
  get scaleIsFree(): boolean {
    return this.plan.kernel !== null && this.source.scale === undefined;
  }

  /** True when the model file leaves λ to the evidence. */
  get lambdaIsFree(): boolean {
    return this.source.lambda === undefined;
  }

  /** λ for a model: the model's value, the fixed one, or undefined (optimise). */
  private lambdaFor(model: NumericModel): number | undefined {
    const src = model.source[0] as PixelisedNumbers;
    if (src.lambda !== undefined) return src.lambda;
    return Number.isFinite(this.fixedLambda) ? this.fixedLambda : undefined;
  }

  override evaluateFull(full: Float64Array, chi2Out?: Float64Array): { logPosterior: number; logLikelihood: number } {
    wrapToBox(this.spec, full.subarray(0, this.nModel));
    const lp = this.logPrior(full);
    if (!Number.isFinite(lp)) return { logPosterior: -Infinity, logLikelihood: -Infinity };
    const model = this.trySetLens(full);
    if (!model) return { logPosterior: -Infinity, logLikelihood: -Infinity };
    const lambda = this.lambdaFor(model);
    let logE: number;
    let chi2: number;
    if (lambda !== undefined) {
      const t = this.plan.evaluate(lambda);
      logE = t.logEvidence;
      chi2 = t.chi2;
      this.lastLambda = lambda;
    } else {
      const best = this.plan.optimiseLambda({ tolerance: 0.02 });
      const t = this.plan.evaluate(best.lambda);
      logE = t.logEvidence;
      chi2 = t.chi2;
      this.lastLambda = best.lambda;
    }
    if (chi2Out) {
      chi2Out.fill(0);
      chi2Out[0] = chi2;
    }
    if (!Number.isFinite(logE)) return { logPosterior: -Infinity, logLikelihood: -Infinity };
    return { logPosterior: lp + logE, logLikelihood: logE };
  }

  override evaluateSearch(search: Float64Array, outFull: Float64Array, chi2Out?: Float64Array): number {
    for (let s = 0; s < this.searchIndex.length; s++) outFull[this.searchIndex[s]] = search[s];
    return this.evaluateFull(outFull, chi2Out).logPosterior;
  }

  /**
   * Settle the source grid and the prior's hyperparameters at a lens (a full parameter vector):
   * an adaptive mesh is triangulated for this lens and its triangles held from here
   * (InversionPlan.holdMesh); a kernel prior's free correlation length is set to the evidence
   * maximum there (jointly with λ) and held; and, when the model leaves λ free, fixedLambda is
   * set to the evidence maximum. Returns λ and ℓ (NaN if the lens is not physical; ℓ NaN without
   * a kernel prior).
   */
  settleAt(full: Float64Array): { lambda: number; scaleArcsec: number } {
    const x = Float64Array.from(full);
    wrapToBox(this.spec, x.subarray(0, this.nModel));
    this.plan.releaseMesh();
    const model = this.trySetLens(x);
    this.plan.holdMesh();
    if (!model) return { lambda: NaN, scaleArcsec: NaN };
    const given = (model.source[0] as PixelisedNumbers).lambda;
    if (this.scaleIsFree) {
      const best = this.plan.optimiseKernelScale({ tolerance: 0.02, lambda: given });
      if (given === undefined) this.fixedLambda = best.lambda;
      return { lambda: best.lambda, scaleArcsec: best.scaleArcsec };
    }
    const scaleArcsec = this.plan.kernelScaleArcsec;
    if (given !== undefined) return { lambda: given, scaleArcsec };
    this.fixedLambda = this.plan.optimiseLambda({ tolerance: 0.02 }).lambda;
    return { lambda: this.fixedLambda, scaleArcsec };
  }

  /**
   * The log-evidence curves at a lens (full vector): against λ over ±3 decades of the λ in use
   * (ℓ held), and, when the evidence sets a kernel's ℓ, against ℓ (λ re-optimised at each). Leaves
   * λ and ℓ as they were.
   */
  evidenceCurves(full: Float64Array): NonNullable<FitOutcome["evidenceCurves"]> | undefined {
    const model = this.trySetLens(full);
    if (!model) return undefined;
    const lambda = this.lambdaFor(model) ?? this.plan.optimiseLambda({ tolerance: 0.02 }).lambda;
    const scale = this.plan.kernelScaleArcsec;
    const c = Math.log10(lambda);
    const lam = this.plan.optimiseLambda({ log10Min: c - 3, log10Max: c + 3, scanPoints: 25, tolerance: 0.02 });
    const out: NonNullable<FitOutcome["evidenceCurves"]> = {
      lambda: { x: lam.curve.lambda, logEvidence: lam.curve.logEvidence, best: lambda },
    };
    if (this.scaleIsFree) {
      const sc = this.plan.optimiseKernelScale({ tolerance: 0.02 });
      out.scaleArcsec = { x: sc.curve.lambda, logEvidence: sc.curve.logEvidence, best: scale };
      this.plan.setKernelScale(scale);
    }
    return out;
  }

  /** Solve the source at the current lens and λ, with its 1σ map. */
  solveSource(full: Float64Array): InversionResult {
    const model = this.trySetLens(full);
    if (!model) throw new InputError("pixelised source: the best-fit lens is not physical; check the priors");
    const lambda = this.lambdaFor(model) ?? this.plan.optimiseLambda({ tolerance: 0.02 }).lambda;
    this.lastLambda = lambda;
    return this.plan.solve(lambda, { sigma: true, evidence: true });
  }

  private trySetLens(full: Float64Array): NumericModel | null {
    let model: NumericModel;
    try {
      model = this.model(full);
      this.like.sky.setModel(model);
      this.plan.setSky(this.like.sky);
    } catch (err) {
      if (err instanceof InputError) return null;
      throw err;
    }
    return model;
  }
}

/**
 * The annular mask of a pixelised source's mask_inner/mask_outer [arcsec] about the first lens
 * component's starting position (x East, y North; model-grid pixel i at x = (N/2 − i)Δ, row j at
 * y = (j − N/2)Δ), or undefined (automatic mask) when neither is given. Why an annulus: the images
 * of a source behind a galaxy-scale lens lie near its Einstein ring, and when the beam resolves
 * the arcs the automatic mask (from the dirty image) can miss their fainter parts.
 */
export function annulusMask(label: string, source: PixelisedNumbers, model: NumericModel, n: number, cellArcsec: number): Uint8Array | undefined {
  const inner = source.mask_inner;
  const outer = source.mask_outer;
  if (inner === undefined && outer === undefined) return undefined;
  if (inner === undefined || outer === undefined || !(outer > inner)) {
    throw new InputError(`${label}: pixelised source: give both mask_inner and mask_outer [arcsec], with mask_outer > mask_inner (got ${inner}, ${outer})`);
  }
  const lens0 = model.lens[0] as { x?: number; y?: number } | undefined;
  const xc = lens0?.x ?? 0;
  const yc = lens0?.y ?? 0;
  const mask = new Uint8Array(n * n);
  let count = 0;
  for (let j = 0; j < n; j++) {
    for (let i = 0; i < n; i++) {
      const r = Math.hypot((n / 2 - i) * cellArcsec - xc, (j - n / 2) * cellArcsec - yc);
      if (r >= inner && r <= outer) {
        mask[j * n + i] = 1;
        count++;
      }
    }
  }
  if (count === 0) throw new InputError(`${label}: pixelised source: the mask annulus ${inner}–${outer}″ holds no model pixel; widen it or enlarge the field`);
  return mask;
}
