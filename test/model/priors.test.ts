/**
 * Prior densities integrate to 1, the prior transform inverts their CDFs, and the search box
 * follows the stated rule. References: the densities' closed forms (analytic), the mean of a
 * truncated normal μ + σ(φ(α) − φ(β))/Z (Johnson, Kotz & Balakrishnan 1994, Continuous
 * Univariate Distributions vol. 1, §10.1, from memory), and Φ⁻¹(0.975) = 1.959963984540054
 * (Abramowitz & Stegun 1964, 26.2 tables).
 */
import { describe, expect, it } from "vitest";
import { bounds, logPrior, parseModel, priorTransform, type ModelSpec } from "../../src/model/index.js";
import { Rng } from "../../src/random.js";
import { expectAbs, expectRel } from "../helpers.js";

/** A one-free-parameter model: a point source whose `key` takes `value`. */
function oneParam(key: "x" | "flux", value: unknown): ModelSpec {
  const src: Record<string, unknown> = { type: "point_source", flux: 0.01, x: 0, y: 0 };
  src[key] = value;
  return parseModel({ lens: [], source: [src] }, "test.json");
}
/** A one-free-parameter SIE model with theta_E = value (range (0, ∞)). */
function thetaE(value: unknown): ModelSpec {
  return parseModel({ lens: [{ type: "sie", theta_E: value, q: 0.8, pa: 0, x: 0, y: 0 }], source: [{ type: "point_source", flux: 1, x: 0, y: 0 }] }, "test.json");
}

/**
 * exp(logPrior) as a function of one value. At an excluded end (θ_E = 0) the density is 0 by
 * definition but its limit is not; Simpson's rule samples the end point, so it is evaluated
 * at the nearest representable value inside instead (a measure-zero change).
 */
const density = (spec: ModelSpec) => (x: number): number =>
  Math.exp(logPrior(spec, [x === 0 ? Number.MIN_VALUE : x]));

/** Composite Simpson rule on `panels` geometric (a > 0) or uniform panels of 64 intervals each. */
function integrate(f: (x: number) => number, a: number, b: number, panels = 200, geometric = false): number {
  let total = 0;
  for (let k = 0; k < panels; k++) {
    const lo = geometric ? a * Math.pow(b / a, k / panels) : a + ((b - a) * k) / panels;
    const hi = geometric ? a * Math.pow(b / a, (k + 1) / panels) : a + ((b - a) * (k + 1)) / panels;
    const n = 64;
    const h = (hi - lo) / n;
    let s = f(lo) + f(hi);
    for (let i = 1; i < n; i++) s += (i % 2 === 1 ? 4 : 2) * f(lo + i * h);
    total += (s * h) / 3;
  }
  return total;
}

