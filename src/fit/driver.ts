/**
 * The fit, end to end: datasets → model grid → gridded statistics → search for the maximum a
 * posteriori (fluxes profiled) → noise scale → curvature uncertainties → optional ensemble
 * sampling and nested sampling → the FitOutcome the output writers turn into files.
 * No I/O to the terminal here: progress goes through callbacks; problems the user must see go
 * into `warnings`.
 */
import { createHash } from "node:crypto";
import { join } from "node:path";
import { InputError } from "../errors.js";
import type { PrimaryBeamOptions } from "../fourier/primaryBeam.js";
import { bounds, toNumbers, wrapAngleDeg, type ModelSpec } from "../model/parameters.js";
import { VERSION } from "../version.js";
import {
  binVisibilities,
  curvesAndCaustics,
  derivedQuantities,
  dirtyTriplet,
  modelVisibilities,
  sourcePlaneImage,
} from "./assemble.js";
import { curvatureCovariance } from "./curvature.js";
import { barelyResolvedWarning, bestFitWarnings } from "./fitChecks.js";
import { attachGrid, loadDatasets, uvMaxLambda, type FitDataset, type InMemoryData } from "./dataset.js";
import { chooseField, emissionRadiusArcsec, type FieldChoice } from "./field.js";
import { UvLikelihood } from "./likelihood.js";
import type { ChainOutput, DatasetInfo, FitOutcome, NestedOutput } from "./outcome.js";
import { FitProblem } from "./problem.js";
import { PixelisedProblem } from "./pixelisedProblem.js";
import { findPixelisedMaximum } from "./pixelisedSearch.js";
import { ParallelEvaluator, SerialEvaluator, type BatchEvaluator } from "./evalPool.js";
import { sourcePlaneImage as inversionSourceImage } from "./inversionOutput.js";
import type { InversionPlan, InversionResult } from "./inversion.js";
import { predictFromImages } from "./predict.js";
import { readCheckpoint, runEnsemble, runNested, type Checkpoint } from "./sampling.js";
import { findMaximum, type SearchOptions, type SearchResult } from "./search.js";
import { LensedSky } from "./sky.js";
import { summarise, weightsFromLog } from "./stats.js";

export interface FitOptions {
  /** Visibility files, or datasets already in memory. */
  files: (string | InMemoryData)[];
  spec: ModelSpec;
  outDir: string;
  seed: number;
  threads: number;
  sample: boolean;
  evidence: boolean;
  resume: boolean;
  /** "fit" (from the residuals at the maximum) or a fixed factor for every dataset. */
  noiseScale: "fit" | number;
  rescaleWeights: boolean;
  /** Dish diameter [m] when the files do not say; undefined and unknown → no primary beam. */
  dishM?: number;
  beamShape?: "gaussian" | "airy";
  /** Likelihood by NUFFT of every visibility instead of gridded statistics. */
  exactVis: boolean;
  supersample: number;
  /** Skip the global search and polish from the model's init values (a good start is known). */
  localOnly?: boolean;
  /** Limits of the stages. */
  searchSeconds?: number;
  searchGenerations?: number;
  sampleSteps?: number;
  sampleSeconds?: number;
  walkers?: number;
  livePoints?: number;
  evidenceSeconds?: number;
  /** Truth (full-vector order) for reports, when known. */
  truth?: Float64Array;
  command: string;
  onStage?: (stage: string, detail?: string) => void;
  onProgress?: (stage: string, done: number, total: number, info: string) => void;
  shouldStop?: () => boolean;
}

