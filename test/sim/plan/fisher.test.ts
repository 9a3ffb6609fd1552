import { describe, expect, it } from "vitest";
import { predictVisibilities } from "../../../src/fit/predict.js";
import { LensedSky } from "../../../src/fit/sky.js";
import { parseSky } from "../../../src/model/index.js";
import { imageSigmaJyPerBeam, parseObservation, sefdJy } from "../../../src/sim/index.js";
import { fisherMatrices, forecastConfiguration, ModelVisibilityPlan, summariseFisher } from "../../../src/sim/plan/index.js";
import { ARCSEC_TO_RAD, RAD_TO_ARCSEC } from "../../../src/units.js";
import { expectRel } from "../../helpers.js";

// The REFERENCES.md §6 worked example: T_sys = 100 K, D = 12 m, η_a = 0.7, η_c = 1,
// Δν = 7.5 GHz in one channel, N = 50, n_pol = 2. The track is 1 h of hour angle at 120 s per
// integration (few visibilities, so the test is fast); the on-source time is what the track keeps.
const OBS = parseObservation(
  {
    name: "ref6",
    array: { generate: "disc", n_ant: 50, max_baseline_m: 1000, seed: 3 },
    dish_m: 12,
    site_lat_deg: -23,
    phase_centre_deg: [150, -23],
    hour_angle_h: [-0.5, 0.5],
    integration_s: 120,
    freq_ghz: 230,
    bandwidth_ghz: 7.5,
    channels: 1,
    tsys_k: 100,
    aperture_efficiency: 0.7,
    correlator_efficiency: 1,
    n_pol: 2,
  },
  "ref6.json",
  ".",
);

function pointSky(free: ("flux" | "x" | "y")[], fluxJy = 0.002) {
  const par = (k: "flux" | "x" | "y", v: number) => (free.includes(k) ? { init: v, min: k === "flux" ? 0 : -1, max: 1 } : v);
  return parseSky({ lens: [], source: [{ type: "point_source", flux: par("flux", fluxJy), x: par("x", 0), y: par("y", 0) }] }, "point.json");
}