// Tolerance for the normalisations: 1e-6 as the brief asks; Simpson with 12 800 intervals on
// these smooth integrands is accurate to ~1e-12, so a wrong constant (even 1e-5 off) fails.
describe("logPrior is a normalised density", () => {
  it("uniform on [−0.5, 1.5] integrates to 1 (analytic density 1/(b − a))", () => {
    const spec = oneParam("x", { init: 0, min: -0.5, max: 1.5 });
    expectAbs(integrate(density(spec), -0.5, 1.5), 1, 1e-6);
    expectRel(density(spec)(0.3), 0.5, 1e-15, "1/(b − a)");
  });
  it("log-uniform on [1e-3, 10] integrates to 1 (analytic density 1/(x ln(b/a)))", () => {
    const spec = oneParam("flux", { init: 0.01, prior: { loguniform: [1e-3, 10] } });
    expectAbs(integrate(density(spec), 1e-3, 10, 200, true), 1, 1e-6);
    expectRel(density(spec)(0.1), 1 / (0.1 * Math.log(1e4)), 1e-14, "1/(x ln(b/a))");
  });
  it("untruncated normal N(0.3, 0.2) integrates to 1 over μ ± 12σ (mass outside 3.6e-33)", () => {
    const spec = oneParam("x", { init: 0.3, prior: { normal: [0.3, 0.2] } });
    expectAbs(integrate(density(spec), 0.3 - 2.4, 0.3 + 2.4), 1, 1e-6);
    expectRel(density(spec)(0.3), 1 / (0.2 * Math.sqrt(2 * Math.PI)), 1e-14, "peak 1/(σ√(2π))");
  });
  it("normal N(1, 0.5) truncated to [0.2, 1.5] by min/max integrates to 1", () => {
    const spec = oneParam("x", { init: 1, prior: { normal: [1, 0.5] }, min: 0.2, max: 1.5 });
    expectAbs(integrate(density(spec), 0.2, 1.5), 1, 1e-6);
    expect(logPrior(spec, [0.19])).toBe(-Infinity);
    expect(logPrior(spec, [1.51])).toBe(-Infinity);
  });
  it("normal N(0, 1) truncated to [3, 4], far in the upper tail, integrates to 1", () => {
    const spec = oneParam("x", { init: 3.5, prior: { normal: [0, 1] }, min: 3, max: 4 });
    expectAbs(integrate(density(spec), 3, 4), 1, 1e-6);
  });
  it("normal N(0, 1) with only min = −0.5 integrates to 1 over [−0.5, 14]", () => {
    const spec = oneParam("x", { init: 0, prior: { normal: [0, 1] }, min: -0.5 });
    expectAbs(integrate(density(spec), -0.5, 14), 1, 1e-6);
  });
  it("normal on theta_E is truncated to its allowed range (0, ∞) and renormalised", () => {
    const spec = thetaE({ init: 0.2, prior: { normal: [0.1, 0.2] } });
    expectAbs(integrate(density(spec), 0, 0.1 + 12 * 0.2), 1, 1e-6);
    expect(logPrior(spec, [0])).toBe(-Infinity); // θ_E = 0 is excluded
    expect(logPrior(spec, [-0.01])).toBe(-Infinity);
  });
  it("logPrior sums independent terms: two uniforms give −ln(w1·w2)", () => {
    const spec = parseModel({ lens: [], source: [{ type: "point_source", flux: 1, x: { init: 0, min: -1, max: 1 }, y: { init: 0, min: 0, max: 4 } }] }, "t");
    expectRel(logPrior(spec, [0.5, 3]), -Math.log(8), 1e-15);
    expect(logPrior(spec, [0.5, NaN])).toBe(-Infinity);
  });
});

