/**
 * Ray-trace benchmark: deflection + trace + render of a 256² field (0.02″ cells) for
 * SIE + shear + Sérsic (targets: < 20 ms at 2×2 supersampling, single thread; the EPL under 3×
 * the SIE's time). Figures `raytrace.ms` (median of repeated runs) with params model, grid,
 * supersample, refine (adaptive refinement on with defaults, or off). The Sérsic has n = 1,
 * whose (R/R_e)^(1/n) is one square root; one more line, model `sie+shear+sersic(n=1.5)`, times
 * the general exp(h·ln u) path at 2×2 without refinement.
 */
import { buildLens } from "../src/lens/build.js";
import { RayTracePlan } from "../src/lens/raytrace.js";
import { buildSource } from "../src/source/analytic.js";
import type { BenchResult } from "./types.js";

const SOURCE = [{ type: "sersic", flux: 0.01, r_eff: 0.2, n: 1, q: 0.8, pa: 40, x: 0.05, y: -0.02 }];
const SHEAR = { type: "shear", gamma: 0.05, pa: 20 };
const MODELS: Record<string, Array<{ type: string } & Record<string, unknown>>> = {
  "sie+shear+sersic": [{ type: "sie", theta_E: 1.2, q: 0.7, pa: 30, x: 0, y: 0 }, SHEAR],
  "epl+shear+sersic": [{ type: "epl", theta_E: 1.2, slope: 2.2, q: 0.7, pa: 30, x: 0, y: 0 }, SHEAR],
};

function median(a: number[]): number {
  const s = [...a].sort((x, y) => x - y);
  return s[Math.floor(s.length / 2)];
}

export async function run(): Promise<BenchResult[]> {
  const out: BenchResult[] = [];
  const n = 256;
  const source = buildSource(SOURCE);
  const img = new Float64Array(n * n);
  for (const [name, comps] of Object.entries(MODELS)) {
    const lens = buildLens(comps);
    for (const supersample of [2, 4]) {
      for (const refine of ["off", "on"]) {
        const plan = new RayTracePlan({
          n,
          cellArcsec: 0.02,
          supersample,
          refineFactor: refine === "on" ? 4 : 1,
        });
        const reps = supersample === 2 ? 15 : 6;
        const times: number[] = [];
        for (let r = 0; r < reps + 2; r++) {
          const t0 = performance.now();
          plan.trace(lens);
          plan.render(source, img);
          const dt = performance.now() - t0;
          if (r >= 2) times.push(dt); // first runs warm up the JIT
        }
        out.push({
          name: "raytrace.ms",
          value: median(times),
          unit: "ms",
          params: { model: name, grid: `${n}x${n}`, supersample: `${supersample}x${supersample}`, refine },
        });
      }
    }
  }
  // the general Sérsic index path (exp·log instead of square roots)
  const general = buildSource([{ ...SOURCE[0], n: 1.5 }]);
  const lens = buildLens(MODELS["sie+shear+sersic"]);
  const plan = new RayTracePlan({ n, cellArcsec: 0.02, supersample: 2, refineFactor: 1 });
  const times: number[] = [];
  for (let r = 0; r < 17; r++) {
    const t0 = performance.now();
    plan.trace(lens);
    plan.render(general, img);
    const dt = performance.now() - t0;
    if (r >= 2) times.push(dt);
  }
  out.push({
    name: "raytrace.ms",
    value: median(times),
    unit: "ms",
    params: { model: "sie+shear+sersic(n=1.5)", grid: `${n}x${n}`, supersample: "2x2", refine: "off" },
  });
  return out;
}
