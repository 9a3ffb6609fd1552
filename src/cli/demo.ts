/**
 * `arcfringe demo [--out DIR]`: the embedded default scenario end to end. Simulates an invented
 * lensed dusty galaxy (fixtures/demo/: truth, observation, model), fits it with SIE + external
 * shear + Sérsic, prints the recovered parameters next to the truth and writes the report.
 */
import { copyFileSync, mkdirSync } from "node:fs";
import { dirname, join } from "node:path";
import { fileURLToPath } from "node:url";
import type { CommandSpec } from "./spec.js";

export interface DemoCliOptions {
  out: string;
  seed: number;
  sample?: boolean;
  quiet?: boolean;
  threads?: number;
}

/** fixtures/demo beside the package (works from src/ under vitest and from dist/). */
export function demoFixturesDir(): string {
  const here = dirname(fileURLToPath(import.meta.url));
  const root = here.includes(`${"/"}dist${"/"}`) ? join(here, "..", "..", "..") : join(here, "..", "..");
  return join(root, "fixtures", "demo");
}

export const demoCommand: CommandSpec<DemoCliOptions> = {
  name: "demo",
  args: "",
  summary: "simulate an invented lensed dusty galaxy and fit it, end to end",
  options: [
    { flags: "--out <dir>", description: "output folder", kind: "string", defaultValue: "demo-out" },
    { flags: "--seed <n>", description: "seed of the noise and the search", kind: "int", defaultValue: 1, min: 0 },
    { flags: "--sample", description: "also sample the posterior (slower)", kind: "flag" },
    { flags: "--threads <n>", description: "threads for the Fourier set-up", kind: "int", min: 1, max: 256 },
    { flags: "--quiet", description: "no progress output", kind: "flag" },
  ],
  examples: [
    { comment: "Simulate, fit and write demo-out/report.html", command: "arcfringe demo" },
    { comment: "The same with posterior sampling, into another folder", command: "arcfringe demo --out demo-sampled --sample" },
  ],
  action: async (_args, opts) => {
    const { simulateCommand } = await import("./simulate.js");
    const { runFitCommand } = await import("./fit.js");
    const { loadSkyFile, loadModelFile } = await import("../model/index.js");
    const { note } = await import("./output.js");
    const src = demoFixturesDir();
    const scenario = join(opts.out, "scenario");
    mkdirSync(scenario, { recursive: true });
    for (const f of ["sky.json", "obs.json", "model.json", "README.md"]) copyFileSync(join(src, f), join(scenario, f));
    note("demo: an invented lens (z = 0.52, SIE + shear) and a dusty galaxy at z = 2.85, observed for 3 h at 345 GHz by an invented 28-dish array");
    const visPath = join(opts.out, "demo.uvfits");
    const simCode = await simulateCommand.action([], {
      sky: join(scenario, "sky.json"),
      config: join(scenario, "obs.json"),
      out: visPath,
      seed: opts.seed,
      noise: true,
      products: "linear",
    });
    if (simCode !== 0) return simCode;
    // Truth in the fit's parameter order, for the comparison table.
    const { truth } = loadSkyFile(join(scenario, "sky.json"));
    const spec = loadModelFile(join(scenario, "model.json"));
    const truthVector = Float64Array.from(spec.free, (f) => {
      const comp = (f.role === "lens" ? truth.lens : truth.source)[f.component] as unknown as Record<string, number>;
      return typeof comp?.[f.key] === "number" ? comp[f.key] : NaN;
    });
    return runFitCommand(
      [visPath],
      {
        model: join(scenario, "model.json"),
        out: opts.out,
        seed: opts.seed,
        threads: opts.threads,
        sample: opts.sample,
        noiseScale: "fit",
        primaryBeam: "gaussian",
        supersample: 2,
        searchSeconds: 120,
        sampleSteps: 3000,
        sampleSeconds: 600,
        evidenceSeconds: 600,
        quiet: opts.quiet,
      },
      { truth: truthVector, command: `arcfringe demo --out ${opts.out} --seed ${opts.seed}${opts.sample ? " --sample" : ""}` },
    );
  },
};
