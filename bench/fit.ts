/**
 * Fit benchmarks (issue 5): time to the maximum a posteriori of SIE + shear + Sérsic on 10⁶
 * simulated visibilities (global search + polish + curvature, fluxes profiled), and ensemble-
 * sampler likelihood evaluations per second on a 256² model grid; the same fit with a pixelised
 * source (target < 10 min). Figures: `fit.map.s` (params n_vis), `fit.pixelised.s` (params n_vis,
 * cells), `sampler.evals_per_s` (params grid).
 */
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { simulateCommand } from "../src/cli/simulate.js";
import { attachGrid, loadDatasets } from "../src/fit/dataset.js";
import { runFit } from "../src/fit/driver.js";
import { UvLikelihood } from "../src/fit/likelihood.js";
import { FitProblem } from "../src/fit/problem.js";
import { ParallelEvaluator, SerialEvaluator } from "../src/fit/evalPool.js";
import { LensedSky } from "../src/fit/sky.js";
import { parseModel } from "../src/model/load.js";
import { toNumbers } from "../src/model/parameters.js";
import type { BenchResult } from "./types.js";

const SKY = {
  lens: [
    { type: "sie", theta_E: 0.94, q: 0.76, pa: 38, x: 0.04, y: -0.03 },
    { type: "shear", gamma: 0.048, pa: 117 },
  ],
  source: [{ type: "sersic", flux: 0.0042, r_eff: 0.14, n: 1.1, q: 0.68, pa: 62, x: 0.07, y: 0.05 }],
  field: { size_arcsec: 3.6, pixel_arcsec: 0.03 },
};
// 50 dishes, 1225 baselines × 204 integrations × 4 channels ≈ 1.0e6 visibilities
const OBS = {
  array: { generate: "disc", n_ant: 50, max_baseline_m: 1100, seed: 7 },
  dish_m: 12, site_lat_deg: -30.5, phase_centre_deg: [52.25, -27.8], hour_angle_h: [-0.85, 0.85], integration_s: 30,
  freq_ghz: 345, bandwidth_ghz: 7.5, channels: 4, tsys_k: 120, aperture_efficiency: 0.7,
};
const MODEL = JSON.parse(JSON.stringify(SKY));
const PIXEL_CELLS = 400;
const free = (v: number, lo: number, hi: number) => ({ init: v, min: lo, max: hi });
MODEL.lens[0] = { type: "sie", theta_E: free(1.1, 0.4, 1.8), q: free(0.85, 0.3, 1), pa: free(10, 0, 180), x: free(0, -0.3, 0.3), y: free(0, -0.3, 0.3) };
MODEL.lens[1] = { type: "shear", gamma: free(0.02, 0, 0.15), pa: free(90, 0, 180) };
MODEL.source[0] = { type: "sersic", flux: free(0.003, 0, 0.05), r_eff: free(0.2, 0.02, 0.5), n: free(1.5, 0.5, 4), q: free(0.8, 0.3, 1), pa: free(90, 0, 180), x: free(0, -0.4, 0.4), y: free(0, -0.4, 0.4) };

export async function run(): Promise<BenchResult[]> {
  const dir = mkdtempSync(join(tmpdir(), "arcfringe-bench-fit-"));
  const results: BenchResult[] = [];
  try {
    writeFileSync(join(dir, "sky.json"), JSON.stringify(SKY));
    writeFileSync(join(dir, "obs.json"), JSON.stringify(OBS));
    const vis = join(dir, "big.uvfits");
    const quiet = process.stdout.write.bind(process.stdout);
    process.stdout.write = (() => true) as typeof process.stdout.write;
    try {
      await simulateCommand.action([], { sky: join(dir, "sky.json"), config: join(dir, "obs.json"), out: vis, seed: 1, noise: true, products: "stokes_i" });
    } finally {
      process.stdout.write = quiet;
    }
    const spec = parseModel(MODEL, "bench-model.json");
    const t0 = performance.now();
    const o = await runFit({
      files: [vis], spec, outDir: dir, seed: 1, threads: 2, sample: false, evidence: false, resume: false,
      noiseScale: "fit", rescaleWeights: false, exactVis: false, supersample: 2, command: "bench",
    });
    const mapS = (performance.now() - t0) / 1000;
    results.push({ name: "fit.map.s", value: mapS, unit: "s", params: { n_vis: o.nVis, grid: o.images.modelSky.n, setup_s: o.timings.setup ?? NaN } });

    // The same data and lens priors with a pixelised source (issue 6): global search + polish with
    // λ re-set per round, then the curvature; the inversion runs on one thread.
    const pixModel = { ...MODEL, source: [{ type: "pixelised", grid: "regular", cells: PIXEL_CELLS, regularisation: "gaussian" }] };
    const t2 = performance.now();
    const pix = await runFit({
      files: [vis], spec: parseModel(pixModel, "bench-pixelised.json"), outDir: dir, seed: 1, threads: 2, sample: false, evidence: false,
      resume: false, noiseScale: "fit", rescaleWeights: false, exactVis: false, supersample: 2, command: "bench",
    });
    results.push({
      name: "fit.pixelised.s",
      value: (performance.now() - t2) / 1000,
      unit: "s",
      params: { n_vis: pix.nVis, grid: pix.images.modelSky.n, cells: PIXEL_CELLS, source_grid: "regular", regularisation: "gaussian", search_s: pix.timings.search ?? NaN },
    });

    // Sampler throughput: full-vector posterior evaluations on a 256² grid.
    const datasets = await loadDatasets([vis]);
    const n = 256;
    const cell = 3.6 / n;
    attachGrid(datasets, n, cell, () => ({ dishDiameterM: 12 }), 2);
    const sky = new LensedSky({ n, cellArcsec: cell, supersample: 2 });
    const like = new UvLikelihood(sky, datasets);
    const init = Float64Array.from(spec.free, (f) => f.init);
    const problem = new FitProblem(spec, like, toNumbers(spec, init), Float64Array.of(1));
    // Half-ensembles of 32 walkers near the maximum, as the sampler sends them.
    const x = Float64Array.from(o.value);
    const batch = Array.from({ length: 32 }, (_, k) => Float64Array.from(x, (v, i) => v * (1 + 1e-4 * Math.sin(k + i))));
    for (const threads of [1, 2]) {
      const ev = threads > 1 ? ParallelEvaluator.create(problem, datasets, threads) ?? new SerialEvaluator(problem) : new SerialEvaluator(problem);
      // Steady state, as in a long sampling run: warm every thread's JIT first.
      for (let r = 0; r < 3; r++) await ev.full(batch);
      const reps = 5;
      const t1 = performance.now();
      for (let r = 0; r < reps; r++) await ev.full(batch);
      const perS = (reps * batch.length) / ((performance.now() - t1) / 1000);
      results.push({ name: "sampler.evals_per_s", value: perS, unit: "1/s", params: { grid: n, threads } });
      await ev.dispose();
    }
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
  return results;
}
