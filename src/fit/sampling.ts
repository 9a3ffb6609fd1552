/**
 * Stage 3 of a fit (optional): posterior sampling with the affine-invariant ensemble sampler
 * (Goodman & Weare 2010) run until the chain is longer than 50 integrated autocorrelation times
 * (Sokal 1997; REFERENCES.md §10) or a budget runs out, and nested sampling (Skilling 2004) for
 * the evidence. Both sample every free parameter, fluxes included, so the flux uncertainty
 * reaches the posterior. State is checkpointed atomically every few seconds so `--resume` can
 * continue after a kill, losing at most one interval.
 */
import { existsSync, readFileSync } from "node:fs";
import { InputError } from "../errors.js";
import { writeFileAtomic } from "../io/atomicWrite.js";
import { priorTransform } from "../model/parameters.js";
import { Rng } from "../random.js";
import { checkConvergence, integratedTime } from "./autocorr.js";
import { EnsembleSampler, type EnsembleState } from "./ensemble.js";
import { NestedSampler, type NestedState } from "./nested.js";
import type { ChainOutput, NestedOutput } from "./outcome.js";
import { FLUX_SCALE_RANGE, type FitProblem } from "./problem.js";
import { SerialEvaluator, type BatchEvaluator } from "./evalPool.js";

/** What a checkpoint file holds. */
export interface Checkpoint {
  kind: "arcfringe-checkpoint";
  version: 1;
  /** Identifies the run: model label, data paths and parameter names must match to resume. */
  fingerprint: string;
  map: number[];
  noiseScale: number[];
  stage: "ensemble" | "nested";
  ensemble?: EnsembleState;
  nested?: NestedState;
  /** Ensemble results when the nested stage follows. */
  ensembleDone?: boolean;
}

export interface SamplingOptions {
  seed: number;
  /** Checkpoint file path (undefined: no checkpoints). */
  checkpointPath?: string;
  checkpointSeconds?: number;
  fingerprint: string;
  /** Walkers (default: even, ≥ 32 and ≥ 4·dim, at most 128). */
  walkers?: number;
  /** Hard limits of the ensemble stage. */
  maxSteps?: number;
  maxSeconds?: number;
  /** Resume from this checkpoint's ensemble state. */
  resumeEnsemble?: EnsembleState;
  onProgress?: (step: number, target: number, bestLogPost: number, acceptance: number) => void;
  shouldStop?: () => boolean;
}

export function readCheckpoint(path: string, fingerprint: string): Checkpoint {
  if (!existsSync(path)) throw new InputError(`--resume: no checkpoint at ${path}; run the fit without --resume first`);
  let cp: Checkpoint;
  try {
    cp = JSON.parse(readFileSync(path, "utf8")) as Checkpoint;
  } catch {
    throw new InputError(`--resume: ${path} is not a readable checkpoint (corrupt JSON); delete it and rerun without --resume`);
  }
  if (cp.kind !== "arcfringe-checkpoint" || cp.version !== 1) throw new InputError(`--resume: ${path} is not an arcfringe checkpoint`);
  if (cp.fingerprint !== fingerprint) {
    throw new InputError(`--resume: the checkpoint in ${path} belongs to a different model or data set; use a new --out folder or rerun without --resume`);
  }
  return cp;
}

