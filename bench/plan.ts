/**
 * Fisher forecast speed: an SIE + external shear + Sérsic sky with 14 free parameters
 * (SIE θ_E, q, pa, x, y = 5; shear γ, pa = 2; Sérsic flux, r_eff, n, q, pa, x, y = 7) for one
 * configuration of ~10⁶ visibilities (50 antennas, 6 s integrations, one channel at 345 GHz).
 * Target (brief): under 20 s on 2 cores. Figures: `plan.fisher.s` (Fisher matrix and its
 * inversion, noise-free coverage included) and `plan.forecast.s` (everything `plan` computes for
 * one configuration: beams, dirty images, recovered flux as well).
 */
import { performance } from "node:perf_hooks";
import { parseSky } from "../src/model/index.js";
import { parseObservation } from "../src/sim/index.js";
import { forecastConfiguration } from "../src/sim/plan/index.js";
import type { BenchResult } from "./types.js";

export async function run(): Promise<BenchResult[]> {
  const obs = parseObservation(
    {
      preset: "generic-12m-band7",
      array: { generate: "disc", n_ant: 50, max_baseline_m: 1000, seed: 1 },
      phase_centre_deg: [150, -23],
      hour_angle_h: [-0.68, 0.68],
      integration_s: 6,
      channels: 1,
    },
    "bench",
    ".",
  );
  const free = (init: number, min: number, max: number) => ({ init, min, max });
  const sky = parseSky(
    {
      lens: [
        { type: "sie", theta_E: free(0.85, 0.3, 2), q: free(0.75, 0.3, 1), pa: free(40, 0, 180), x: free(0, -0.5, 0.5), y: free(0, -0.5, 0.5) },
        { type: "shear", gamma: free(0.04, 0, 0.2), pa: free(110, 0, 180) },
      ],
      source: [{
        type: "sersic", flux: free(0.012, 0, 1), r_eff: free(0.12, 0.01, 0.6), n: free(1, 0.5, 4), q: free(0.6, 0.2, 1),
        pa: free(75, 0, 180), x: free(0.05, -0.5, 0.5), y: free(-0.03, -0.5, 0.5),
      }],
    },
    "bench-sky",
  );
  const threads = 2;
  let t0 = performance.now();
  const f = forecastConfiguration({ label: "bench", obs }, sky, { fisherOnly: true, threads });
  const fisherS = (performance.now() - t0) / 1000;
  const params = { n_params: f.parameters.length, n_vis: f.nVis, threads, grid: f.modelGrid ? `${f.modelGrid.n}x${f.modelGrid.n}` : "analytic" };
  t0 = performance.now();
  const g = forecastConfiguration({ label: "bench", obs }, sky, { threads });
  const fullS = (performance.now() - t0) / 1000;
  return [
    { name: "plan.fisher.s", value: fisherS, unit: "s", params },
    { name: "plan.forecast.s", value: fullS, unit: "s", params: { ...params, image: g.recovery ? `${g.recovery.size}x${g.recovery.size}` : "none" } },
  ];
}
