/**
 * `arcfringe plan`: compare array configurations before observing. For each observation file it
 * simulates the uv coverage (no noise), fits the synthesised beams, and forecasts sensitivity,
 * recovered flux, peak S/N and the Fisher uncertainty of every free parameter of the sky file;
 * it prints a comparison table and writes plan.csv, plan.md, PNG figures and plan.html.
 */
import { availableParallelism } from "node:os";
import { basename, extname, join } from "node:path";
import { InputError } from "../errors.js";
import type { ConfigForecast, TimeToReach, TrialSummary } from "../sim/plan/index.js";
import { note, out, warn } from "./output.js";
import type { CommandSpec } from "./spec.js";

export interface PlanCliOptions {
  sky?: string;
  config?: string[];
  out?: string;
  timeToReach?: string;
  trials?: number;
  resume?: boolean;
  seed: number;
  threads?: number;
  debug?: boolean;
}

export const planCommand: CommandSpec<PlanCliOptions> = {
  name: "plan",
  args: "",
  summary: "compare array configurations for a sky: beams, sensitivity, recovered flux and forecast parameter uncertainties",
  options: [
    { flags: "--sky <file>", description: "sky file (model-file JSON); its free parameters are forecast, their init is the truth (required)", kind: "string" },
    { flags: "--config <file>", description: "observation file of one configuration; repeat to compare several (required)", kind: "list" },
    { flags: "--out <dir>", description: "output folder for plan.csv, plan.md, plan.html and the PNG figures, created if missing (required)", kind: "string" },
    {
      flags: "--time-to-reach <param=sigma>",
      description: "also report the on-source time each configuration needs for this 1σ, e.g. 'lens[0].theta_E=0.005' (σ in the parameter's unit)",
      kind: "string",
    },
    {
      flags: "--trials <n>",
      description: "Monte-Carlo check: fit n simulated noise realisations per configuration and compare their scatter with the forecast",
      kind: "int", min: 2, max: 100000, rangeHint: "use at least 2 (20 gives the scatter to about 16 %)",
    },
    { flags: "--resume", description: "with --trials: reuse the trials already fitted in --out (trials.json) and run only the rest", kind: "flag" },
    { flags: "--seed <n>", description: "seed of the simulated noise (dirty-image figure and trials)", kind: "int", defaultValue: 1, min: 0, max: 4294967295 },
    { flags: "--threads <n>", description: "threads for the Fourier transforms (default: all cores)", kind: "int", min: 1, max: 256, rangeHint: "1 runs on the calling thread only" },
  ],
  examples: [
    { comment: "Compare two observation files for a lens; writes plan.csv, plan.md, plan.html and PNGs to plan-out/", command: "arcfringe plan --sky sky.json --config compact.obs.json --config extended.obs.json --out plan-out" },
    { comment: "Also the on-source time each needs for σ(θ_E) = 0.005″", command: "arcfringe plan --sky sky.json --config a.json --config b.json --out plan-out --time-to-reach 'lens[0].theta_E=0.005'" },
  ],
  action: runPlan,
};