describe("Fisher forecast of a point source at the phase centre (linear model)", () => {
  it("σ_F = 1/sqrt(Σ w) and equals the radiometer image noise of REFERENCES.md §6", () => {
    // Derivation: m_k = F e^{−2πi(u x0 + v y0)}; at x0 = y0 = 0, ∂Re m/∂F = cos 0 = 1 and
    // ∂Im m/∂F = −sin 0 = 0, so F_FF = Σ_k w_k and σ_F = 1/sqrt(Σ w) (analytic).
    const f = forecastConfiguration({ label: "ref6", obs: OBS }, pointSky(["flux"]), { fisherOnly: true });
    expect(f.modelKind).toBe("analytic");
    let sumW = 0;
    for (let k = 0; k < f.nVis; k++) sumW += f.coverage.vis.weight[k];
    // The flux derivative is exact for a linear model; only rounding remains → 1e-10.
    expectRel(f.parameters[0].sigma, 1 / Math.sqrt(sumW), 1e-10, "σ_F vs 1/sqrt(Σw)");
    // Radiometer image noise SEFD/(η_c sqrt(n_pol N(N−1) Δν t)) (REFERENCES.md §6) over the kept
    // on-source time: an exact identity of the two forms → 1e-9.
    const sefd = sefdJy(100, 12, 0.7);
    expectRel(f.parameters[0].sigma, imageSigmaJyPerBeam(sefd, 1, 50, 7.5e9, f.onSourceS, 2), 1e-9, "σ_F vs radiometer");
    // REFERENCES.md §6 table: 9.5892 μJy/beam for t = 3600 s, scaled by sqrt(3600/t) to the
    // kept time; the table is printed to 5 digits → 1e-4 relative.
    expectRel(f.parameters[0].sigma, 9.5892e-6 * Math.sqrt(3600 / f.onSourceS), 1e-4, "σ_F vs REFERENCES.md §6 table");
    expectRel(f.pointSigmaJy, f.parameters[0].sigma, 1e-12, "point-source sensitivity");
  });

  it("σ_x = 1/(2π F sqrt(Σ w u²)) with y fixed, and the 2×2 inverse with x and y free", () => {
    // Derivation: ∂m/∂x0 = −2πi u F e^{−2πi(u x0 + v y0)} (x0 in rad); at the phase centre
    // ∂Re m/∂x0 = 0 and ∂Im m/∂x0 = −2π u F, so F_xx = (2πF)² Σ w u²; F_Fx = 0 (one derivative is
    // purely real, the other purely imaginary). With y free too, F_xy = (2πF)² Σ w u v, and
    // σ_x² = [(F_pos)⁻¹]_xx. Angles here in arcsec: × RAD_TO_ARCSEC (analytic).
    const F = 0.002;
    const one = forecastConfiguration({ label: "ref6", obs: OBS }, pointSky(["flux", "x"], F), { fisherOnly: true });
    const vis = one.coverage.vis;
    let suu = 0, svv = 0, suv = 0, sw = 0;
    for (let k = 0; k < vis.count; k++) {
      const w = vis.weight[k], u = vis.uLambda[k], v = vis.vLambda[k];
      suu += w * u * u;
      svv += w * v * v;
      suv += w * u * v;
      sw += w;
    }
    const sigmaXExpected = RAD_TO_ARCSEC / (2 * Math.PI * F * Math.sqrt(suu));
    // The position derivative is a central difference of e^{−iφ} with h = 1e-2 cell and
    // cell = 1/(6 max|u|): relative truncation error (2π u h)²/6 ≤ (2π·1e-2/6)²/6 ≈ 2e-5 at the
    // longest baseline → 1e-4.
    expectRel(one.parameters[1].sigma, sigmaXExpected, 1e-4, "σ_x (y fixed)");
    expectRel(one.parameters[0].sigma, 1 / Math.sqrt(sw), 1e-9, "σ_F with x free");
    expect(Math.abs(one.summary.correlation[1])).toBeLessThan(1e-6); // F_Fx = 0 analytically

    const both = forecastConfiguration({ label: "ref6", obs: OBS }, pointSky(["flux", "x", "y"], F), { fisherOnly: true });
    const c = RAD_TO_ARCSEC / (2 * Math.PI * F);
    const det = suu * svv - suv * suv;
    expectRel(both.parameters[1].sigma, c * Math.sqrt(svv / det), 1e-4, "σ_x (x, y free)");
    expectRel(both.parameters[2].sigma, c * Math.sqrt(suu / det), 1e-4, "σ_y (x, y free)");
    expectRel(both.summary.correlation[1 * 3 + 2], -suv / Math.sqrt(suu * svv), 1e-3, "ρ_xy");
  });
});