describe("priorTransform inverts each prior's CDF", () => {
  const at = (spec: ModelSpec, u: number): number => {
    const out = new Float64Array(1);
    priorTransform(spec, [u], out);
    return out[0];
  };
  it("normal N(2, 0.5): u = 0.975 gives 2 + 0.5·1.959963984540054 (A&S 26.2) to 1e-9", () => {
    const spec = oneParam("x", { init: 2, prior: { normal: [2, 0.5] } });
    expectRel(at(spec, 0.975), 2 + 0.5 * 1.959963984540054, 1e-9);
    expectRel(at(spec, 0.5), 2, 1e-15);
  });
  it("uniform: u ↦ a + u(b − a) (analytic)", () => {
    const spec = oneParam("x", { init: 0, min: -0.5, max: 1.5 });
    expectAbs(at(spec, 0.25), 0, 1e-15);
    expectRel(at(spec, 0.75), 1, 1e-15);
  });
  it("log-uniform: the median is √(ab) (analytic)", () => {
    const spec = oneParam("flux", { init: 0.01, prior: { loguniform: [1e-3, 10] } });
    expectRel(at(spec, 0.5), Math.sqrt(1e-3 * 10), 1e-14);
    expectRel(at(spec, 0), 1e-3, 1e-15);
    expectRel(at(spec, 1), 10, 1e-14);
  });
  // For truncated normals the reference CDF is the Simpson integral of exp(logPrior), an
  // independent path; 1e-8 absolute leaves room for Simpson error (~1e-12) and none for a
  // wrong truncation.
  const truncated: [string, ModelSpec, number, number][] = [
    ["N(1, 0.5) on [0.2, 1.5]", oneParam("x", { init: 1, prior: { normal: [1, 0.5] }, min: 0.2, max: 1.5 }), 0.2, 1.5],
    ["N(0, 1) on [3, 4]", oneParam("x", { init: 3.5, prior: { normal: [0, 1] }, min: 3, max: 4 }), 3, 4],
    ["N(0, 1) on [−6, −5]", oneParam("x", { init: -5.5, prior: { normal: [0, 1] }, min: -6, max: -5 }), -6, -5],
    ["N(0.1, 0.2) on θ_E > 0", thetaE({ init: 0.2, prior: { normal: [0.1, 0.2] } }), 0, 3],
  ];
  for (const [label, spec, lo] of truncated) {
    it(`truncated ${label}: CDF(transform(u)) = u for u in 0.01..0.99`, () => {
      const f = density(spec);
      for (const u of [0.01, 0.1, 0.3, 0.5, 0.7, 0.9, 0.99]) {
        const x = at(spec, u);
        expectAbs(integrate(f, lo, x, 50), u, 1e-8, `CDF at transform(${u})`);
      }
    });
  }
  it("samples of a truncated normal have the analytic mean μ + σ(φ(α) − φ(β))/Z (20 000 draws, 4 sd)", () => {
    // N(1, 0.5) on [0.2, 1.5]: α = −1.6, β = 1. φ(−1.6) = 0.110920834679456, φ(1) = 0.241970724519143,
    // Z = Φ(1) − Φ(−1.6) = 0.841344746068543 − 0.054799291699558 = 0.786545454368985
    // (A&S 26.1/26.2 tables, digits via mpmath 1.3.0).
    const mean = 1 + (0.5 * (0.110920834679456 - 0.241970724519143)) / 0.786545454368985;
    const spec = oneParam("x", { init: 1, prior: { normal: [1, 0.5] }, min: 0.2, max: 1.5 });
    const rng = new Rng(20240611);
    const out = new Float64Array(1);
    const n = 20000;
    let s = 0;
    let s2 = 0;
    for (let i = 0; i < n; i++) {
      priorTransform(spec, [rng.uniform()], out);
      s += out[0];
      s2 += out[0] * out[0];
    }
    const m = s / n;
    const sdMean = Math.sqrt((s2 / n - m * m) / n);
    // Four standard errors: a false failure has probability 6e-5 for this fixed seed's class of draws.
    expectAbs(m, mean, 4 * sdMean, "sample mean");
  });
  it("rejects a unit-cube vector of the wrong length", () => {
    const spec = oneParam("x", { init: 0, min: -1, max: 1 });
    expect(() => priorTransform(spec, [0.1, 0.2], new Float64Array(2))).toThrow(/vector has 2 values; the model has 1/);
  });
});

describe("bounds gives a finite search box", () => {
  it("uniform [min, max]; normal mean ± 5 sd clipped to min/max; log-uniform [a, b]", () => {
    const spec = parseModel({
      lens: [],
      source: [{
        type: "point_source",
        flux: { init: 0.01, prior: { loguniform: [1e-4, 1] } },
        x: { init: 0, min: -2, max: 3 },
        y: { init: 0.1, prior: { normal: [0.1, 0.1] }, max: 0.3 },
      }],
    }, "t");
    const b = bounds(spec);
    expect(Array.from(b.lower)).toEqual([1e-4, -2, 0.1 - 0.5]);
    expect(Array.from(b.upper)).toEqual([1, 3, 0.3]);
  });
  it("a normal reaching an excluded end (θ_E > 0) stops 1e-6 of the box inside it", () => {
    const b = bounds(thetaE({ init: 0.2, prior: { normal: [0.1, 0.2] } }));
    const width = 0.1 + 5 * 0.2;
    expectRel(b.lower[0], 1e-6 * width, 1e-12, "lower");
    expectRel(b.upper[0], 1.1, 1e-15, "upper");
  });
});
