/**
 * `arcfringe fit FILE... --model MODEL.json --out DIR`: the main job. Fits the lens and source
 * model to the visibilities, writes result.json (atomically), the chain, FITS and PNG images and
 * report.html, and exits 1 when the fit carries warnings the user must read.
 */
import { availableParallelism } from "node:os";
import { InputError } from "../errors.js";
import type { CommandSpec } from "./spec.js";

export interface FitCliOptions {
  model: string;
  out: string;
  sample?: boolean;
  evidence?: boolean;
  seed: number;
  threads?: number;
  resume?: boolean;
  noiseScale: string;
  rescaleWeights?: boolean;
  dish?: number;
  primaryBeam: "gaussian" | "airy";
  exactVis?: boolean;
  localOnly?: boolean;
  supersample: number;
  searchSeconds: number;
  sampleSteps: number;
  sampleSeconds: number;
  walkers?: number;
  livePoints?: number;
  evidenceSeconds: number;
  quiet?: boolean;
}

export const fitCommand: CommandSpec<FitCliOptions> = {
  name: "fit",
  args: "<files...>",
  summary: "fit a lens and source model to visibilities (uv-plane χ²), with uncertainties",
  options: [
    { flags: "--model <file.json>", description: "model file: lens and source components, priors (docs/model-file.md)", kind: "string" },
    { flags: "--out <dir>", description: "output folder: result.json, chain.h5, FITS, PNG, report.html", kind: "string" },
    { flags: "--sample", description: "sample the posterior with the ensemble sampler after the maximum", kind: "flag" },
    { flags: "--evidence", description: "compute the Bayesian evidence by nested sampling", kind: "flag" },
    { flags: "--seed <n>", description: "random seed (runs with the same seed are identical)", kind: "int", defaultValue: 1, min: 0 },
    { flags: "--threads <n>", description: "threads for the Fourier set-up (default: all cores)", kind: "int", min: 1, max: 256 },
    { flags: "--resume", description: "continue the sampling run checkpointed in --out", kind: "flag" },
    { flags: "--noise-scale <fit | factor>", description: "factor multiplying every σ: fitted from the residuals, or fixed", kind: "string", defaultValue: "fit" },
    { flags: "--rescale-weights", description: "multiply the weights by the factor measured from the data's scatter first", kind: "flag" },
    { flags: "--dish <m>", description: "dish diameter for the primary beam when the file does not give it", kind: "number", min: 0.1, max: 1000 },
    { flags: "--primary-beam <gaussian | airy>", description: "primary-beam shape (Gaussian FWHM 1.13 λ/D)", kind: "string", choices: ["gaussian", "airy"], defaultValue: "gaussian" },
    { flags: "--exact-vis", description: "likelihood by NUFFT of every visibility instead of gridded statistics (slower; a cross-check)", kind: "flag" },
    { flags: "--local-only", description: "skip the global search: polish from the model file's init values", kind: "flag" },
    { flags: "--supersample <n>", description: "sub-rays per pixel side in the ray tracing", kind: "int", defaultValue: 2, min: 1, max: 8 },
    { flags: "--search-seconds <s>", description: "time limit of the global search", kind: "number", defaultValue: 600, min: 1 },
    { flags: "--sample-steps <n>", description: "most ensemble steps (stops earlier once longer than 50 τ)", kind: "int", defaultValue: 20000, min: 10 },
    { flags: "--sample-seconds <s>", description: "time limit of the ensemble sampler", kind: "number", defaultValue: 3600, min: 1 },
    { flags: "--walkers <n>", description: "ensemble walkers, even (default: max(32, 4 × parameters))", kind: "int", min: 4 },
    { flags: "--live-points <n>", description: "nested-sampling live points (default: 20 × parameters)", kind: "int", min: 10 },
    { flags: "--evidence-seconds <s>", description: "time limit of nested sampling", kind: "number", defaultValue: 7200, min: 1 },
    { flags: "--quiet", description: "no progress bars", kind: "flag" },
  ],
  examples: [
    { comment: "Maximum a posteriori with curvature errors, report in out/", command: "arcfringe fit obs.uvfits --model lens.json --out out" },
    { comment: "Posterior samples and evidence, two bands fitted together", command: "arcfringe fit band6.uvfits band7.uvfits --model lens.json --out out --sample --evidence" },
    { comment: "Continue a sampling run that was interrupted", command: "arcfringe fit obs.uvfits --model lens.json --out out --sample --resume" },
  ],
  action: async (files, opts) => runFitCommand(files, opts),
};

/** Parse --noise-scale: "fit" or a positive number. */
function parseNoiseScale(raw: string): "fit" | number {
  if (raw === "fit") return "fit";
  const v = Number(raw);
  if (!(v > 0) || !Number.isFinite(v)) throw new InputError(`--noise-scale ${raw}: expected "fit" or a positive number (the factor multiplying every σ)`);
  return v;
}

export async function runFitCommand(files: string[], opts: FitCliOptions, extra: { truth?: Float64Array; command?: string } = {}): Promise<number> {
  if (!opts.model) throw new InputError("fit: --model <file.json> is required (the lens and source model to fit)");
  if (!opts.out) throw new InputError("fit: --out <dir> is required (where result.json and the report go)");
  const noiseScale = parseNoiseScale(opts.noiseScale);
  const { loadModelFile } = await import("../model/load.js");
  const { runFit } = await import("../fit/driver.js");
  const { writeFitFiles, printFitSummary } = await import("./fitOutput.js");
  const { Progress } = await import("./progress.js");
  const spec = loadModelFile(opts.model);
  const progress = new Progress(opts.quiet ?? false);
  let interrupted = false;
  const onSigint = (): void => {
    interrupted = true;
  };
  process.once("SIGINT", onSigint);
  try {
    const outcome = await runFit({
      files,
      spec,
      outDir: opts.out,
      seed: opts.seed,
      threads: opts.threads ?? availableParallelism(),
      sample: opts.sample ?? false,
      evidence: opts.evidence ?? false,
      resume: opts.resume ?? false,
      noiseScale,
      rescaleWeights: opts.rescaleWeights ?? false,
      dishM: opts.dish,
      beamShape: opts.primaryBeam,
      exactVis: opts.exactVis ?? false,
      localOnly: opts.localOnly ?? false,
      supersample: opts.supersample,
      searchSeconds: opts.searchSeconds,
      sampleSteps: opts.sampleSteps,
      sampleSeconds: opts.sampleSeconds,
      walkers: opts.walkers,
      livePoints: opts.livePoints,
      evidenceSeconds: opts.evidenceSeconds,
      truth: extra.truth,
      command: extra.command ?? ["arcfringe", "fit", ...process.argv.slice(3)].join(" "),
      onStage: (s, d) => progress.stage(s, d),
      onProgress: (s, done, total, info) => progress.update(s, done, total, info),
      shouldStop: () => interrupted,
    });
    progress.stop();
    const written = await writeFitFiles(opts.out, outcome);
    printFitSummary(outcome, written, opts.out);
    if (interrupted) {
      process.stderr.write("arcfringe: interrupted; the results written are those reached so far (continue with --resume)\n");
      return 1;
    }
    return outcome.warnings.length > 0 ? 1 : 0;
  } finally {
    progress.stop();
    process.removeListener("SIGINT", onSigint);
  }
}
