/**
 * The lens fitter as a Monte-Carlo trial function for `plan --trials`: fits one simulated
 * noise realisation (in memory) with the sky file's model, polishing from the truth (the trials
 * test the forecast σ, not the global search), and returns the maximum a posteriori in the
 * order of the sky file's free parameters.
 */
import type { SkyFile } from "../model/load.js";
import type { Visibilities } from "../vis/types.js";
import { runFit } from "./driver.js";

export type TrialFit = (vis: Visibilities) => Promise<{ values: Float64Array; ok: boolean }>;

export function lensTrialFitter(sky: SkyFile, options: { dishM: number; seed: number; threads?: number }): TrialFit {
  let trial = 0;
  return async (vis) => {
    trial++;
    const withDish: Visibilities = { ...vis, dishDiameterM: vis.dishDiameterM ?? options.dishM };
    const o = await runFit({
      files: [{ name: `trial ${trial}`, vis: withDish }],
      spec: sky.spec,
      outDir: ".",
      seed: options.seed + trial,
      threads: options.threads ?? 1,
      sample: false,
      evidence: false,
      resume: false,
      noiseScale: 1,
      rescaleWeights: false,
      exactVis: false,
      supersample: 2,
      localOnly: true,
      command: "plan --trials",
    });
    const values = Float64Array.from(sky.spec.free, (_, i) => o.value[i]);
    const ok = !o.warnings.some((w) => w.includes("did not converge") || w.includes("not curved"));
    return { values, ok };
  };
}
