/**
 * Fourier-engine benchmark: NUFFT throughput (type 2 and type 1) for a 512² grid and 10⁶ random
 * points at 1e-6, single thread and all threads, plan time and plan memory; gridded-statistics
 * χ² time and set-up time for a 256² grid with 10⁴, 10⁶ and 10⁷ visibilities.
 * Targets (brief): type 2 ≥ 8 Mpts/s single thread; χ² (256²) < 20 ms, independent of n_vis;
 * set-up of 10⁶ visibilities < 2 s; plan memory < 2× the visibility arrays.
 * Throughput is points / wall time of one execute (FFT + correction + interpolation), median of
 * 7 after one untimed call of each transform (the engine compiles its optimised code during the
 * first call). On a shared machine the wall time includes waiting for a core, so the
 * single-thread figures are also given from the process's CPU time (`.cpu_mpts_per_s`).
 */
import { availableParallelism } from "node:os";
import { NufftPlan } from "../src/fourier/nufft.js";
import { GriddedStats } from "../src/fourier/gridded.js";
import { Rng } from "../src/random.js";
import type { BenchResult } from "./types.js";

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.floor(s.length / 2)];
}

/** CPU time of this process since `start` (process.cpuUsage) [ms]. */
function cpuMs(start: NodeJS.CpuUsage): number {
  const d = process.cpuUsage(start);
  return (d.user + d.system) / 1000;
}

function gc(): void {
  const g = (globalThis as { gc?: () => void }).gc;
  if (g) g();
}

async function nufftFigures(threads: number): Promise<BenchResult[]> {
  const n = 512;
  const m = 1_000_000;
  const tol = 1e-6;
  const cellRad = 1e-7;
  const rng = new Rng(1);
  const u = Float64Array.from({ length: m }, () => (rng.uniform() - 0.5) / cellRad);
  const v = Float64Array.from({ length: m }, () => (rng.uniform() - 0.5) / cellRad);
  const image = Float64Array.from({ length: n * n }, () => rng.normal());
  const re = new Float64Array(m);
  const im = new Float64Array(m);
  gc();
  const t0 = performance.now();
  const plan = new NufftPlan({ nx: n, cellRad, tolerance: tol, threads });
  plan.setPoints(u, v);
  const planS = (performance.now() - t0) / 1000;
  plan.execute(image, re, im);
  plan.executeAdjoint(re, im, image);
  const type2: number[] = [];
  const type1: number[] = [];
  const cpu2: number[] = [];
  const cpu1: number[] = [];
  for (let rep = 0; rep < 7; rep++) {
    let c = process.cpuUsage();
    let t = performance.now();
    plan.execute(image, re, im);
    type2.push(performance.now() - t);
    cpu2.push(cpuMs(c));
    c = process.cpuUsage();
    t = performance.now();
    plan.executeAdjoint(re, im, image);
    type1.push(performance.now() - t);
    cpu1.push(cpuMs(c));
  }
  // Visibility arrays a fit holds per entry: u, v, re, im, weight (Float64) = 40 bytes.
  const memRatio = plan.memoryBytes / (40 * m);
  plan.dispose();
  const params = { grid: n, points: m, tol, threads };
  const cpuFigures: BenchResult[] =
    threads === 1
      ? [
          { name: "nufft.type2.cpu_mpts_per_s", value: m / median(cpu2) / 1e3, unit: "Mpts/s", params },
          { name: "nufft.type1.cpu_mpts_per_s", value: m / median(cpu1) / 1e3, unit: "Mpts/s", params },
        ]
      : [];
  return [
    { name: "nufft.type2.mpts_per_s", value: m / median(type2) / 1e3, unit: "Mpts/s", params },
    { name: "nufft.type1.mpts_per_s", value: m / median(type1) / 1e3, unit: "Mpts/s", params },
    ...cpuFigures,
    { name: "nufft.plan.s", value: planS, unit: "s", params },
    { name: "nufft.plan.mem_ratio", value: memRatio, unit: "x", params },
  ];
}

function griddedFigures(nVis: number): BenchResult[] {
  const n = 256;
  const cellRad = 5e-8;
  const rng = new Rng(2);
  const u = Float64Array.from({ length: nVis }, () => (rng.uniform() - 0.5) * 0.9 / cellRad);
  const v = Float64Array.from({ length: nVis }, () => (rng.uniform() - 0.5) * 0.9 / cellRad);
  const re = Float64Array.from({ length: nVis }, () => rng.normal());
  const im = Float64Array.from({ length: nVis }, () => rng.normal());
  const weight = new Float64Array(nVis).fill(1);
  gc();
  const t0 = performance.now();
  const stats = new GriddedStats({ uLambda: u, vLambda: v, reJy: re, imJy: im, weight }, { n, cellRad });
  const setupS = (performance.now() - t0) / 1000;
  const J = Float64Array.from({ length: n * n }, () => rng.uniform());
  const times: number[] = [];
  let sink = 0;
  for (let rep = 0; rep < 15; rep++) {
    const t = performance.now();
    sink += stats.chi2(J);
    times.push(performance.now() - t);
  }
  if (!Number.isFinite(sink)) throw new Error("gridded χ² is not finite");
  const params = { grid: n, n_vis: nVis };
  return [
    { name: "gridded.chi2.ms", value: median(times.slice(3)), unit: "ms", params },
    { name: "gridded.setup.s", value: setupS, unit: "s", params },
  ];
}

export async function run(): Promise<BenchResult[]> {
  const out: BenchResult[] = [];
  out.push(...(await nufftFigures(1)));
  const all = availableParallelism();
  if (all > 1) out.push(...(await nufftFigures(all)));
  for (const nVis of [10_000, 1_000_000, 10_000_000]) {
    out.push(...griddedFigures(nVis));
    gc();
  }
  return out;
}
