/**
 * Overheads of the search and sampling algorithms (src/fit) on cheap analytic targets, so the
 * figures measure the algorithms themselves, not a likelihood: ensemble steps, nested-sampling
 * iterations, autocorrelation time, differential-evolution generations and NNLS solves.
 */
import { EnsembleSampler } from "../src/fit/ensemble.js";
import { integratedTime } from "../src/fit/autocorr.js";
import { NestedSampler } from "../src/fit/nested.js";
import { DifferentialEvolution, scalarToBatch } from "../src/fit/optimise.js";
import { nnlsNormal } from "../src/fit/nnls.js";
import { Rng } from "../src/random.js";
import type { BenchResult } from "./types.js";

function isotropicGaussian(pts: Float64Array[], out: Float64Array): void {
  for (let k = 0; k < pts.length; k++) {
    const x = pts[k];
    let q = 0;
    for (let i = 0; i < x.length; i++) q += x[i] * x[i];
    out[k] = -0.5 * q;
  }
}

export async function run(): Promise<BenchResult[]> {
  const results: BenchResult[] = [];

  {
    const nWalkers = 64;
    const dim = 10;
    const steps = 4000;
    const s = new EnsembleSampler({ nWalkers, dim }, isotropicGaussian, new Rng(1));
    await s.initialiseBall(new Float64Array(dim), new Float64Array(dim).fill(0.1));
    const t0 = performance.now();
    await s.step(steps);
    const dt = (performance.now() - t0) / 1000;
    results.push({ name: "ensemble_step_overhead", value: (dt / (steps * nWalkers)) * 1e6, unit: "us/eval", params: { nWalkers, dim, steps } });

    const t1 = performance.now();
    integratedTime(s.chain, s.nStoredSteps, nWalkers, dim);
    results.push({ name: "autocorr_time", value: performance.now() - t1, unit: "ms", params: { nSteps: steps, nWalkers, dim } });
  }

  {
    const dim = 5;
    const nLive = 500;
    const ns = new NestedSampler(
      { dim, nLive },
      (u, th) => {
        for (let i = 0; i < dim; i++) th[i] = -10 + 20 * u[i];
      },
      isotropicGaussian,
      new Rng(2),
    );
    const t0 = performance.now();
    const st = await ns.run();
    const dt = (performance.now() - t0) / 1000;
    results.push({ name: "nested_iteration_overhead", value: (dt / st.iteration) * 1e6, unit: "us/iter", params: { dim, nLive, iterations: st.iteration, evaluations: st.nEvaluations } });
  }

  {
    const dim = 10;
    const rosen = (x: Float64Array): number => {
      let v = 0;
      for (let i = 0; i + 1 < x.length; i++) v += 100 * (x[i + 1] - x[i] * x[i]) ** 2 + (1 - x[i]) ** 2;
      return v;
    };
    const de = new DifferentialEvolution(
      { box: { lower: new Float64Array(dim).fill(-5), upper: new Float64Array(dim).fill(5) }, maxGenerations: 300 },
      scalarToBatch(rosen),
      new Rng(3),
    );
    const t0 = performance.now();
    const r = await de.run();
    const dt = performance.now() - t0;
    results.push({ name: "de_generation", value: dt / r.iterations, unit: "ms/gen", params: { dim, population: de.populationSize, generations: r.iterations } });
  }

  {
    const n = 100;
    const m = 300;
    const rng = new Rng(4);
    const a = new Float64Array(m * n);
    const b = new Float64Array(m);
    for (let i = 0; i < a.length; i++) a[i] = Math.abs(rng.normal());
    for (let i = 0; i < m; i++) b[i] = rng.normal();
    const ata = new Float64Array(n * n);
    const atb = new Float64Array(n);
    for (let r = 0; r < m; r++) {
      for (let i = 0; i < n; i++) {
        atb[i] += a[r * n + i] * b[r];
        for (let j = 0; j < n; j++) ata[i * n + j] += a[r * n + i] * a[r * n + j];
      }
    }
    const reps = 20;
    let active = 0;
    const t0 = performance.now();
    for (let k = 0; k < reps; k++) active = nnlsNormal(ata, atb).x.reduce((c, v) => c + (v > 0 ? 1 : 0), 0);
    results.push({ name: "nnls_normal_solve", value: (performance.now() - t0) / reps, unit: "ms", params: { n, nonzero: active } });
  }
  return results;
}
