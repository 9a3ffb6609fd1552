import { describe, expect, it } from "vitest";
import { buildLens } from "../../src/lens/build.js";
import { Rng } from "../../src/random.js";
import { expectAbs } from "../helpers.js";

type Comp = { type: string } & Record<string, unknown>;

/** Reference: the lens equation β = θ − Σ_k α_k(θ) (CONVENTIONS.md), one component at a time. */
function betaByComponents(comps: Comp[], x: Float64Array, y: Float64Array): [Float64Array, Float64Array] {
  const n = x.length;
  const ax = new Float64Array(n);
  const ay = new Float64Array(n);
  for (const c of buildLens(comps).components) c.addDeflection(x, y, ax, ay, n);
  const bx = new Float64Array(n);
  const by = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    bx[i] = x[i] - ax[i];
    by[i] = y[i] - ay[i];
  }
  return [bx, by];
}

function randomPoints(seed: number, n: number): [Float64Array, Float64Array] {
  const rng = new Rng(seed);
  const x = new Float64Array(n);
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    x[i] = -3 + 6 * rng.uniform();
    y[i] = -3 + 6 * rng.uniform();
  }
  // include the singular centres and points on the axes
  x[0] = 0;
  y[0] = 0;
  x[1] = 0.1;
  y[1] = -0.05;
  x[2] = 0.5;
  y[2] = Math.sqrt(3) / 2;
  return [x, y];
}

const SIE: Comp = { type: "sie", theta_E: 1.2, q: 0.7, pa: 30, x: 0, y: 0 };
const CORED: Comp = { type: "sie", theta_E: 0.9, q: 0.55, pa: -65, x: 0.1, y: -0.05, core: 0.08 };
const EPL: Comp = { type: "epl", theta_E: 1.2, slope: 2.2, q: 0.7, pa: 30, x: 0, y: 0 };
const SHEAR: Comp = { type: "shear", gamma: 0.05, pa: 20 };
const SHEAR_OFF: Comp = { type: "shear", gamma: 0.08, pa: 115, x: 0.3, y: -0.2 };
const NFW: Comp = { type: "nfw", kappa_s: 0.2, r_s: 2, q: 0.9, pa: 10, x: 0, y: 0 };

describe("Lens.sourcePositions (one pass for one mass profile plus shears)", () => {
  const cases: Array<[string, Comp[]]> = [
    ["SIE + shear", [SIE, SHEAR]],
    ["shear + cored SIE + off-centre shear", [SHEAR, CORED, SHEAR_OFF]],
    ["EPL + shear", [EPL, SHEAR]],
    ["SIE alone", [SIE]],
    ["shears only", [SHEAR, SHEAR_OFF]],
    ["no components", []],
    ["SIE + NFW + shear (general path)", [SIE, NFW, SHEAR]],
  ];
  for (const [name, comps] of cases) {
    it(`${name}: β equals θ − Σ α_k summed component by component`, () => {
      // Reference: the lens equation with each component's own addDeflection. The one-pass
      // trace folds the shears into an affine map, which only reorders the rounding: |β| ≲ 5″,
      // a few ulp ≈ 1e-15″ → atol 1e-13″.
      const [x, y] = randomPoints(21, 2000);
      const [rx, ry] = betaByComponents(comps, x, y);
      const bx = new Float64Array(x.length);
      const by = new Float64Array(x.length);
      buildLens(comps).sourcePositions(x, y, bx, by);
      // one expect on the worst point (per-point expects are slow)
      let worst = 0;
      let at = 0;
      for (let i = 0; i < x.length; i++) {
        const err = Math.max(Math.abs(bx[i] - rx[i]), Math.abs(by[i] - ry[i]));
        if (!(err <= worst)) {
          worst = err;
          at = i;
        }
      }
      expectAbs(worst, 0, 1e-13, `${name}: β at (${x[at]}, ${y[at]}) is (${bx[at]}, ${by[at]}), reference (${rx[at]}, ${ry[at]})`);
    });
  }

  it("keeps β = θ at the singular centre of an SIE without shear (deflection 0, CONVENTIONS.md)", () => {
    const lens = buildLens([{ type: "sie", theta_E: 1, q: 0.6, pa: 10, x: 0.25, y: -0.5 }]);
    const bx = new Float64Array(1);
    const by = new Float64Array(1);
    lens.sourcePositions(Float64Array.of(0.25), Float64Array.of(-0.5), bx, by);
    expect([bx[0], by[0]]).toEqual([0.25, -0.5]);
  });

  it("honours n < length: only the first n outputs are written", () => {
    const lens = buildLens([SIE, SHEAR]);
    const [x, y] = randomPoints(22, 10);
    const bx = new Float64Array(10).fill(7);
    const by = new Float64Array(10).fill(7);
    lens.sourcePositions(x, y, bx, by, 4);
    expect(Array.from(bx.subarray(4))).toEqual(new Array(6).fill(7));
    expect(Array.from(by.subarray(4))).toEqual(new Array(6).fill(7));
    expect(bx[3]).not.toBe(7);
  });
});
