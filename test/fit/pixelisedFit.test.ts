import { mkdtempSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { runFit, type FitOptions } from "../../src/fit/driver.js";
import { parseModel } from "../../src/model/load.js";
import { OBS, simulateFiles } from "./scenario.js";

// A clumpy source (three Gaussian clumps; an invented scenario) behind SIE + shear, observed at
// 345 GHz with a 400 m array (beam ≈ 0.45″ for θ_E = 0.9″). The truth, which went through the
// simulator, is the external reference; the pulls (fit − truth)/σ of both fits are reported.
// What this test holds to: the pixelised source (semi-linear inversion with the evidence choosing
// λ; Warren & Dye 2003, Suyu et al. 2006) runs end to end, λ settles, and its lens is far less
// biased than that of a single Sérsic, which cannot describe the clumps. It does NOT hold the
// pixelised lens to 3σ: over noise seeds 4, 5, 6 our measured largest pulls were 2.6σ (seed 5)
// and 3.2σ (seed 6), and seed 4 ended where the curvature is not negative definite (q 0.70 vs
// 0.75; 3.0–3.4σ in q and γ by the sampled posterior) — the axis ratio and shear drift together
// along their degeneracy (see issue 6).

const FIELD = { size_arcsec: 4.2, pixel_arcsec: 0.06 };
const TRUTH = { "lens[0].theta_E": 0.9, "lens[0].q": 0.75, "lens[0].pa": 40, "lens[0].x": 0.03, "lens[0].y": -0.02, "lens[1].gamma": 0.05, "lens[1].pa": 110 };
const SKY = {
  lens: [
    { type: "sie", theta_E: 0.9, q: 0.75, pa: 40, x: 0.03, y: -0.02 },
    { type: "shear", gamma: 0.05, pa: 110 },
  ],
  source: [
    { type: "gaussian", flux: 0.004, sigma: 0.06, q: 0.8, pa: 20, x: 0.1, y: 0.06 },
    { type: "gaussian", flux: 0.003, sigma: 0.05, q: 0.9, pa: 0, x: -0.05, y: 0.12 },
    { type: "gaussian", flux: 0.003, sigma: 0.08, q: 0.6, pa: 120, x: 0.02, y: -0.08 },
  ],
  field: FIELD,
};
const f = (v: number, lo: number, hi: number) => ({ init: v, min: lo, max: hi });
const lens = () => [
  { type: "sie", theta_E: f(0.9, 0.5, 1.5), q: f(0.75, 0.4, 1), pa: f(40, 0, 180), x: f(0.03, -0.3, 0.3), y: f(-0.02, -0.3, 0.3) },
  { type: "shear", gamma: f(0.05, 0, 0.15), pa: f(110, 0, 180) },
];

function options(vis: string, model: unknown, outDir: string): FitOptions {
  return {
    files: [vis], spec: parseModel(model, "model.json"), outDir, seed: 1, threads: 1, sample: false, evidence: false, resume: false,
    noiseScale: "fit", rescaleWeights: false, exactVis: false, supersample: 2, localOnly: true, command: "test",
  };
}

describe("fit with a pixelised source", () => {
  it("settles λ and is far less biased than a single Sérsic on a clumpy source (both reported)", async () => {
    const dir = mkdtempSync(join(tmpdir(), "arcfringe-pix-"));
    const vis = await simulateFiles(dir, "clumpy", SKY, { ...OBS, tsys_k: 100 }, 5);
    const stages: string[] = [];
    const pixOptions = options(vis, { lens: lens(), source: [{ type: "pixelised", grid: "regular", cells: 400, regularisation: "gradient" }], field: FIELD }, dir);
    pixOptions.onStage = (s, d) => stages.push(`${s}: ${d ?? ""}`);
    const pix = await runFit(pixOptions);
    const sersic = await runFit(options(vis, {
      lens: lens(),
      source: [{ type: "sersic", flux: f(0.01, 0, 0.1), r_eff: f(0.12, 0.02, 0.6), n: f(1, 0.5, 4), q: f(0.8, 0.3, 1), pa: f(60, 0, 180), x: f(0.03, -0.4, 0.4), y: f(0.03, -0.4, 0.4) }],
      field: FIELD,
    }, dir));
    const pulls = (o: typeof pix) => Object.entries(TRUTH).map(([name, truth]) => {
      const i = o.names.indexOf(name);
      return { name, value: o.value[i], sigma: o.sigma[i], pull: (o.value[i] - truth) / o.sigma[i] };
    });
    const show = (ps: ReturnType<typeof pulls>) => ps.map((p) => `${p.name} ${p.value.toPrecision(4)}±${p.sigma.toPrecision(2)} (${p.pull.toFixed(1)}σ)`).join("; ");
    const pixPulls = pulls(pix);
    const sersicPulls = pulls(sersic);
    console.log(`pixelised: ${show(pixPulls)}\nsersic:    ${show(sersicPulls)}`);
    // λ was re-optimised at the maximum until it moved < 0.05 dex, and is reported
    expect(stages.some((s) => /regularisation λ = .* at the maximum evidence/.test(s)), stages.join("\n")).toBe(true);
    expect(pix.derived.regularisation_lambda).toBeGreaterThan(0);
    expect(pix.images.sourceSigma).toBeDefined();
    // both curvatures give finite σ here, so the pulls are defined
    for (const p of [...pixPulls, ...sersicPulls]) expect(Number.isFinite(p.pull), p.name).toBe(true);
    const worst = (ps: ReturnType<typeof pulls>) => Math.max(...ps.map((p) => Math.abs(p.pull)));
    // a single Sérsic is visibly biased (measured > 17σ on seeds 4 and 5) …
    expect(worst(sersicPulls)).toBeGreaterThan(5);
    // … and the pixelised source removes most of that bias
    expect(worst(pixPulls)).toBeLessThan(worst(sersicPulls) / 3);
    // the loud caution stays in the output while the 3σ recovery is not established
    expect(pix.warnings.some((w) => /EXPERIMENTAL/.test(w))).toBe(true);
  }, 600_000);
});
