/**
 * Simulator speed: uv-track construction and a full mock observation (track, analytic sky,
 * thermal noise) for a 50-antenna array, 1 h at 6 s, one channel (≈ 7.3e5 visibilities).
 */
import { performance } from "node:perf_hooks";
import { Rng } from "../src/random.js";
import { analyticSkyVisibilities, buildUvTrack, parseObservation, simulateObservation } from "../src/sim/index.js";
import { DEG_TO_RAD } from "../src/units.js";
import type { BenchResult } from "./types.js";

export async function run(): Promise<BenchResult[]> {
  const obs = parseObservation(
    {
      preset: "generic-12m-band7",
      array: { generate: "disc", n_ant: 50, max_baseline_m: 1000, seed: 1 },
      phase_centre_deg: [150, -30],
      hour_angle_h: [-0.5, 0.5],
      integration_s: 6,
      channels: 1,
    },
    "bench",
    ".",
  );
  const params = { n_ant: 50, hours: 1, integration_s: 6, channels: 1 };
  const geom = {
    siteLatRad: obs.siteLatDeg * DEG_TO_RAD,
    decRad: obs.phaseCentreDeg[1] * DEG_TO_RAD,
    hourAngleStartRad: obs.hourAngleH[0] * 15 * DEG_TO_RAD,
    hourAngleEndRad: obs.hourAngleH[1] * 15 * DEG_TO_RAD,
    integrationS: obs.integrationS,
    elevationLimitRad: obs.elevationLimitDeg * DEG_TO_RAD,
  };
  buildUvTrack(obs.layout, geom); // warm-up
  let t0 = performance.now();
  const reps = 3;
  let rows = 0;
  for (let k = 0; k < reps; k++) rows = buildUvTrack(obs.layout, geom).uM.length;
  const trackMs = (performance.now() - t0) / reps;

  const sky = analyticSkyVisibilities([
    { type: "point_source", flux: 0.002, x: 0.5, y: -0.3 },
    { type: "gaussian", flux: 0.01, sigma: 0.2, q: 0.6, pa: 30, x: -0.2, y: 0.1 },
  ]);
  simulateObservation(obs, sky, new Rng(1)); // warm-up
  t0 = performance.now();
  let count = 0;
  for (let k = 0; k < reps; k++) count = simulateObservation(obs, sky, new Rng(k)).count;
  const simMs = (performance.now() - t0) / reps;
  return [
    { name: "sim uv track", value: trackMs, unit: "ms", params: { ...params, rows } },
    { name: "sim observation", value: simMs, unit: "ms", params: { ...params, visibilities: count, sky: "point+gaussian" } },
    { name: "sim throughput", value: count / (simMs / 1000), unit: "vis/s", params: { ...params, sky: "point+gaussian" } },
  ];
}
