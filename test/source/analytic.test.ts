import { describe, expect, it } from "vitest";
import { buildSource } from "../../src/source/analytic.js";
import { expectAbs, expectRel } from "../helpers.js";

/** Midpoint-rule integral of the source brightness over a square of half-width L [arcsec]. */
function integrateSource(evaluate: (bx: Float64Array, by: Float64Array, out: Float64Array) => void, L: number, n: number): number {
  const h = (2 * L) / n;
  const bx = new Float64Array(n * n);
  const by = new Float64Array(n * n);
  for (let j = 0; j < n; j++) {
    for (let i = 0; i < n; i++) {
      bx[j * n + i] = -L + (i + 0.5) * h;
      by[j * n + i] = -L + (j + 0.5) * h;
    }
  }
  const out = new Float64Array(n * n);
  evaluate(bx, by, out);
  let s = 0;
  for (let k = 0; k < out.length; k++) s += out[k];
  return s * h * h;
}

describe("AnalyticSource", () => {
  const src = buildSource([
    { type: "gaussian", flux: 0.004, sigma: 0.08, q: 0.5, pa: 30, x: 0.1, y: -0.05 },
    { type: "sersic", flux: 0.01, r_eff: 0.15, n: 1, q: 0.8, pa: 40, x: 0.05, y: -0.02, spectral_index: -0.7, ref_freq_ghz: 230 },
    { type: "point_source", flux: 0.002, x: 0.3, y: 0.2 },
  ]);

  it("each extended component integrates to its flux (midpoint rule over a wide square)", () => {
    // Definition of the `flux` parameter (CONVENTIONS.md "Sources"). An 800² midpoint rule over
    // ±1.5″ resolves the n = 1 Sérsic cusp to ~1e-6 and the Gaussian spectrally; the Sérsic
    // tail beyond 1.5″ = 10 R_e is e^{-1.68·10}·… ≈ 1e-6 of the flux → rtol 1e-5.
    expectRel(integrateSource((bx, by, o) => src.evaluateComponent(0, bx, by, o), 1.5, 800), 1, 1e-5, "Gaussian");
    expectRel(integrateSource((bx, by, o) => src.evaluateComponent(1, bx, by, o), 1.5, 800), 1, 1e-5, "Sérsic");
    expectRel(integrateSource((bx, by, o) => src.evaluate(bx, by, o), 1.5, 800), 0.014, 1e-5, "sum");
  });

  it("the Gaussian peak is F/(2πσ²) and its major axis lies along pa (σ_major = σ/√q)", () => {
    // REFERENCES.md §5 elliptical Gaussian definition → exact values (round-off).
    const out = new Float64Array(2);
    const phi = (30 * Math.PI) / 180;
    const d = 0.08 / Math.sqrt(0.5); // one σ_major along pa
    src.evaluateComponent(0, Float64Array.of(0.1, 0.1 + d * Math.sin(phi)), Float64Array.of(-0.05, -0.05 + d * Math.cos(phi)), out);
    expectRel(out[0], 1 / (2 * Math.PI * 0.08 * 0.08), 1e-14);
    expectRel(out[1] / out[0], Math.exp(-0.5), 1e-13);
  });

  it("applies S ∝ (ν/ν_ref)^α and counts point sources in the total flux", () => {
    // Definition (common practice): at 2·ν_ref a component with α = −0.7 has 2^−0.7 of its flux.
    expectRel(src.componentFluxJy(1, 460e9), 0.01 * 2 ** -0.7, 1e-14);
    expectRel(src.totalFluxJy(), 0.016, 1e-14);
    expectRel(src.totalFluxJy(460e9), 0.004 + 0.01 * 2 ** -0.7 + 0.002, 1e-14);
    expect(src.isPoint(2)).toBe(true);
    const out = new Float64Array(1);
    src.evaluateComponent(2, Float64Array.of(0.3), Float64Array.of(0.2), out);
    expectAbs(out[0], 0, 0);
  });

  it("rejects bad components with one line naming the parameter", () => {
    expect(() => buildSource([{ type: "sersic", flux: 1, r_eff: 0.2, n: 1, q: 1.3, pa: 0, x: 0, y: 0 }])).toThrow(
      "source[0].q: 1.3 is outside (0, 1]",
    );
    expect(() => buildSource([{ type: "gaussian", flux: 1, q: 1, pa: 0, x: 0, y: 0 }])).toThrow(
      "source[0].sigma: missing; a gaussian component needs sigma",
    );
    expect(() => buildSource([{ type: "sersic", flux: 1, r_eff: 0.2, n: 1, q: 1, pa: 0, x: 0, y: 0, spectral_index: 2 }])).toThrow(
      /source\[0\]\.ref_freq_ghz: missing/,
    );
    expect(() => buildSource([{ type: "disc", flux: 1 }])).toThrow(/source\[0\]\.type: "disc" is not a source type/);
  });
});