/** Run (or continue) the ensemble sampler; returns the chain summary. */
export async function runEnsemble(
  problem: FitProblem,
  map: Float64Array,
  sigma: Float64Array,
  options: SamplingOptions,
  evaluator: BatchEvaluator = new SerialEvaluator(problem),
): Promise<ChainOutput> {
  const dim = map.length;
  const walkers = options.walkers ?? Math.min(128, Math.max(32, 2 * Math.ceil((4 * dim) / 2)));
  const logProb = async (points: Float64Array[], out: Float64Array): Promise<void> => {
    const r = await evaluator.full(points);
    out.set(r.logPosterior);
  };
  const rng = new Rng(options.seed ^ 0x5a17);
  const sampler = new EnsembleSampler({ nWalkers: walkers, dim }, logProb, rng);
  const saveEvery = (options.checkpointSeconds ?? 5) * 1000;
  let lastSave = Date.now();
  const save = (): void => {
    if (!options.checkpointPath) return;
    const cp: Checkpoint = {
      kind: "arcfringe-checkpoint",
      version: 1,
      fingerprint: options.fingerprint,
      map: Array.from(map),
      noiseScale: Array.from(problem.noiseScale),
      stage: "ensemble",
      ensemble: sampler.getState(true),
    };
    writeFileAtomic(options.checkpointPath, JSON.stringify(cp));
    lastSave = Date.now();
  };
  if (options.resumeEnsemble) {
    sampler.setState(options.resumeEnsemble);
  } else {
    // A ball of 0.1 σ around the maximum: inside the posterior bulk, yet spread enough that
    // the stretch move adapts within a few autocorrelation times.
    const scale = Float64Array.from(sigma, (s, i) => (Number.isFinite(s) && s > 0 ? 0.1 * s : 1e-4 * Math.max(1e-3, Math.abs(map[i]))));
    await sampler.initialiseBall(map, scale);
  }
  const maxSteps = options.maxSteps ?? 20000;
  const deadline = Date.now() + (options.maxSeconds ?? 3600) * 1000;
  let tau = new Float64Array(dim).fill(NaN);
  let prevTau: Float64Array | undefined;
  let converged = false;
  const chunk = 50;
  while (sampler.nSteps < maxSteps && Date.now() < deadline && !options.shouldStop?.()) {
    const n = Math.min(chunk, maxSteps - sampler.nSteps);
    await sampler.step(n, {
      maxSeconds: Math.max(1, (deadline - Date.now()) / 1000),
      shouldStop: () => {
        if (Date.now() - lastSave > saveEvery) save();
        options.onProgress?.(sampler.nSteps, maxSteps, sampler.bestSample().logProb, sampler.meanAcceptance());
        return options.shouldStop?.() ?? false;
      },
    });
    const stored = sampler.nStoredSteps;
    if (stored >= 100) {
      const est = integratedTime(sampler.chain, stored, walkers, dim, { discard: Math.floor(stored / 4) });
      tau = Float64Array.from(est.tau);
      const check = checkConvergence(stored, tau, prevTau, { lengthFactor: 50, relTolerance: 0.05 });
      prevTau = Float64Array.from(tau);
      if (check.converged && est.reliable) {
        converged = true;
        break;
      }
    }
  }
  save();
  const nSteps = sampler.nStoredSteps;
  const maxTau = Math.max(...Array.from(tau).filter(Number.isFinite), 0);
  const burnIn = Math.min(Math.floor(nSteps / 2), Number.isFinite(maxTau) && maxTau > 0 ? Math.ceil(2 * maxTau) : Math.floor(nSteps / 4));
  const chain = Float64Array.from(sampler.chain);
  const logPost = Float64Array.from(sampler.logProbChain);
  const logLike = new Float64Array(logPost.length);
  for (let t = 0; t < logPost.length; t++) logLike[t] = logPost[t] - problem.logPrior(chain.subarray(t * dim, (t + 1) * dim));
  return {
    chain,
    logPosterior: logPost,
    logLikelihood: logLike,
    nSteps,
    nWalkers: walkers,
    dim,
    burnIn,
    tau,
    acceptanceFraction: sampler.acceptanceFraction(),
    converged,
  };
}

export interface NestedOptions {
  seed: number;
  livePoints?: number;
  maxSeconds?: number;
  checkpointPath?: string;
  fingerprint: string;
  map: Float64Array;
  resumeNested?: NestedState;
  onProgress?: (iteration: number, logZ: number, dlogz: number) => void;
  shouldStop?: () => boolean;
}

/** Nested sampling over the prior: log-evidence with its error, and weighted posterior samples. */
export async function runNested(problem: FitProblem, options: NestedOptions): Promise<NestedOutput & { converged: boolean }> {
  const dim = problem.names.length;
  const nModel = problem.nModel;
  const transform = (u: Float64Array, out: Float64Array): void => {
    priorTransform(problem.spec, u.subarray(0, nModel), out.subarray(0, nModel));
    for (let d = nModel; d < dim; d++) out[d] = FLUX_SCALE_RANGE[0] + u[d] * (FLUX_SCALE_RANGE[1] - FLUX_SCALE_RANGE[0]);
  };
  const logLike = (thetas: Float64Array[], out: Float64Array): void => {
    for (let i = 0; i < thetas.length; i++) out[i] = problem.evaluateFull(Float64Array.from(thetas[i])).logLikelihood;
  };
  const sampler = new NestedSampler(
    {
      dim,
      nLive: options.livePoints ?? Math.max(50, 20 * dim),
      onProgress: (p) => options.onProgress?.(p.iteration, p.logZ, p.dlogzRemaining),
    },
    transform,
    logLike,
    new Rng(options.seed ^ 0x7e57),
  );
  if (options.resumeNested) sampler.setState(options.resumeNested);
  const saveEvery = 5000;
  let lastSave = Date.now();
  const save = (): void => {
    if (!options.checkpointPath) return;
    const cp: Checkpoint = {
      kind: "arcfringe-checkpoint",
      version: 1,
      fingerprint: options.fingerprint,
      map: Array.from(options.map),
      noiseScale: Array.from(problem.noiseScale),
      stage: "nested",
      nested: sampler.getState(),
    };
    writeFileAtomic(options.checkpointPath, JSON.stringify(cp));
    lastSave = Date.now();
  };
  const status = await sampler.run({
    maxSeconds: options.maxSeconds ?? 7200,
    shouldStop: () => {
      if (Date.now() - lastSave > saveEvery) save();
      return options.shouldStop?.() ?? false;
    },
  });
  save();
  const r = sampler.result();
  return {
    samples: r.samples,
    logWeights: r.logWeights,
    logLikelihood: r.logL,
    nSamples: r.logL.length,
    dim,
    logEvidence: r.logZ,
    logEvidenceError: r.logZError,
    converged: status.converged,
  };
}