async function runPlan(_args: string[], opts: PlanCliOptions): Promise<number> {
  if (!opts.sky) throw new InputError("--sky is required: give the sky file (model-file JSON whose free parameters are forecast)");
  const configFiles = opts.config ?? [];
  if (configFiles.length === 0) throw new InputError("--config is required: give at least one observation file (repeat --config to compare several)");
  if (!opts.out) throw new InputError("--out is required: give the folder to write plan.csv, plan.md, plan.html and the figures into");
  // Heavy modules load here, so that `plan --help` stays instant.
  const { mkdirSync } = await import("node:fs");
  const { loadSkyFile, freeNames } = await import("../model/index.js");
  const { readObservationFile } = await import("../sim/observation.js");
  const plan = await import("../sim/plan/index.js");
  const { writePlanReport, terminalTable } = await import("../io/planReport.js");

  const sky = loadSkyFile(opts.sky);
  const names = freeNames(sky.spec);
  const target = opts.timeToReach !== undefined ? plan.parseTimeTarget(opts.timeToReach) : undefined;
  if (target && !names.includes(target.name)) {
    throw new InputError(
      `--time-to-reach ${target.name}: not a free parameter of ${opts.sky}; free parameters are ${names.length > 0 ? names.join(", ") : "(none)"}`,
    );
  }

  const configs = configFiles.map((file) => {
    const obs = readObservationFile(file);
    return { label: obs.name ?? basename(file, extname(file)), obs };
  });
  // Labels head the table's columns: make repeated ones distinct.
  const seen = new Map<string, number>();
  for (const c of configs) {
    const n = (seen.get(c.label) ?? 0) + 1;
    seen.set(c.label, n);
    if (n > 1) c.label = `${c.label} #${n}`;
  }
  try {
    mkdirSync(opts.out, { recursive: true });
  } catch (err) {
    throw new InputError(`--out ${opts.out}: cannot create the folder (${(err as NodeJS.ErrnoException).code ?? "error"}); choose a writable path`);
  }

  const threads = opts.threads ?? availableParallelism();
  // Trials are checkpointed one by one in trials.json; --resume reuses those of the same sky,
  // configurations and seed (a different set-up starts afresh).
  const { writeFileAtomic } = await import("../io/atomicWrite.js");
  const { existsSync, readFileSync } = await import("node:fs");
  const trialsPath = join(opts.out, "trials.json");
  const fingerprint = JSON.stringify({ sky: readFileSync(opts.sky, "utf8"), configs: configFiles.map((c) => readFileSync(c, "utf8")), seed: opts.seed });
  let trialStore: { fingerprint: string; results: Record<string, { ok: boolean; values: number[] }[]> } = { fingerprint, results: {} };
  if (opts.resume && opts.trials !== undefined && existsSync(trialsPath)) {
    try {
      const saved = JSON.parse(readFileSync(trialsPath, "utf8"));
      if (saved.fingerprint === fingerprint) trialStore = saved;
      else note(`plan: ${trialsPath} belongs to another sky, configuration or seed: starting the trials afresh`);
    } catch {
      note(`plan: ${trialsPath} is not readable: starting the trials afresh`);
    }
  }
  const forecasts: ConfigForecast[] = [];
  const times: TimeToReach[] = [];
  const trials: TrialSummary[] = [];
  for (const config of configs) {
    note(`plan: ${config.label}: forecasting ${names.length} free parameter(s)…`);
    const f = plan.forecastConfiguration(config, sky, { seed: opts.seed, threads });
    forecasts.push(f);
    if (target) times.push(plan.timeToReach(f, target));
    if (opts.trials !== undefined) {
      note(`plan: ${config.label}: ${opts.trials} Monte-Carlo trials…`);
      // An unlensed point source has a closed-form linear fitter; everything else uses the lens fitter.
      const fit = plan.isSinglePointSourceSky(sky)
        ? plan.pointSourceFitter(sky, { dishDiameterM: config.obs.dishM })
        : (await import("../fit/trialFitter.js")).lensTrialFitter(sky, { dishM: config.obs.dishM, seed: opts.seed, threads });
      const started = Date.now();
      const done = trialStore.results[config.label] ?? [];
      if (done.length > 0) note(`plan: ${config.label}: ${Math.min(done.length, opts.trials)} trial(s) taken from ${trialsPath}`);
      trials.push(await plan.runTrials(config, sky, opts.trials, fit, {
        seed: opts.seed,
        forecast: f,
        done,
        onResult: (t, result) => {
          (trialStore.results[config.label] ??= [])[t] = result;
          writeFileAtomic(trialsPath, JSON.stringify(trialStore));
        },
        onTrial: (d, total) => note(`plan: ${config.label}: trial ${d}/${total} (${((Date.now() - started) / 1000).toFixed(0)} s)`),
      }));
    }
  }
  const command = ["arcfringe plan", "--sky", opts.sky, ...configFiles.flatMap((c) => ["--config", c]), "--out", opts.out,
    ...(opts.timeToReach ? ["--time-to-reach", `'${opts.timeToReach}'`] : []),
    ...(opts.trials !== undefined ? ["--trials", String(opts.trials)] : []), "--seed", String(opts.seed)].join(" ");
  const { files, rows } = await writePlanReport(opts.out, forecasts, {
    skyLabel: opts.sky,
    configFiles,
    seed: opts.seed,
    command,
    ...(target ? { timeTarget: target, times } : {}),
    ...(opts.trials !== undefined ? { trials } : {}),
  });
  out(terminalTable(forecasts, rows).trimEnd());
  for (const f of forecasts) {
    for (const n of f.notes) note(`plan: ${f.label}: ${n}`);
    const flagged = f.parameters.filter((p) => p.degenerate).map((p) => p.name);
    if (flagged.length > 0) warn(`${f.label}: degenerate or unconstrained: ${flagged.join(", ")} (see plan.md)`);
  }
  times.forEach((t, k) => {
    for (const n of t.notes) note(`plan: ${forecasts[k].label}: time to reach: ${n}`);
  });
  note(`plan: wrote ${files.join(", ")}`);
  return 0;
}
