/**
 * result.json: the contract of DESIGN.md. `parameters` maps each free parameter name to
 * { value, sigma, lo, hi } (value the maximum a posteriori; sigma, lo, hi from the samples or
 * the curvature, as `uncertainty_method` says); `model` is the best fit in model-file form.
 * chi2 uses the weights as stored; noise_scale is the factor that multiplies every σ.
 */
import type { FitOutcome } from "./outcome.js";

export interface ResultJson {
  parameters: Record<string, { value: number; sigma: number | null; lo: number | null; hi: number | null; unit: string; at_bound?: string }>;
  uncertainty_method: string;
  model: unknown;
  chi2: number;
  n_vis: number;
  n_free: number;
  reduced_chi2: number;
  noise_scale: number;
  datasets: { name: string; path: string; n_vis: number; chi2: number; noise_scale: number; flux_scale: number }[];
  log_evidence?: number;
  log_evidence_error?: number;
  derived: Record<string, number | null>;
  warnings: string[];
  sampler?: { walkers: number; steps: number; burn_in: number; tau: (number | null)[]; acceptance_mean: number; converged: boolean };
  field: { n: number; cell_arcsec: number; size_arcsec: number };
  timings_s: Record<string, number>;
  command: string;
  version: string;
  seed: number;
}

const finite = (v: number): number | null => (Number.isFinite(v) ? v : null);

export function toResultJson(o: FitOutcome): ResultJson {
  const parameters: ResultJson["parameters"] = {};
  o.names.forEach((name, i) => {
    parameters[name] = { value: o.value[i], sigma: finite(o.sigma[i]), lo: finite(o.lo[i]), hi: finite(o.hi[i]), unit: o.units[i] };
  });
  for (const w of o.warnings) {
    const m = /^(\S+) = .* sits at its (lower|upper) bound/.exec(w);
    if (m && parameters[m[1]]) parameters[m[1]].at_bound = m[2];
  }
  const result: ResultJson = {
    parameters,
    uncertainty_method: o.uncertaintyMethod,
    model: o.model,
    chi2: o.chi2,
    n_vis: o.nVis,
    n_free: o.nFree,
    reduced_chi2: o.reducedChi2,
    noise_scale: o.datasets[0].noiseScale,
    datasets: o.datasets.map((d) => ({ name: d.name, path: d.path, n_vis: d.nVis, chi2: d.chi2, noise_scale: d.noiseScale, flux_scale: d.fluxScale })),
    derived: o.derived,
    warnings: o.warnings,
    field: { n: o.images.modelSky.n, cell_arcsec: o.images.modelSky.cellArcsec, size_arcsec: o.images.modelSky.n * o.images.modelSky.cellArcsec },
    timings_s: o.timings,
    command: o.command,
    version: o.version,
    seed: o.seed,
  };
  if (o.logEvidence) {
    result.log_evidence = o.logEvidence.value;
    result.log_evidence_error = o.logEvidence.error;
  }
  if (o.chain) {
    const acc = o.chain.acceptanceFraction;
    result.sampler = {
      walkers: o.chain.nWalkers,
      steps: o.chain.nSteps,
      burn_in: o.chain.burnIn,
      tau: Array.from(o.chain.tau, finite),
      acceptance_mean: acc.reduce((a, b) => a + b, 0) / acc.length,
      converged: o.chain.converged,
    };
  }
  return result;
}
