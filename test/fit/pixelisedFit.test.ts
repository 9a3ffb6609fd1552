import { mkdtempSync, readFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { runFit, type FitOptions } from "../../src/fit/driver.js";
import { barelyResolvedWarning } from "../../src/fit/fitChecks.js";
import { writeFitOutputs } from "../../src/fit/outputs/index.js";
import { parseModel } from "../../src/model/load.js";
import { OBS, simulateFiles } from "./scenario.js";

// A clumpy source (three Gaussian clumps; an invented scenario) behind SIE + shear, observed at
// 345 GHz with a 1200 m array (beam ≈ 0.15″ for θ_E = 0.9″: the arcs are resolved, the regime in
// which a pixelised source is used). The truth, which went through the simulator, is the external
// reference; the pulls (fit − truth)/σ of both fits are reported.
// The pixelised source (semi-linear inversion with a Gaussian-kernel prior whose λ and correlation
// length the evidence sets; Warren & Dye 2003, Suyu et al. 2006, Vernardos & Koopmans 2022), with
// a user annulus mask and 400 cells, recovers the lens within 3σ. Measured on noise seeds 4–9 with
// this configuration, the largest pulls were 1.5, 2.9, 2.3, 2.4, 1.0 and 0.7σ (this test runs
// seed 7); the axis ratio was low on five seeds of six (mean pull −1.4σ), a residual bias of the
// cells' interpolation. A single Sérsic is off by up to 16σ and misfits the data.

const FIELD = { size_arcsec: 4.2, pixel_arcsec: 0.04 };
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
  it("recovers the lens within 3σ behind a clumpy source with resolved arcs, where a single Sérsic is biased (both reported)", async () => {
    const dir = mkdtempSync(join(tmpdir(), "arcfringe-pix-"));
    const vis = await simulateFiles(dir, "clumpy", SKY, { ...OBS, array: { ...OBS.array, max_baseline_m: 1200 }, tsys_k: 100 }, 7);
    const stages: string[] = [];
    // an annulus about the Einstein ring: the automatic mask misses faint parts of resolved arcs
    const pixSource = { type: "pixelised", grid: "regular", cells: 400, regularisation: "gaussian", mask_inner: 0.45, mask_outer: 1.45 };
    const pixOptions = options(vis, { lens: lens(), source: [pixSource], field: FIELD }, dir);
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
    // … and so was the kernel's correlation length, which lands near the clumps' σ (0.05–0.08″)
    expect(stages.some((s) => /correlation length ℓ = .* at the maximum evidence/.test(s)), stages.join("\n")).toBe(true);
    const ell = pix.derived.kernel_scale_arcsec as number;
    expect(ell > 0.04 && ell < 0.1, `ℓ = ${ell}″`).toBe(true);
    expect(pix.images.sourceSigma).toBeDefined();
    // both curvatures give finite σ here, so the pulls are defined
    for (const p of [...pixPulls, ...sersicPulls]) expect(Number.isFinite(p.pull), p.name).toBe(true);
    const worst = (ps: ReturnType<typeof pulls>) => Math.max(...ps.map((p) => Math.abs(p.pull)));
    // a single Sérsic is visibly biased (measured: worst pull ≈ 16σ on seeds 4 and 5) and misfits
    // the data (reduced χ² 2.3) …
    expect(worst(sersicPulls)).toBeGreaterThan(5);
    expect(sersic.reducedChi2).toBeGreaterThan(1.5);
    // … while the pixelised source fits them to the noise and recovers every lens parameter within 3σ
    expect(Math.abs(pix.reducedChi2 - 1)).toBeLessThan(0.05);
    expect(worst(pixPulls)).toBeLessThan(3);
    // the evidence curves at the best fit peak at the λ and ℓ in use (re-set at each round until
    // they moved < 0.05 dex) and fall off on both sides; they are written as CSV and PNG
    const curves = pix.evidenceCurves;
    expect(curves).toBeDefined();
    for (const c of [curves!.lambda, curves!.scaleArcsec!]) {
      const i = c.logEvidence.indexOf(Math.max(...c.logEvidence));
      expect(Math.abs(Math.log10(c.x[i] / c.best)), `argmax ${c.x[i]} vs ${c.best}`).toBeLessThan(0.1);
      expect(c.logEvidence[0]).toBeLessThan(c.logEvidence[i] - 1);
      expect(c.logEvidence[c.logEvidence.length - 1]).toBeLessThan(c.logEvidence[i] - 1);
    }
    const written = await writeFitOutputs(join(dir, "out"), pix);
    expect(written).toContain("evidence_curve.png");
    const csv = readFileSync(join(dir, "out", "evidence_curve.csv"), "utf8").trim().split("\n");
    expect(csv[0]).toBe("hyperparameter,value,log_evidence");
    expect(csv.length - 1).toBe(curves!.lambda.x.length + curves!.scaleArcsec!.x.length);
    // the output carries the caution (measured bias) and, the arcs being resolved, not the
    // barely-resolved warning
    expect(pix.warnings.some((w) => /within 3σ on six noise seeds/.test(w))).toBe(true);
    expect(pix.warnings.some((w) => /barely resolved/.test(w))).toBe(false);
  }, 600_000);
});

describe("barely resolved arcs", () => {
  it("make a pixelised fit warn in its output (400 m array: beam ≈ 0.46″ for θ_E = 0.9″)", async () => {
    const dir = mkdtempSync(join(tmpdir(), "arcfringe-pix400-"));
    const vis = await simulateFiles(dir, "clumpy400", { ...SKY, field: { size_arcsec: 4.2, pixel_arcsec: 0.06 } }, { ...OBS, tsys_k: 100 }, 5);
    const o = options(vis, { lens: lens(), source: [{ type: "pixelised", grid: "regular", cells: 225, regularisation: "gradient" }], field: { size_arcsec: 4.2, pixel_arcsec: 0.06 } }, dir);
    // the warning depends on the data's beam and the lens, not on the search: stop it at once
    o.shouldStop = () => true;
    const fit = await runFit(o);
    expect(fit.warnings.some((w) => /barely resolved/.test(w)), fit.warnings.join("\n")).toBe(true);
  }, 300_000);

  it("warn when the beam's geometric-mean FWHM exceeds θ_E/3 (our 400 m simulation: 0.53″ × 0.40″ for θ_E = 0.9″)", () => {
    expect(barelyResolvedWarning({ bmajArcsec: 0.53, bminArcsec: 0.4 }, 0.9)).toMatch(/barely resolved/);
    expect(barelyResolvedWarning({ bmajArcsec: 0.18, bminArcsec: 0.13 }, 0.9)).toBeUndefined();
    expect(barelyResolvedWarning(undefined, 0.9)).toBeUndefined();
    expect(barelyResolvedWarning({ bmajArcsec: 0.53, bminArcsec: 0.4 }, null)).toBeUndefined();
  });
});
