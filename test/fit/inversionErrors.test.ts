import { describe, expect, it } from "vitest";
import { InversionPlan } from "../../src/fit/inversion.js";
import { GriddedStats } from "../../src/fourier/gridded.js";
import { buildLens } from "../../src/lens/build.js";
import { RayTracePlan } from "../../src/lens/raytrace.js";
import { Rng } from "../../src/random.js";
import { ARCSEC_TO_RAD } from "../../src/units.js";

// Bad input gives one InputError line naming where, what and what to do (STYLE.md §6).
const n = 16;
const cellArcsec = 0.1;
const rng = new Rng(1);
const m = 200;
const u = Float64Array.from({ length: m }, () => (rng.uniform() - 0.5) * 0.9 / (cellArcsec * ARCSEC_TO_RAD));
const v = Float64Array.from({ length: m }, () => (rng.uniform() - 0.5) * 0.9 / (cellArcsec * ARCSEC_TO_RAD));
const noise = Float64Array.from({ length: m }, () => rng.normal());
const noise2 = Float64Array.from({ length: m }, () => rng.normal());
const w = new Float64Array(m).fill(1);
const stats = new GriddedStats({ uLambda: u, vLambda: v, reJy: noise, imJy: noise2, weight: w }, { n, cellRad: cellArcsec * ARCSEC_TO_RAD });
const grid = { n, cellArcsec, supersample: 2 };
const mask = new Uint8Array(n * n).fill(1);

describe("InversionPlan input errors", () => {
  it("rejects statistics built on another grid", () => {
    expect(() => new InversionPlan({ terms: [{ stats }], grid: { ...grid, cellArcsec: 0.05 }, source: { grid: "regular", cells: 25, regularisation: "zeroth" }, mask })).toThrow(
      /data set 0 has gridded statistics on 16² pixels of 0\.1.*build both on the same grid/,
    );
  });

  it("rejects a cell count outside the allowed range and unknown regularisation", () => {
    expect(() => new InversionPlan({ terms: [{ stats }], grid, source: { grid: "regular", cells: 4, regularisation: "zeroth" }, mask })).toThrow(
      /cells = 4; need an integer in \[9, /,
    );
    expect(() => new InversionPlan({ terms: [{ stats }], grid, source: { grid: "regular", cells: 25, regularisation: "smooth" as never }, mask })).toThrow(
      /regularisation "smooth"; allowed: zeroth, gradient, curvature/,
    );
  });

  it("rejects a mask of the wrong size or an empty mask", () => {
    expect(() => new InversionPlan({ terms: [{ stats }], grid, source: { grid: "regular", cells: 25, regularisation: "zeroth" }, mask: new Uint8Array(10) })).toThrow(
      /mask: has 10 pixels but the model grid is 16 × 16 = 256/,
    );
    expect(() => new InversionPlan({ terms: [{ stats }], grid, source: { grid: "regular", cells: 25, regularisation: "zeroth" }, mask: new Uint8Array(256) })).toThrow(
      /no pixel is inside the mask/,
    );
  });

  it("says so when the automatic mask finds no signal (pure noise, seed threshold 50σ)", () => {
    expect(() => new InversionPlan({ terms: [{ stats }], grid, source: { grid: "regular", cells: 25, regularisation: "zeroth" }, autoMask: { seedSigma: 50 } })).toThrow(
      /automatic mask: no pixel of the dirty image exceeds 50 × rms .*give a mask or lower seedSigma/,
    );
  });

  it("rejects rays traced on another grid and a non-positive λ", () => {
    const plan = new InversionPlan({ terms: [{ stats }], grid, source: { grid: "regular", cells: 25, regularisation: "zeroth" }, mask });
    const lens = buildLens([{ type: "sie", theta_E: 0.4, q: 0.9, pa: 0, x: 0, y: 0 }]);
    const rays = new RayTracePlan({ n, cellArcsec, supersample: 3, refineFactor: 1 });
    rays.trace(lens);
    expect(() => plan.setLens(rays, lens)).toThrow(/with 3² sub-rays; the plan needs 16², 0\.1″, 2²/);
    const ok = new RayTracePlan({ n, cellArcsec, supersample: 2, refineFactor: 1 });
    ok.trace(lens);
    plan.setLens(ok, lens);
    expect(() => plan.evaluate(0)).toThrow(/lambda = 0; the regularisation strength must be a positive number/);
  });
});
