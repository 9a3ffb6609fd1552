/** Synthetic visibility tables for the vis tests (seeded; no physics beyond what each test states). */
import { Rng } from "../../src/random.js";
import { allocate } from "../../src/vis/uvfits.js";
import type { Visibilities } from "../../src/vis/types.js";

/**
 * A table of `nTimes` × all baselines of `nAnt` antennas × channels × correlations, with
 * random u, v (same seconds for every channel of a row, so u_λ ∝ ν as in a real file),
 * random data and weights. `dropEvery` removes every n-th entry so rows are incomplete.
 */
export function syntheticVis(opts: {
  seed: number;
  nAnt: number;
  nTimes: number;
  freqHz: number[];
  correlations: number[];
  dropEvery?: number;
  timeStepS?: number;
}): Visibilities {
  const rng = new Rng(opts.seed);
  const nCh = opts.freqHz.length;
  const nCorr = opts.correlations.length;
  const entries: number[][] = [];
  for (let t = 0; t < opts.nTimes; t++) {
    for (let a = 1; a <= opts.nAnt; a++) {
      for (let b = a + 1; b <= opts.nAnt; b++) {
        const uS = (rng.uniform() - 0.5) * 2e-6; // seconds of light travel (≈ ±300 m)
        const vS = (rng.uniform() - 0.5) * 2e-6;
        const wS = (rng.uniform() - 0.5) * 2e-7;
        for (let c = 0; c < nCh; c++) {
          for (let p = 0; p < nCorr; p++) entries.push([t, a, b, c, p, uS, vS, wS]);
        }
      }
    }
  }
  const kept = opts.dropEvery ? entries.filter((_, i) => i % opts.dropEvery! !== 3) : entries;
  const vis = allocate(kept.length, Float64Array.from(opts.freqHz), 1e6, 2458000.5);
  kept.forEach(([t, a, b, c, p, uS, vS, wS], k) => {
    const nu = opts.freqHz[c];
    vis.uLambda[k] = uS * nu;
    vis.vLambda[k] = vS * nu;
    vis.wLambda[k] = wS * nu;
    vis.reJy[k] = rng.normal();
    vis.imJy[k] = rng.normal();
    vis.weight[k] = 0.5 + rng.uniform();
    vis.channel[k] = c;
    vis.antenna1[k] = a;
    vis.antenna2[k] = b;
    vis.timeS[k] = 3600 + t * (opts.timeStepS ?? 10);
    vis.correlation[k] = opts.correlations[p];
  });
  vis.phaseCentreDeg = [150.25, -30.5];
  vis.pointingCentreDeg = [150.25, -30.5];
  vis.dishDiameterM = 12;
  vis.telescope = "SYNTH";
  vis.objectName = "TEST";
  vis.circularFeeds = opts.correlations.some((c) => c <= -1 && c >= -4);
  vis.antennaNames = new Map(Array.from({ length: opts.nAnt }, (_, i) => [i + 1, `A${i + 1}`]));
  return vis;
}