describe("Fisher forecast on the ray-traced grid path", () => {
  it("an unlensed Gaussian rendered on the grid gives the closed-form σ of flux, size and position", () => {
    // Closed forms (REFERENCES.md §5): V = F g e^{−2πi(u x0 + v y0)}, g = exp(−2π²s²ρ²), at
    // x0 = y0 = 0: ∂V/∂F = g and ∂V/∂s = −4π² s ρ² F g are real, ∂V/∂x0 = −2πi u F g and
    // ∂V/∂y0 = −2πi v F g imaginary, so F splits into a real (F, s) and an imaginary (x0, y0)
    // 2×2 block (analytic). The grid path differs from the closed form by the 2×2 sub-ray mean
    // (≈1e-3 in V where the signal is, see modelVis.test.ts) → 5e-3 on σ.
    const F = 0.005, sArcsec = 0.15;
    const sky = parseSky(
      {
        lens: [],
        source: [{
          type: "gaussian",
          flux: { init: F, min: 0, max: 1 },
          sigma: { init: sArcsec, min: 0.01, max: 1 },
          q: 1, pa: 0,
          x: { init: 0, min: -1, max: 1 },
          y: { init: 0, min: -1, max: 1 },
        }],
        field: { size_arcsec: 4, pixel_arcsec: 0.02 },
      },
      "g.json",
    );
    const f = forecastConfiguration({ label: "ref6", obs: OBS }, sky, { fisherOnly: true, path: "grid", primaryBeam: false });
    expect(f.modelKind).toBe("grid");
    const vis = f.coverage.vis;
    const s = sArcsec * ARCSEC_TO_RAD;
    let aFF = 0, aFs = 0, ass = 0, axx = 0, axy = 0, ayy = 0;
    for (let k = 0; k < vis.count; k++) {
      const u = vis.uLambda[k], v = vis.vLambda[k], w = vis.weight[k];
      const rho2 = u * u + v * v;
      const g = Math.exp(-2 * Math.PI ** 2 * s * s * rho2);
      const ds = -4 * Math.PI ** 2 * s * rho2 * F * g * ARCSEC_TO_RAD;
      const dx = -2 * Math.PI * u * F * g * ARCSEC_TO_RAD;
      const dy = -2 * Math.PI * v * F * g * ARCSEC_TO_RAD;
      aFF += w * g * g; aFs += w * g * ds; ass += w * ds * ds;
      axx += w * dx * dx; axy += w * dx * dy; ayy += w * dy * dy;
    }
    const detR = aFF * ass - aFs * aFs, detI = axx * ayy - axy * axy;
    const [pF, pS, pX, pY] = f.parameters;
    expectRel(pF.sigma, Math.sqrt(ass / detR), 5e-3, "σ_F");
    expectRel(pS.sigma, Math.sqrt(aFF / detR), 5e-3, "σ_sigma");
    expectRel(pX.sigma, Math.sqrt(ayy / detI), 5e-3, "σ_x");
    expectRel(pY.sigma, Math.sqrt(axx / detI), 5e-3, "σ_y");
  });

  it("a lensed source's flux alone: σ_F = F/sqrt(Σ w|m|²), m from fit/predict.ts", () => {
    // m is linear in the flux, ∂m/∂F = m/F, so F_FF = Σ w|m|²/F² (analytic). |m|² comes from
    // predictVisibilities at tolerance 1e-9 on the forecast's own grid; the forecast's NUFFT
    // runs at 1e-8 → 1e-6.
    const sky = parseSky(
      {
        lens: [{ type: "sie", theta_E: 0.6, q: 0.8, pa: 30, x: 0, y: 0 }],
        source: [{ type: "sersic", flux: { init: 0.01, min: 0, max: 1 }, r_eff: 0.1, n: 1, q: 0.7, pa: 60, x: 0.05, y: 0.02 }],
      },
      "lens.json",
    );
    const f = forecastConfiguration({ label: "ref6", obs: OBS }, sky, { fisherOnly: true });
    const grid = f.modelGrid!;
    const ref = new LensedSky({ n: grid.n, cellArcsec: grid.cellArcsec, supersample: 2, refineFactor: 1 });
    ref.setModel(sky.truth);
    const vis = f.coverage.vis;
    const re = new Float64Array(vis.count), im = new Float64Array(vis.count);
    predictVisibilities(ref, vis.uLambda, vis.vLambda, vis.channel, vis.channelFreqHz, re, im, { beam: { dishDiameterM: OBS.dishM }, threads: 1 });
    let s = 0;
    for (let k = 0; k < vis.count; k++) s += vis.weight[k] * (re[k] * re[k] + im[k] * im[k]);
    expectRel(f.parameters[0].sigma, 0.01 / Math.sqrt(s), 1e-6, "σ_F lensed");
  });

  it("flags the position angle of a round lens as unconstrained and differentiates q = 1 one-sided", () => {
    // At q = 1 the SIE is a singular isothermal sphere: its pa changes nothing (analytic), so
    // F_pa,pa = 0 exactly and σ_pa must be infinite and flagged; q + h would leave (0, 1], so the
    // backward formula is used for q.
    const sky = parseSky(
      {
        lens: [{ type: "sie", theta_E: { init: 0.6, min: 0.1, max: 2 }, q: { init: 1, min: 0.3, max: 1 }, pa: { init: 40, min: 0, max: 180 }, x: 0, y: 0 }],
        source: [{ type: "sersic", flux: { init: 0.01, min: 0, max: 1 }, r_eff: 0.1, n: 1, q: 0.7, pa: 60, x: 0.05, y: 0.02 }],
      },
      "round.json",
    );
    const f = forecastConfiguration({ label: "ref6", obs: OBS }, sky, { fisherOnly: true });
    const byName = Object.fromEntries(f.parameters.map((p) => [p.name, p]));
    expect(byName["lens[0].pa"].sigma).toBe(Infinity);
    expect(byName["lens[0].pa"].degenerate).toBe(true);
    expect(byName["lens[0].q"].scheme).toBe("backward");
    expect(Number.isFinite(byName["lens[0].theta_E"].sigma)).toBe(true);
    expect(byName["lens[0].theta_E"].degenerate).toBe(false);
  });
});