/** Run the fit and return everything the output writers need. */
export async function runFit(options: FitOptions): Promise<FitOutcome> {
  const t0 = Date.now();
  const timings: Record<string, number> = {};
  const lap = (name: string, since: number): number => {
    timings[name] = (Date.now() - since) / 1000;
    return Date.now();
  };
  const spec = options.spec;
  const warnings: string[] = [];
  const stage = (s: string, detail?: string): void => options.onStage?.(s, detail);

  // ---- Data ----
  stage("read", options.files.map((f) => (typeof f === "string" ? f : f.name)).join(", "));
  const spectral = spec.model.source.some((c) => c.params.has("spectral_index"));
  const datasets = await loadDatasets(options.files, { rescaleWeights: options.rescaleWeights, spectral });
  for (const d of datasets) {
    const ws = d.weightScaleEstimate;
    if (!d.weightsRescaled && Number.isFinite(ws) && (ws < 0.5 || ws > 2)) {
      warnings.push(
        `${d.name}: the scatter of consecutive integrations says the weights are off by a factor ${ws.toPrecision(3)} ` +
          `(σ by ${(1 / Math.sqrt(ws)).toPrecision(3)}); the fitted noise scale absorbs this, or use --rescale-weights`,
      );
    }
  }
  let t = lap("read", t0);

  // ---- Model grid ----
  const b = bounds(spec);
  let thetaEMax = 0;
  let sizeMax = 0;
  spec.free.forEach((f, i) => {
    if (f.role === "lens" && f.key === "theta_E") thetaEMax = Math.max(thetaEMax, Math.min(b.upper[i], 3 * f.init));
    if (f.role === "source" && (f.key === "r_eff" || f.key === "sigma")) sizeMax = Math.max(sizeMax, Math.min(b.upper[i], 3 * f.init));
  });
  const initFull = new Float64Array(spec.free.length);
  spec.free.forEach((f, i) => (initFull[i] = f.init));
  const initModel = toNumbers(spec, initFull);
  const radius = emissionRadiusArcsec(initModel, thetaEMax, sizeMax);
  const field: FieldChoice = chooseField(uvMaxLambda(datasets), radius, spec.model.field);
  stage("grid", `${field.n}² pixels of ${field.cellArcsec.toPrecision(3)}″ (${field.notes.join("; ")})`);
  const beamFor = (d: FitDataset): PrimaryBeamOptions | undefined => {
    const dish = d.vis.dishDiameterM ?? options.dishM;
    return dish ? { dishDiameterM: dish, shape: options.beamShape ?? "gaussian" } : undefined;
  };
  for (const d of datasets) {
    if (!beamFor(d)) warnings.push(`${d.name}: dish diameter unknown, so no primary-beam attenuation is applied; give --dish <m>`);
  }
  attachGrid(datasets, field.n, field.cellArcsec, beamFor, options.threads);
  if (options.exactVis) {
    const { attachExact } = await import("./exact.js");
    attachExact(datasets, field.n, field.cellArcsec, options.threads);
  }
  t = lap("setup", t);

  // ---- Likelihood and search ----
  const sky = new LensedSky({ n: field.n, cellArcsec: field.cellArcsec, supersample: options.supersample });
  const like = new UvLikelihood(sky, datasets, options.exactVis);
  const noise = new Float64Array(datasets.length).fill(options.noiseScale === "fit" ? 1 : options.noiseScale);
  const pixelised = initModel.source.some((c) => c.type === "pixelised");
  if (pixelised && options.exactVis) throw new InputError("--exact-vis: not available with a pixelised source (its inversion works on the gridded statistics)");
  const problem = pixelised ? new PixelisedProblem(spec, like, initModel, datasets) : new FitProblem(spec, like, initModel, noise);
  if (pixelised) {
    warnings.push(
      "pixelised source: in our simulations of resolved arcs (SIE + shear behind three clumps, beam ≈ θ_E/6) its lens came within 3σ " +
        "on six noise seeds of six, but the axis ratio was low by 1.4σ on average; check the lens against other source models before using it for science",
    );
  }
  // Evaluations in parallel threads (gridded path only; each thread holds a copy of the problem).
  const evaluator: BatchEvaluator =
    (!pixelised && !options.exactVis ? ParallelEvaluator.create(problem, datasets, options.threads) : undefined) ?? new SerialEvaluator(problem);
  try {
    return await fitStages();
  } finally {
    await evaluator.dispose();
    if (options.exactVis) (await import("./exact.js")).disposeExact(datasets);
  }

  async function fitStages(): Promise<FitOutcome> {
    const fingerprint = fitFingerprint(options, problem.names);
    const checkpointPath = join(options.outDir, "checkpoint.json");
    let checkpoint: Checkpoint | undefined;
    if (options.resume) checkpoint = readCheckpoint(checkpointPath, fingerprint);

    let map: Float64Array;
    let searchConverged = true;
    let searchReason = "";
    if (checkpoint) {
      stage("search", "resumed from checkpoint: maximum taken from it");
      map = Float64Array.from(checkpoint.map);
      checkpoint.noiseScale.forEach((v, i) => (noise[i] = v));
      problem.updateNormalisation();
      await evaluator.syncNoise();
    } else {
      stage("search", `${problem.searchIndex.length} nonlinear parameters, ${problem.layout.columnFreeIndex.length} fluxes profiled`);
      const searchOptions: SearchOptions = {
        seed: options.seed,
        skipGlobal: options.localOnly,
        maxSeconds: options.searchSeconds,
        maxGenerations: options.searchGenerations,
        onProgress: (s, evals, chi2) => options.onProgress?.(s, evals, 0, `best χ² ${chi2.toFixed(1)}`),
        shouldStop: options.shouldStop,
      };
      const found: SearchResult & { lambdaRounds?: number[]; scaleRounds?: number[] } =
        problem instanceof PixelisedProblem
          ? await findPixelisedMaximum(problem, initFull, searchOptions, evaluator)
          : await findMaximum(problem, searchOptions, evaluator);
      map = found.full;
      stage(
        "search",
        `done: ${found.global ? `global ${found.global.nEvaluations} evaluations (${found.global.reason}), ` : ""}polish ${found.polish.nEvaluations} (${found.polish.reason})`,
      );
      searchConverged = found.converged;
      searchReason = found.reason;
      if (problem instanceof PixelisedProblem) {
        // λ stays at its value of the maximum from here on: the curvature and samplers need a smooth surface
        if (found.lambdaRounds && problem.lambdaIsFree) {
          stage("search", `regularisation λ = ${problem.fixedLambda.toPrecision(4)} at the maximum evidence (by round ${found.lambdaRounds.map((l) => l.toPrecision(3)).join(" → ")}), held fixed from here`);
        }
        if (found.scaleRounds && problem.scaleIsFree) {
          stage("search", `kernel correlation length ℓ = ${problem.plan.kernelScaleArcsec.toPrecision(4)}″ at the maximum evidence (by round ${found.scaleRounds.map((l) => l.toPrecision(3)).join(" → ")}), held fixed from here`);
        }
      } else if (options.noiseScale === "fit") {
        // ν_d² = χ²_d / (2 n_d − p_d): the residuals set the noise (p shared by data volume).
        const chi2 = new Float64Array(datasets.length);
        problem.evaluateFull(map, chi2);
        const nTot = datasets.reduce((a, d) => a + d.vis.count, 0);
        datasets.forEach((d, i) => {
          const p = (problem.names.length * d.vis.count) / nTot;
          noise[i] = Math.sqrt(chi2[i] / Math.max(1, 2 * d.vis.count - p));
        });
        problem.updateNormalisation();
        await evaluator.syncNoise();
        if (datasets.length > 1) {
          const again = await findMaximum(problem, { seed: options.seed + 1, skipGlobal: true, startFull: map, shouldStop: options.shouldStop }, evaluator);
          map = again.full;
        }
      }
    }
    if (problem instanceof PixelisedProblem && checkpoint) {
      // resumed from a checkpoint: λ of its maximum, held from here
      problem.settleAt(map);
    }
    t = lap("search", t);

    // ---- Uncertainties ----
    const dim = problem.names.length;
    const value = Float64Array.from(map);
    let sigma = new Float64Array(dim).fill(NaN);
    let lo = new Float64Array(dim).fill(NaN);
    let hi = new Float64Array(dim).fill(NaN);
    let covariance: Float64Array | undefined;
    let method: FitOutcome["uncertaintyMethod"] = "none";
    stage("curvature", "Hessian of the log posterior at the maximum");
    const curv = await curvatureCovariance(problem, map, evaluator);
    if (curv.covariance) {
      covariance = curv.covariance;
      sigma = Float64Array.from(curv.sigma);
      method = "hessian";
      for (let i = 0; i < dim; i++) {
        lo[i] = value[i] - sigma[i];
        hi[i] = value[i] + sigma[i];
      }
    }
    if (!curv.positiveDefinite) {
      warnings.push(`the log posterior is not curved downward in every direction at the maximum (${curv.reason}): some parameters are unconstrained or degenerate; the σ from the curvature are not reliable — run with --sample`);
    }
    t = lap("curvature", t);

    let chain: ChainOutput | undefined;
    let nested: (NestedOutput & { converged: boolean }) | undefined;
    let posteriorSamples: FitOutcome["posteriorSamples"];
    const periodic = problem.names.map((_, i) => (i < problem.nModel ? spec.free[i].periodic : undefined));
    if (options.sample) {
      stage("sample", "affine-invariant ensemble sampler");
      chain = await runEnsemble(problem, map, sigma, {
        seed: options.seed,
        checkpointPath,
        fingerprint,
        walkers: options.walkers,
        maxSteps: options.sampleSteps,
        maxSeconds: options.sampleSeconds,
        resumeEnsemble: checkpoint?.stage === "ensemble" ? checkpoint.ensemble : undefined,
        onProgress: (step, target, best, acc) => options.onProgress?.("sample", step, target, `acceptance ${acc.toFixed(2)}`),
        shouldStop: options.shouldStop,
      }, evaluator);
      const flat = flatten(chain, periodic, map);
      const sum = summarise(flat.samples, dim);
      for (let i = 0; i < dim; i++) {
        sigma[i] = sum[i].sigma;
        lo[i] = sum[i].q16;
        hi[i] = sum[i].q84;
      }
      posteriorSamples = { samples: flat.samples, n: flat.n };
      method = "ensemble";
      if (!chain.converged) {
        const maxTau = Math.max(...Array.from(chain.tau).filter(Number.isFinite), NaN);
        warnings.push(
          `the ensemble chain did not converge: ${chain.nSteps} steps against 50 × τ = ${Number.isFinite(maxTau) ? Math.ceil(50 * maxTau) : "unknown"} needed; ` +
            `the posterior summaries are provisional — run longer (--sample-steps, --resume)`,
        );
      }
      t = lap("sample", t);
    }
    let logEvidence: FitOutcome["logEvidence"];
    if (options.evidence) {
      stage("evidence", "nested sampling");
      nested = await runNested(problem, {
        seed: options.seed,
        livePoints: options.livePoints,
        maxSeconds: options.evidenceSeconds,
        checkpointPath,
        fingerprint,
        map,
        resumeNested: checkpoint?.stage === "nested" ? checkpoint.nested : undefined,
        onProgress: (it, logZ, dlogz) => options.onProgress?.("evidence", it, 0, `log Z ${logZ.toFixed(2)}, Δ ${dlogz.toFixed(3)}`),
        shouldStop: options.shouldStop,
      });
      logEvidence = { value: nested.logEvidence, error: nested.logEvidenceError };
      if (!nested.converged) warnings.push("nested sampling stopped before the remaining evidence fell below the tolerance; log_evidence is a lower bound — rerun with more --evidence-seconds");
      if (!options.sample) {
        const w = weightsFromLog(nested.logWeights);
        const sum = summarise(nested.samples, dim, w);
        for (let i = 0; i < dim; i++) {
          sigma[i] = sum[i].sigma;
          lo[i] = sum[i].q16;
          hi[i] = sum[i].q84;
        }
        posteriorSamples = { samples: nested.samples, weights: w, n: nested.nSamples };
        method = "nested";
      }
      t = lap("evidence", t);
    }

    // ---- The best fit, described ----
    stage("outputs", "images, residuals, derived quantities");
    const chi2 = new Float64Array(datasets.length);
    problem.evaluateFull(map, chi2); // leaves the sky at the maximum
    const model = problem.model(map);
    const nVis = datasets.reduce((a, d) => a + d.vis.count, 0);
    const chi2Total = chi2.reduce((a, c) => a + c, 0);
    const modelSkyData = new Float64Array(field.n * field.n);
    const inversion = problem instanceof PixelisedProblem ? problem.solveSource(map) : undefined;
    if (inversion) modelSkyData.set(inversion.image);
    else sky.renderTotal(modelSkyData);
    const { critical, caustics } = curvesAndCaustics(sky, field.sizeArcsec);
    const infos: DatasetInfo[] = [];
    const uvBins = [];
    let dirty: ReturnType<typeof dirtyTriplet> | undefined;
    for (let d = 0; d < datasets.length; d++) {
      const ds = datasets[d];
      const fs = d === 0 || !problem.hasFluxScales ? 1 : map[problem.nModel + d - 1];
      const mv = inversion ? imageVisibilities(ds, modelSkyData, field.n, field.cellArcsec, beamFor(ds)) : modelVisibilities(sky, ds, fs, beamFor(ds));
      if (d === 0) dirty = dirtyTriplet(ds, mv, field.n, field.cellArcsec);
      uvBins.push(binVisibilities(ds, mv, noise[d]));
      infos.push({
        name: ds.name,
        path: ds.path,
        nVis: ds.vis.count,
        phaseCentreDeg: ds.vis.phaseCentreDeg,
        noiseScale: noise[d],
        fluxScale: fs,
        chi2: chi2[d],
        beam: d === 0 ? dirty?.beam : undefined,
      });
    }
    const derived = derivedQuantities(sky, model, field.sizeArcsec);
    let sourceImages: { value: FitOutcome["images"]["source"]; sigma?: FitOutcome["images"]["source"] };
    let evidenceCurves: FitOutcome["evidenceCurves"];
    if (inversion && problem instanceof PixelisedProblem) {
      sourceImages = pixelSourceImage(problem.plan, inversion);
      // after the source images (which need the plan as the solve left it): the curves
      // re-evaluate the plan at other λ and ℓ, then restore them
      evidenceCurves = problem.evidenceCurves(map);
      let lensed = 0;
      for (let p = 0; p < modelSkyData.length; p++) lensed += modelSkyData[p];
      derived["source[0].intrinsic_flux_jy"] = inversion.fluxJy;
      derived["source[0].intrinsic_flux_sigma_jy"] = inversion.fluxSigmaJy;
      derived["source[0].lensed_flux_jy"] = lensed;
      derived["source[0].magnification"] = inversion.fluxJy > 0 ? lensed / inversion.fluxJy : null;
      derived.total_magnification = derived["source[0].magnification"];
      derived.regularisation_lambda = inversion.lambda;
      derived.null_space_shift = inversion.nullSpaceShift;
      if (problem.plan.kernel) derived.kernel_scale_arcsec = problem.plan.kernelScaleArcsec;
      derived.rays_outside_source_grid = inversion.raysOutside;
      const coarse = barelyResolvedWarning(dirty?.beam, derived.einstein_radius_arcsec);
      if (coarse) warnings.push(coarse);
      // A regular grid covers the rays of the pixels with detected emission only (inversion.ts), so
      // rays of the mask's faint outskirts may fall outside it by design; a mesh covers every ray.
      if (inversion.raysOutside > 0 && inversion.gridKind !== "regular") {
        warnings.push(`${inversion.raysOutside} rays of masked image pixels fell outside the source grid: part of the lensed emission is not modelled; enlarge the field or the mask`);
      }
    } else {
      sourceImages = { value: sourcePlaneImage(sky, caustics) };
    }

    // ---- Checks the user must see ----
    warnings.push(
      ...bestFitWarnings({
        searchConverged: checkpoint ? true : searchConverged,
        searchReason,
        problem,
        map,
        datasets,
        noiseScale: options.noiseScale,
        noise,
        chi2,
        modelSkyData,
        field,
        sky,
      }),
    );

    const names = problem.names;
    const truth = options.truth;
    const outcome: FitOutcome = {
      spec,
      names,
      units: problem.units,
      value,
      sigma,
      lo,
      hi,
      uncertaintyMethod: method,
      covariance,
      model,
      chi2: chi2Total,
      nVis,
      nFree: dim,
      reducedChi2: chi2Total / Math.max(1, 2 * nVis - dim),
      logEvidence,
      derived,
      warnings,
      datasets: infos,
      chain,
      nested,
      posteriorSamples,
      truth,
      ...(evidenceCurves ? { evidenceCurves } : {}),
      images: {
        modelSky: { data: modelSkyData, n: field.n, cellArcsec: field.cellArcsec, centreXArcsec: 0, centreYArcsec: 0, unit: "Jy/pixel" },
        source: sourceImages.value,
        ...(sourceImages.sigma ? { sourceSigma: sourceImages.sigma } : {}),
        dataDirty: (dirty as NonNullable<typeof dirty>).data,
        modelDirty: (dirty as NonNullable<typeof dirty>).model,
        residualDirty: (dirty as NonNullable<typeof dirty>).residual,
        residualRmsJyPerBeam: (dirty as NonNullable<typeof dirty>).rms,
      },
      criticalCurves: critical,
      caustics,
      uvBins,
      phaseCentreDeg: datasets[0].vis.phaseCentreDeg ?? [0, 0],
      timings,
      command: options.command,
      version: VERSION,
      seed: options.seed,
    };
    lap("outputs", t);
    timings.total = (Date.now() - t0) / 1000;
    return outcome;
  }
}

