/**
 * Worker thread of the fit's evaluation pool: rebuilds the fit problem from the main thread's
 * prepared state (model spec, grid, gridded statistics, beams, weights) once, then evaluates
 * batches of parameter vectors on request. Each evaluation is deterministic, so results do not
 * depend on how a batch is split across threads.
 */
import { parentPort, workerData } from "node:worker_threads";
import { GriddedStats } from "../fourier/gridded.js";
import { toNumbers } from "../model/parameters.js";
import type { FitDataset } from "./dataset.js";
import type { EvalRequest, EvalReply, PoolInit } from "./evalPool.js";
import { UvLikelihood } from "./likelihood.js";
import { FitProblem } from "./problem.js";
import { LensedSky } from "./sky.js";

const init = workerData as PoolInit;
const datasets = init.datasets.map((d) => ({
  name: d.name,
  path: d.name,
  vis: { count: d.weight.length, weight: d.weight } as unknown as FitDataset["vis"],
  group: new Uint16Array(0),
  groupFreqHz: d.groupFreqHz,
  beams: d.beams,
  stats: GriddedStats.fromState(d.stats),
})) as unknown as FitDataset[];
const sky = new LensedSky(init.grid);
const like = new UvLikelihood(sky, datasets);
const initFull = Float64Array.from(init.spec.free, (f) => f.init);
const problem = new FitProblem(init.spec, like, toNumbers(init.spec, initFull), Float64Array.from(init.noiseScale));
const full = new Float64Array(problem.names.length);
const chi2 = new Float64Array(problem.nDatasets);

parentPort!.on("message", (req: EvalRequest) => {
  if (req.op === "noise") {
    problem.noiseScale.set(req.noiseScale);
    problem.updateNormalisation();
    parentPort!.postMessage({ id: req.id, values: new Float64Array(0), extra: new Float64Array(0) } satisfies EvalReply);
    return;
  }
  const n = req.points.length / req.dim;
  const values = new Float64Array(n);
  const extra = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const x = Float64Array.from(req.points.subarray(i * req.dim, (i + 1) * req.dim));
    if (req.op === "search") {
      values[i] = problem.evaluateSearch(x, full, chi2);
      let s = 0;
      for (let d = 0; d < chi2.length; d++) s += chi2[d];
      extra[i] = s;
    } else {
      const r = problem.evaluateFull(x);
      values[i] = r.logPosterior;
      extra[i] = r.logLikelihood;
    }
  }
  parentPort!.postMessage({ id: req.id, values, extra } satisfies EvalReply, [values.buffer, extra.buffer]);
});