describe("finite-difference steps", () => {
  it("halving every step changes no σ of a 14-parameter SIE + shear + Sérsic forecast by more than 1e-3", () => {
    // Property check (no external value): a central difference errs by h²·m'''/6, so halving h
    // cuts that error 4×; if σ moves by < 1e-3 the default steps are in the converged range
    // (expected ~1e-5 from h/L ≈ 1e-2, fisher.ts; measured 1e-4). Rounding would show up as a
    // change at small h.
    const free = (init: number, min: number, max: number) => ({ init, min, max });
    const sky = parseSky(
      {
        lens: [
          { type: "sie", theta_E: free(0.6, 0.1, 2), q: free(0.8, 0.3, 1), pa: free(40, 0, 180), x: free(0, -0.5, 0.5), y: free(0, -0.5, 0.5) },
          { type: "shear", gamma: free(0.04, 0, 0.2), pa: free(110, 0, 180) },
        ],
        source: [{ type: "sersic", flux: free(0.01, 0, 1), r_eff: free(0.1, 0.01, 1), n: free(1, 0.5, 4), q: free(0.7, 0.2, 1), pa: free(60, 0, 180), x: free(0.05, -0.5, 0.5), y: free(0.02, -0.5, 0.5) }],
      },
      "sie_shear_sersic.json",
    );
    expect(sky.spec.free.length).toBe(14);
    const small = parseObservation(
      { preset: "generic-12m-band7", array: { generate: "disc", n_ant: 10, max_baseline_m: 500, seed: 8 }, phase_centre_deg: [150, -23], hour_angle_h: [-1, 1], integration_s: 600, channels: 1 },
      "small.json",
      ".",
    );
    const a = forecastConfiguration({ label: "a", obs: small }, sky, { fisherOnly: true });
    const coverage = a.coverage;
    const plan = new ModelVisibilityPlan(sky.truth, { uLambda: coverage.vis.uLambda, vLambda: coverage.vis.vLambda, channel: coverage.vis.channel, channelFreqHz: coverage.vis.channelFreqHz },
      coverage.uvMaxAxisLambda, "s", { beam: { dishDiameterM: small.dishM } });
    const half = fisherMatrices(sky.spec, plan, coverage.vis.weight, { steps: Float64Array.from(a.fisher.steps, (h) => h / 2) });
    plan.dispose();
    const s = summariseFisher(half.dataMatrix, half.priorMatrix, 14);
    for (let i = 0; i < 14; i++) expectRel(s.sigma[i], a.parameters[i].sigma, 1e-3, a.parameters[i].name);
  });
});
