/**
 * Free-parameter lists, ties, periodic position angles and the numbers-only model.
 * References: DESIGN.md "Model file" (structure, names) and CONVENTIONS.md ("pa ... periodic
 * with period 180°: the search wraps it, and reports it in [0°, 180°)"); the multipole period
 * 360°/m is analytic (an m-fold pattern turned by 360°/m is unchanged).
 */
import { describe, expect, it } from "vitest";
import { mkdtempSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { Rng } from "../../src/random.js";
import {
  priorTransform, bounds, freeIndex, freeNames, initialVector, isAtBound, loadModelFile, loadSkyFile, parseModel, toNumbers,
  wrapAngleDeg, wrapToBox,
} from "../../src/model/index.js";

const FIXTURES = new URL("../../fixtures/models/", import.meta.url).pathname;

describe("free parameters and ties", () => {
  const spec = loadModelFile(`${FIXTURES}epl_shear_two_gaussians.json`);
  it("lists free parameters in file order of components, canonical order within each type", () => {
    expect(freeNames(spec)).toEqual([
      "lens[0].theta_E", "lens[0].slope", "lens[0].q", "lens[0].pa", "lens[0].x", "lens[0].y",
      "lens[1].gamma", "lens[1].pa",
      "source[0].flux", "source[0].sigma", "source[0].q", "source[0].pa", "source[0].x", "source[0].y",
      "source[1].flux", "source[1].sigma",
    ]);
    expect(spec.free.find((f) => f.name === "lens[0].theta_E")?.unit).toBe("arcsec");
  });
  it("ties resolve: source[1].x, y follow source[0]; a tie to a fixed value copies it", () => {
    const v = initialVector(spec);
    v[freeIndex(spec, "source[0].x")] = 0.123;
    v[freeIndex(spec, "source[0].y")] = -0.045;
    const m = toNumbers(spec, v);
    const s1 = m.source[1];
    expect(s1.type).toBe("gaussian");
    if (s1.type !== "gaussian") return;
    expect(s1.x).toBe(0.123);
    expect(s1.y).toBe(-0.045);
    expect(s1.spectral_index).toBe(2.5); // tied to source[0].spectral_index, a fixed 2.5
    expect(s1.ref_freq_ghz).toBe(345);
  });
  it("a chain of ties resolves to its end (lens[2].x → lens[1].x → lens[0].x)", () => {
    const s = parseModel({
      lens: [
        { type: "sie", theta_E: 1, q: 0.8, pa: 0, x: { init: 0.1, min: -1, max: 1 }, y: 0 },
        { type: "shear", gamma: 0.05, pa: 10, x: { same_as: "lens[0].x" }, y: 0 },
        { type: "multipole", order: 3, strength: 0.01, pa: 0, x: { same_as: "lens[1].x" }, y: { same_as: "lens[0].y" } },
      ],
      source: [{ type: "point_source", flux: 1, x: 0, y: 0 }],
    }, "chain.json");
    expect(freeNames(s)).toEqual(["lens[0].x"]);
    const m = toNumbers(s, [0.37]);
    expect([m.lens[0], m.lens[1], m.lens[2]].map((c) => (c as { x: number }).x)).toEqual([0.37, 0.37, 0.37]);
  });
  it("fills defaults (sie core 0, shear centre 0, 0) and copies redshift, cosmology and field", () => {
    const s = loadModelFile(`${FIXTURES}sie_shear_sersic.json`);
    const m = toNumbers(s, initialVector(s));
    expect(m.lens[0]).toEqual({ type: "sie", name: "main deflector", theta_E: 0.85, q: 0.75, pa: 40, x: 0, y: 0, core: 0 });
    expect(m.lens[1]).toEqual({ type: "shear", gamma: 0.04, pa: 110, x: 0, y: 0 });
    expect(m.redshift).toEqual({ lens: 0.45, source: 2.3 });
    expect(m.cosmology).toEqual({ H0: 70, Om0: 0.3 });
    expect(m.field).toEqual({ size_arcsec: 5.12, pixel_arcsec: 0.02 });
  });
  it("a partial cosmology block gets the CONVENTIONS.md defaults H0 = 70, Om0 = 0.3", () => {
    const s = parseModel({ lens: [], source: [{ type: "point_source", flux: 1, x: 0, y: 0 }], cosmology: { H0: 67.7 } }, "c.json");
    expect(toNumbers(s, []).cosmology).toEqual({ H0: 67.7, Om0: 0.3 });
  });
  it("source fluxes are linear parameters; a tied flux joins its target's column", () => {
    expect(spec.linear).toEqual([
      { freeIndex: 8, name: "source[0].flux", sourceIndices: [0] },
      { freeIndex: 14, name: "source[1].flux", sourceIndices: [1] },
    ]);
    const s = parseModel({
      lens: [],
      source: [
        { type: "point_source", flux: { init: 1, min: 0, max: 2 }, x: 0, y: 0 },
        { type: "point_source", flux: { same_as: "source[0].flux" }, x: 1, y: 0 },
        { type: "point_source", flux: 0.3, x: { init: 0, min: -1, max: 1 }, y: 0 },
      ],
    }, "lin.json");
    expect(s.linear).toEqual([{ freeIndex: 0, name: "source[0].flux", sourceIndices: [0, 1] }]);
    expect(s.free.map((f) => f.linear)).toEqual([true, false]);
  });
  it("a flux that also drives a non-flux parameter is not linear", () => {
    const s = parseModel({
      lens: [],
      source: [{ type: "gaussian", flux: { init: 0.1, min: 0.01, max: 1 }, sigma: { same_as: "source[0].flux" }, q: 1, pa: 0, x: 0, y: 0 }],
    }, "odd.json");
    expect(s.linear).toEqual([]);
  });
  it("toNumbers rejects a vector of the wrong length", () => {
    expect(() => toNumbers(spec, new Float64Array(3))).toThrow(/vector has 3 values; the model has 16/);
  });
});

describe("periodic position angles", () => {
  it("wrapAngleDeg maps into [0, period) (CONVENTIONS.md), including −0 and values just below 0", () => {
    expect(wrapAngleDeg(190, 180)).toBe(10);
    expect(wrapAngleDeg(-30, 180)).toBe(150);
    expect(wrapAngleDeg(180, 180)).toBe(0);
    expect(wrapAngleDeg(540.5, 180)).toBeCloseTo(0.5, 12);
    expect(Object.is(wrapAngleDeg(-0, 180), 0)).toBe(true);
    const tiny = wrapAngleDeg(-1e-20, 180); // 180 − 1e-20 rounds to 180, which must not be returned
    expect(tiny >= 0 && tiny < 180).toBe(true);
  });
  it("toNumbers reports every pa in [0, 180); fixed pa values too", () => {
    const s = parseModel({
      lens: [{ type: "sie", theta_E: 1, q: 0.8, pa: { init: 0, min: -90, max: 270 }, x: 0, y: 0 },
        { type: "shear", gamma: 0.05, pa: -20 }],
      source: [{ type: "gaussian", flux: 1, sigma: 0.1, q: 0.5, pa: { same_as: "lens[0].pa" }, x: 0, y: 0 }],
    }, "pa.json");
    expect(s.free[0].periodic).toBe(180);
    for (const [value, want] of [[200, 20], [-45, 135], [180, 0], [359.5, 179.5]] as const) {
      const m = toNumbers(s, [value]);
      expect((m.lens[0] as { pa: number }).pa).toBeCloseTo(want, 12);
      expect((m.source[0] as { pa: number }).pa).toBeCloseTo(want, 12);
      expect((m.lens[1] as { pa: number }).pa).toBe(160);
    }
  });
  it("a multipole of order m has period 360°/m (order 3 → 120°, order 4 → 90°)", () => {
    const mk = (order: number) => parseModel({
      lens: [{ type: "multipole", order, strength: 0.01, pa: { init: 10, min: 0, max: 360 }, x: 0, y: 0 }],
      source: [{ type: "point_source", flux: 1, x: 0, y: 0 }],
    }, "m.json");
    expect(mk(3).free[0].periodic).toBe(120);
    expect(mk(4).free[0].periodic).toBe(90);
    expect((toNumbers(mk(3), [130]).lens[0] as { pa: number }).pa).toBeCloseTo(10, 12);
    expect((toNumbers(mk(4), [130]).lens[0] as { pa: number }).pa).toBeCloseTo(40, 12);
  });
  it("wrapToBox wraps a periodic value into [min, min + period) when the box spans a period, and leaves others", () => {
    const s = parseModel({
      lens: [{ type: "sie", theta_E: 1, q: 0.8, pa: { init: 0, min: -90, max: 90 }, x: { init: 0, min: -1, max: 1 }, y: 0 },
        { type: "shear", gamma: 0.05, pa: { init: 10, min: 0, max: 60 } }],
      source: [{ type: "point_source", flux: 1, x: 0, y: 0 }],
    }, "w.json");
    const v = Float64Array.from([100, 5, 70]);
    wrapToBox(s, v);
    expect(v[0]).toBeCloseTo(-80, 12); // 100 ≡ −80 (mod 180), inside [−90, 90)
    expect(v[1]).toBe(5); // not periodic
    expect(v[2]).toBe(70); // box narrower than a period: a real edge, left for the prior to reject
  });
});

describe("isAtBound", () => {
  const s = parseModel({
    lens: [{ type: "sie", theta_E: { init: 1, min: 0.5, max: 2 }, q: { init: 0.8, min: 0.3, max: 1 }, pa: { init: 0, min: 0, max: 180 }, x: { init: 0, prior: { normal: [0, 0.1] } }, y: 0 }],
    source: [{ type: "point_source", flux: { init: 0.01, prior: { loguniform: [1e-4, 1] } }, x: 0, y: 0 }],
  }, "b.json");
  it("flags values within 1e-3 of the box at a hard edge, and says which", () => {
    expect(isAtBound(s, "lens[0].q", 1)).toBe("max");
    expect(isAtBound(s, "lens[0].q", 0.9995)).toBe("max"); // 0.0005 < 1e-3 · 0.7
    expect(isAtBound(s, "lens[0].q", 0.99)).toBeNull();
    expect(isAtBound(s, "lens[0].theta_E", 0.5)).toBe("min");
    expect(isAtBound(s, "source[0].flux", 1.0001e-4)).toBe("min"); // in ln x: 1e-4 ≪ 1e-3·ln(1e4)
  });
  it("a pa box spanning a full period and an unbounded normal have no edge", () => {
    expect(isAtBound(s, "lens[0].pa", 0)).toBeNull();
    expect(isAtBound(s, "lens[0].pa", 180)).toBeNull();
    expect(isAtBound(s, "lens[0].x", 0.5)).toBeNull();
  });
  it("throws for a name that is not free", () => {
    expect(() => isAtBound(s, "lens[0].y", 0)).toThrow(/lens\[0\]\.y is not a free parameter of b\.json/);
  });
});

describe("fixtures and sky files", () => {
  it("the three example model files load, and their initial vectors have finite prior inside the search box", () => {
    for (const f of ["sie_shear_sersic", "epl_shear_two_gaussians", "pixelised_source"]) {
      const s = loadModelFile(`${FIXTURES}${f}.json`);
      const v = initialVector(s);
      const b = bounds(s);
      v.forEach((x, i) => {
        expect(x >= b.lower[i] && x <= b.upper[i], `${f} ${s.free[i].name}`).toBe(true);
      });
    }
  });
  it("the pixelised fixture carries grid, cells, regularisation and a free lambda", () => {
    const s = loadModelFile(`${FIXTURES}pixelised_source.json`);
    const m = toNumbers(s, initialVector(s));
    expect(m.source[0]).toEqual({ type: "pixelised", grid: "regular", regularisation: "curvature", cells: 40, lambda: 10 });
    expect(freeNames(s)).toContain("source[0].lambda");
  });
  it("loadSkyFile: the truth is every free parameter at its init", () => {
    const sky = loadSkyFile(`${FIXTURES}sie_shear_sersic.json`);
    expect((sky.truth.lens[0] as { theta_E: number }).theta_E).toBe(0.85);
    expect((sky.truth.source[0] as { flux: number }).flux).toBe(0.012);
    expect(sky.spec.free.length).toBe(14);
  });
  it("loadSkyFile with numbers only: no free parameters, the truth is the file", () => {
    const dir = mkdtempSync(join(tmpdir(), "arcfringe-sky-"));
    const path = join(dir, "sky.json");
    const sky = { lens: [{ type: "point", theta_E: 0.4, x: 0.1, y: -0.1 }], source: [{ type: "gaussian", flux: 0.02, sigma: 0.1, q: 0.7, pa: 200, x: 0, y: 0 }] };
    writeFileSync(path, JSON.stringify(sky));
    const loaded = loadSkyFile(path);
    expect(loaded.spec.free).toEqual([]);
    expect(loaded.truth.lens).toEqual([{ type: "point", theta_E: 0.4, x: 0.1, y: -0.1 }]);
    expect(loaded.truth.source).toEqual([{ type: "gaussian", flux: 0.02, sigma: 0.1, q: 0.7, pa: 20, x: 0, y: 0 }]);
  });
  it("round trip: the numbers-only model is itself a valid model file that maps to the same numbers", () => {
    // result.json's `model` is written in this form (DESIGN.md), so it must load again unchanged.
    const rng = new Rng(99);
    for (const f of ["sie_shear_sersic", "epl_shear_two_gaussians", "pixelised_source"]) {
      const s = loadModelFile(`${FIXTURES}${f}.json`);
      const v = new Float64Array(s.free.length);
      for (let k = 0; k < 20; k++) {
        priorTransform(s, Float64Array.from(v, () => rng.uniform()), v);
        const numbers = toNumbers(s, v);
        const again = parseModel(JSON.parse(JSON.stringify(numbers)), "roundtrip.json");
        expect(again.free).toEqual([]);
        expect(toNumbers(again, [])).toEqual(numbers);
      }
    }
  });
});