/** Identifies a run for --resume: model label, data files and parameter names. */
function fitFingerprint(options: FitOptions, names: string[]): string {
  const h = createHash("sha256");
  h.update(JSON.stringify({ model: options.spec.model, files: options.files.map((f) => (typeof f === "string" ? f : f.name)), names }));
  return h.digest("hex").slice(0, 16);
}

/** Flatten a chain after burn-in, unwrapping periodic parameters to within ±period/2 of the maximum. */
function flatten(chain: ChainOutput, periodic: (number | undefined)[], map: Float64Array): { samples: Float64Array; n: number } {
  const { dim, nWalkers, nSteps, burnIn } = chain;
  const n = (nSteps - burnIn) * nWalkers;
  const samples = Float64Array.from(chain.chain.subarray(burnIn * nWalkers * dim));
  for (let s = 0; s < n; s++) {
    for (let i = 0; i < dim; i++) {
      const p = periodic[i];
      if (!p) continue;
      const v = samples[s * dim + i];
      samples[s * dim + i] = map[i] + (wrapAngleDeg(v - map[i] + p / 2, p) - p / 2);
    }
  }
  return { samples, n };
}

/** Value and 1σ maps of a pixelised source on a regular grid centred on the source-plane origin. */
function pixelSourceImage(plan: InversionPlan, result: InversionResult): { value: FitOutcome["images"]["source"]; sigma?: FitOutcome["images"]["source"] } {
  const img = inversionSourceImage(plan, result);
  const wrap = (data: Float64Array) => ({ data, n: img.n, cellArcsec: img.cellArcsec, centreXArcsec: 0, centreYArcsec: 0, unit: "Jy/arcsec2" });
  return { value: wrap(img.value), sigma: img.sigma ? wrap(img.sigma) : undefined };
}

/** Model visibilities of a fixed image (the pixelised source's lensed image) for one dataset. */
function imageVisibilities(ds: FitDataset, image: Float64Array, n: number, cellArcsec: number, beam: PrimaryBeamOptions | undefined): { re: Float64Array; im: Float64Array } {
  const re = new Float64Array(ds.vis.count);
  const im = new Float64Array(ds.vis.count);
  predictFromImages(n, cellArcsec, (out) => out.set(image), ds.vis.uLambda, ds.vis.vLambda, ds.vis.channel, ds.vis.channelFreqHz, re, im, {
    beam,
    pointingOffsetRad: ds.pointingOffsetRad,
    tolerance: 1e-8,
  });
  return { re, im };
}
