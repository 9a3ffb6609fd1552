/**
 * Parallel evaluation of the fit's log posterior: the main thread and `threads − 1` worker
 * threads each hold a copy of the fit problem (the gridded statistics are copied once, not
 * rebuilt) and share every batch — the differential-evolution population, the quasi-Newton
 * gradient points, the Hessian stencil, the half-ensembles of the sampler. Results are identical
 * to one thread's, since each evaluation is deterministic and independent.
 * Workers load compiled JavaScript from `<package root>/dist/src/fit/evalWorker.js`.
 */
import { existsSync } from "node:fs";
import { join } from "node:path";
import { Worker } from "node:worker_threads";
import type { GriddedState } from "../fourier/gridded.js";
import type { ModelSpec } from "../model/parameters.js";
import { workerScriptPath } from "../fourier/pool.js";
import type { FitDataset } from "./dataset.js";
import type { FitProblem } from "./problem.js";
import type { SkyGrid } from "./sky.js";

export interface PoolInit {
  spec: ModelSpec;
  grid: Required<SkyGrid>;
  noiseScale: Float64Array;
  datasets: { name: string; weight: Float64Array; groupFreqHz: Float64Array; beams: Float64Array[]; stats: GriddedState }[];
}

export type EvalRequest =
  | { op: "search" | "full"; id: number; dim: number; points: Float64Array }
  | { op: "noise"; id: number; noiseScale: Float64Array };

export interface EvalReply {
  id: number;
  values: Float64Array;
  extra: Float64Array;
}

/** Batch evaluation of search vectors (log posterior, total χ²) and full vectors (log posterior, log likelihood). */
export interface BatchEvaluator {
  search(points: Float64Array[]): Promise<{ logPosterior: Float64Array; chi2: Float64Array }>;
  full(points: Float64Array[]): Promise<{ logPosterior: Float64Array; logLikelihood: Float64Array }>;
  /** Tell every copy that the noise scales changed. */
  syncNoise(): Promise<void>;
  dispose(): Promise<void>;
}

/** Sequential evaluation on the main thread's problem. */
export class SerialEvaluator implements BatchEvaluator {
  private readonly full_: Float64Array;
  private readonly chi2: Float64Array;

  constructor(private readonly problem: FitProblem) {
    this.full_ = new Float64Array(problem.names.length);
    this.chi2 = new Float64Array(problem.nDatasets);
  }

  async search(points: Float64Array[]): Promise<{ logPosterior: Float64Array; chi2: Float64Array }> {
    const lp = new Float64Array(points.length);
    const c2 = new Float64Array(points.length);
    for (let i = 0; i < points.length; i++) {
      lp[i] = this.problem.evaluateSearch(points[i], this.full_, this.chi2);
      c2[i] = this.chi2.reduce((a, b) => a + b, 0);
    }
    return { logPosterior: lp, chi2: c2 };
  }

  async full(points: Float64Array[]): Promise<{ logPosterior: Float64Array; logLikelihood: Float64Array }> {
    const lp = new Float64Array(points.length);
    const ll = new Float64Array(points.length);
    for (let i = 0; i < points.length; i++) {
      const r = this.problem.evaluateFull(Float64Array.from(points[i]));
      lp[i] = r.logPosterior;
      ll[i] = r.logLikelihood;
    }
    return { logPosterior: lp, logLikelihood: ll };
  }

  async syncNoise(): Promise<void> {}

  async dispose(): Promise<void> {}
}

/** The main thread plus worker threads, each with a copy of the problem. */
export class ParallelEvaluator implements BatchEvaluator {
  private readonly serial: SerialEvaluator;
  private readonly workers: Worker[];
  private nextId = 1;
  private readonly pending = new Map<number, { resolve: (r: EvalReply) => void; reject: (e: Error) => void }>();

  private constructor(private readonly problem: FitProblem, workers: Worker[]) {
    this.serial = new SerialEvaluator(problem);
    this.workers = workers;
    for (const w of workers) {
      w.on("message", (r: EvalReply) => {
        const p = this.pending.get(r.id);
        if (p) {
          this.pending.delete(r.id);
          p.resolve(r);
        }
      });
      w.on("error", (e) => {
        for (const p of this.pending.values()) p.reject(e);
        this.pending.clear();
      });
    }
  }

  /** Start `threads − 1` workers for a gridded-statistics problem; undefined when not possible. */
  static create(problem: FitProblem, datasets: readonly FitDataset[], threads: number): ParallelEvaluator | undefined {
    if (threads < 2) return undefined;
    const script = join(workerScriptPath(), "..", "..", "fit", "evalWorker.js");
    if (!existsSync(script)) return undefined;
    const init: PoolInit = {
      spec: problem.spec,
      grid: problem.like.sky.grid,
      noiseScale: problem.noiseScale,
      datasets: datasets.map((d) => ({
        name: d.name,
        weight: d.vis.weight,
        groupFreqHz: d.groupFreqHz,
        beams: d.beams!,
        stats: d.stats!.exportState(),
      })),
    };
    const workers: Worker[] = [];
    for (let t = 1; t < threads; t++) workers.push(new Worker(script, { workerData: init }));
    for (const w of workers) w.unref();
    return new ParallelEvaluator(problem, workers);
  }

  private request(w: Worker, req: EvalRequest): Promise<EvalReply> {
    return new Promise((resolve, reject) => {
      this.pending.set(req.id, { resolve, reject });
      w.postMessage(req);
    });
  }

  /** Split a batch: equal shares to the workers and the main thread (which evaluates its own share meanwhile). */
  private async run(points: Float64Array[], op: "search" | "full"): Promise<{ values: Float64Array; extra: Float64Array }> {
    const n = points.length;
    const values = new Float64Array(n);
    const extra = new Float64Array(n);
    if (n === 0) return { values, extra };
    const parts = this.workers.length + 1;
    const per = Math.ceil(n / parts);
    const jobs: Promise<void>[] = [];
    this.workers.forEach((w, k) => {
      const lo = (k + 1) * per;
      const hi = Math.min(n, lo + per);
      if (lo >= hi) return;
      const dim = points[lo].length;
      const flat = new Float64Array((hi - lo) * dim);
      for (let i = lo; i < hi; i++) flat.set(points[i], (i - lo) * dim);
      jobs.push(
        this.request(w, { op, id: this.nextId++, dim, points: flat }).then((r) => {
          values.set(r.values, lo);
          extra.set(r.extra, lo);
        }),
      );
    });
    const mine = points.slice(0, Math.min(per, n));
    if (op === "search") {
      const r = await this.serial.search(mine);
      values.set(r.logPosterior, 0);
      extra.set(r.chi2, 0);
    } else {
      const r = await this.serial.full(mine);
      values.set(r.logPosterior, 0);
      extra.set(r.logLikelihood, 0);
    }
    await Promise.all(jobs);
    return { values, extra };
  }

  async search(points: Float64Array[]): Promise<{ logPosterior: Float64Array; chi2: Float64Array }> {
    const r = await this.run(points, "search");
    return { logPosterior: r.values, chi2: r.extra };
  }

  async full(points: Float64Array[]): Promise<{ logPosterior: Float64Array; logLikelihood: Float64Array }> {
    const r = await this.run(points, "full");
    return { logPosterior: r.values, logLikelihood: r.extra };
  }

  async syncNoise(): Promise<void> {
    await Promise.all(this.workers.map((w) => this.request(w, { op: "noise", id: this.nextId++, noiseScale: this.problem.noiseScale })));
  }

  async dispose(): Promise<void> {
    await Promise.all(this.workers.map((w) => w.terminate()));
  }
}
