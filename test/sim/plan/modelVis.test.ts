import { describe, expect, it } from "vitest";
import { LensedSky } from "../../../src/fit/sky.js";
import { predictVisibilities } from "../../../src/fit/predict.js";
import { parseSky } from "../../../src/model/index.js";
import { parseObservation } from "../../../src/sim/index.js";
import { ModelVisibilityPlan, planCoverage } from "../../../src/sim/plan/index.js";
import { ARCSEC_TO_RAD } from "../../../src/units.js";
import { relL2 } from "../../helpers.js";

const OBS = parseObservation(
  {
    preset: "generic-12m-band7",
    array: { generate: "disc", n_ant: 12, max_baseline_m: 400, seed: 5 },
    phase_centre_deg: [150, -30],
    hour_angle_h: [-0.5, 0.5],
    integration_s: 300,
    channels: 2,
  },
  "small.json",
  ".",
);
const COV = planCoverage(OBS);
const PTS = { uLambda: COV.vis.uLambda, vLambda: COV.vis.vLambda, channel: COV.vis.channel, channelFreqHz: COV.vis.channelFreqHz };

describe("ModelVisibilityPlan", () => {
  it("grid path of an unlensed circular Gaussian matches the closed form F exp(−2π²σ²(u²+v²))", () => {
    // REFERENCES.md §5 (circular Gaussian). A pixel holds the mean of 2×2 sub-rays, whose
    // transform per axis is cos(πuΔ/2) rather than the sinc(uΔ) that the pixel window divides
    // out: they differ by (πuΔ)²/24, about 1e-3 per axis at uΔ = 0.05 where this Gaussian
    // (σ = 5 cells) carries its signal (measured relL2 5.6e-4) → 2e-3.
    const sigmaArcsec = 0.25;
    // An explicit 4″ field (8σ to the edge) so the grid's truncation of the Gaussian is < e^−32.
    const sky = parseSky(
      { lens: [], source: [{ type: "gaussian", flux: 0.01, sigma: sigmaArcsec, q: 1, pa: 0, x: 0, y: 0 }], field: { size_arcsec: 4, pixel_arcsec: 0.05 } },
      "g.json",
    );
    const plan = new ModelVisibilityPlan(sky.truth, PTS, COV.uvMaxAxisLambda, "g.json", { path: "grid", beam: null });
    expect(plan.kind).toBe("grid");
    const re = new Float64Array(COV.vis.count);
    const im = new Float64Array(COV.vis.count);
    plan.visibilities(sky.truth, re, im);
    plan.dispose();
    const s = sigmaArcsec * ARCSEC_TO_RAD;
    const expRe = Float64Array.from(COV.vis.uLambda, (u, k) => 0.01 * Math.exp(-2 * Math.PI ** 2 * s * s * (u * u + COV.vis.vLambda[k] ** 2)));
    expect(relL2(re, expRe)).toBeLessThan(2e-3);
    // A centred, symmetric source has a real transform (analytic): Im is only the NUFFT error,
    // tolerance 1e-8 relative to |V| → 1e-7 with a factor 10 of slack.
    let imMax = 0, reMax = 0;
    for (let k = 0; k < re.length; k++) {
      imMax = Math.max(imMax, Math.abs(im[k]));
      reMax = Math.max(reMax, Math.abs(re[k]));
    }
    expect(imMax / reMax).toBeLessThan(1e-7);
  });

  it("grid path of a lensed sky matches fit/predict.ts's predictVisibilities on the same grid", () => {
    // Same image, same beam, two independent NUFFT plans (1e-8 here, 1e-9 there): agreement to
    // the looser tolerance with a factor 10 of slack → 1e-7.
    const sky = parseSky(
      {
        lens: [{ type: "sie", theta_E: 0.5, q: 0.8, pa: 30, x: 0, y: 0 }],
        source: [{ type: "sersic", flux: 0.01, r_eff: 0.1, n: 1, q: 0.7, pa: 60, x: 0.05, y: 0.02 }],
      },
      "lens.json",
    );
    const beam = { dishDiameterM: OBS.dishM };
    const plan = new ModelVisibilityPlan(sky.truth, PTS, COV.uvMaxAxisLambda, "lens.json", { beam });
    const re = new Float64Array(COV.vis.count);
    const im = new Float64Array(COV.vis.count);
    plan.visibilities(sky.truth, re, im);
    plan.dispose();
    const grid = plan.field!;
    const ref = new LensedSky({ n: grid.n, cellArcsec: grid.cellArcsec, supersample: 2, refineFactor: 1 });
    ref.setModel(sky.truth);
    const pr = new Float64Array(COV.vis.count);
    const pi = new Float64Array(COV.vis.count);
    predictVisibilities(ref, PTS.uLambda, PTS.vLambda, PTS.channel, PTS.channelFreqHz, pr, pi, { beam, threads: 1 });
    const a = new Float64Array(2 * re.length), b = new Float64Array(2 * re.length);
    for (let k = 0; k < re.length; k++) {
      a[2 * k] = re[k]; a[2 * k + 1] = im[k];
      b[2 * k] = pr[k]; b[2 * k + 1] = pi[k];
    }
    expect(relL2(a, b)).toBeLessThan(1e-7);
  });

  it("rejects a point source behind a lens and a pixelised source with one clear line", () => {
    const lensed = parseSky({ lens: [{ type: "sie", theta_E: 0.5, q: 0.8, pa: 30, x: 0, y: 0 }], source: [{ type: "point_source", flux: 0.01, x: 0, y: 0 }] }, "p.json");
    expect(() => new ModelVisibilityPlan(lensed.truth, PTS, COV.uvMaxAxisLambda, "p.json")).toThrow(/p\.json: source\[0\]: a point_source on a ray-traced grid .* use a compact gaussian/);
  });
});
