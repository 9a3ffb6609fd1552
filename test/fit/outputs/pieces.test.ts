/**
 * The pieces behind writeFitOutputs, each against an analytic form or a stated convention:
 * confidence ellipses of a Gaussian, amplitude/phase of binned visibilities, number rounding,
 * HTML escaping, the choice of traced parameters, the shared colour scale of the dirty-image
 * comparison, and the refusals (bad chain shapes, off-centre sky grids).
 */
import { existsSync, mkdtempSync, readdirSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import {
  amplitudePhase, covarianceEllipse, encodeGridImage, escapeHtml, fitFigureSpecs, formatWithSigma, traceParameters,
  writeChainFile, writeFitOutputs, HESSIAN_CORNER_TITLE,
} from "../../../src/fit/outputs/index.js";
import { dirtyComparisonSvg } from "../../../src/fit/outputs/imageFigures.js";
import { colourAt, colourMap } from "../../../src/io/colormap.js";
import { expectAbs, expectRel } from "../../helpers.js";
import { decodePng } from "../../pngDecode.js";
import { N, syntheticOutcome } from "./syntheticOutcome.js";

describe("covarianceEllipse", () => {
  it("traces Δᵀ C⁻¹ Δ = s² and spans s·σ_x in x (analytic)", () => {
    const cxx = 4e-4, cyy = 9e-2, rho = -0.7, cxy = rho * Math.sqrt(cxx * cyy);
    const det = cxx * cyy - cxy * cxy;
    for (const s of [1, 2]) {
      const e = covarianceEllipse(1.5, -3, cxx, cxy, cyy, s, 721);
      let xMax = -Infinity;
      for (let k = 0; k < e.x.length; k++) {
        const dx = e.x[k] - 1.5, dy = e.y[k] + 3;
        // Inverse of a 2×2 matrix: [[cyy, −cxy], [−cxy, cxx]] / det (analytic).
        const m = (cyy * dx * dx - 2 * cxy * dx * dy + cxx * dy * dy) / det;
        expectRel(m, s * s, 1e-12, `Mahalanobis² at point ${k}`);
        xMax = Math.max(xMax, dx);
      }
      // The ellipse's extent along x is s·sqrt(cxx) (projection of the contour of a Gaussian,
      // analytic); 721 samples reach it to within 1 − cos(π/720) ≈ 1e-5 relative.
      expectRel(xMax, s * Math.sqrt(cxx), 2e-5, "x half-width");
      expectAbs(e.x[0], e.x[e.x.length - 1], 1e-15, "closed curve");
    }
  });

  it("gives no points for a covariance that is not positive definite", () => {
    expect(covarianceEllipse(0, 0, 1, 1, 1, 1).x.length).toBe(0); // ρ = 1: singular
    expect(covarianceEllipse(0, 0, 0, 0, 1, 1).x.length).toBe(0); // σ_x = 0
  });
});

describe("amplitudePhase", () => {
  it("gives |V|, arg V in degrees and first-order errors σ and σ/|V| (analytic)", () => {
    const r = amplitudePhase(Float64Array.of(3, -1, 0.01, 2), Float64Array.of(4, 0, 0, 0), Float64Array.of(0.5, 0.1, 0.1, 0.1), Int32Array.of(10, 5, 3, 0));
    // 3 + 4i: |V| = 5, arg = atan(4/3) = 53.13010235415598° (analytic); σ_φ = 0.5/5 rad = 5.729577951308232°.
    expectRel(r.amplitudeJy[0], 5, 1e-15, "|3+4i|");
    expectRel(r.phaseDeg[0], 53.13010235415598, 1e-14, "arg(3+4i)");
    expectRel(r.amplitudeErrJy[0], 0.5, 0, "σ_|V|");
    expectRel(r.phaseErrDeg[0], 5.729577951308232, 1e-14, "σ_φ");
    // −1: phase 180° (atan2 convention, analytic).
    expectRel(r.phaseDeg[1], 180, 1e-15, "arg(−1)");
    // |V| = 0.01 < σ = 0.1: the phase is unconstrained, its bar capped at 180°.
    expect(r.phaseErrDeg[2]).toBe(180);
    // An empty bin is NaN (skipped by the plots).
    expect([r.amplitudeJy[3], r.phaseDeg[3], r.amplitudeErrJy[3], r.phaseErrDeg[3]].every(Number.isNaN)).toBe(true);
  });
});

describe("report formatting", () => {
  it("formatWithSigma rounds the value to the second significant digit of σ (common practice, PDG style)", () => {
    expect(formatWithSigma(1.23456, 0.0123)).toEqual({ value: "1.235", sigma: "0.012" });
    expect(formatWithSigma(37.24, 1.5)).toEqual({ value: "37.2", sigma: "1.5" });
    expect(formatWithSigma(-0.5, 0.25)).toEqual({ value: "-0.50", sigma: "0.25" });
    expect(formatWithSigma(2.5, NaN)).toEqual({ value: "2.5", sigma: "—" });
  });

  it("escapeHtml neutralises the five HTML-significant characters (HTML Living Standard §13.1)", () => {
    expect(escapeHtml(`<img src=x onerror='a()'> & "q"`)).toBe("&lt;img src=x onerror=&#39;a()&#39;&gt; &amp; &quot;q&quot;");
  });
});

describe("traceParameters", () => {
  it("picks the parameters with the longest τ (unknown τ first), shown in index order", () => {
    expect(traceParameters(Float64Array.of(5, 40, 3, NaN, 12, 7), 6)).toEqual([1, 3, 4, 5]);
    expect(traceParameters(Float64Array.of(2, 1), 2)).toEqual([0, 1]);
  });
});

describe("figures", () => {
  it("the corner figure is the titled curvature approximation without samples, and a sample plot with them", () => {
    const hess = fitFigureSpecs(syntheticOutcome({ sampled: false, warnings: [], withTruth: false })).find((f) => f.file === "corner.png")!;
    expect(hess.svg.includes("curvature (Hessian) approximation")).toBe(true);
    expect(hess.svg.includes(HESSIAN_CORNER_TITLE)).toBe(true);
    expect(hess.caption).toMatch(/curvature \(Hessian\) approximation/);
    const samp = fitFigureSpecs(syntheticOutcome({ sampled: true, warnings: [], withTruth: true })).find((f) => f.file === "corner.png")!;
    expect(samp.svg.includes("Hessian")).toBe(false);
    expect(samp.svg.includes("320 samples")).toBe(true); // (60 − 20 burn-in steps) × 8 walkers
  });

  it("dirty_comparison draws data, model and residual on ONE symmetric colour scale", () => {
    const o = syntheticOutcome({ sampled: false, warnings: [], withTruth: false });
    const svg = dirtyComparisonSvg(o);
    const pngs = [...svg.matchAll(/href="data:image\/png;base64,([^"]+)"/g)].map((m) => decodePng(Buffer.from(m[1], "base64")));
    // Three maps (N×N) and one colour bar: only the last panel carries a bar on a shared scale.
    const maps = pngs.filter((p) => p.width === N && p.height === N);
    expect(maps.length).toBe(3);
    expect(pngs.length).toBe(4);
    const images = [o.images.dataDirty.data, o.images.modelDirty.data, o.images.residualDirty.data];
    let vmax = 0;
    for (const d of images) for (const v of d) vmax = Math.max(vmax, Math.abs(v));
    // Each map's brightest pixel must have the colour of its value on the common scale [−vmax, vmax]
    // (cool–warm map, t = (v + vmax)/(2 vmax)); on per-panel scales the residual's would be dark red.
    const cw = colourMap("coolwarm");
    images.forEach((d, m) => {
      let k = 0;
      for (let q = 1; q < d.length; q++) if (d[q] > d[k]) k = q;
      const i = k % N, j = Math.floor(k / N);
      const at = 4 * ((N - 1 - j) * N + i); // PNG rows run top (North) to bottom
      const want = new Uint8Array(3);
      colourAt(cw, (d[k] + vmax) / (2 * vmax), want, 0);
      expect(Array.from(maps[m].rgba.subarray(at, at + 3)), `panel ${m}`).toEqual(Array.from(want));
    });
  });
});

describe("refusals and partial outputs", () => {
  it("a chain whose arrays disagree with its shape is refused before anything is written", async () => {
    const dir = mkdtempSync(join(tmpdir(), "arcfringe-chain-bad-"));
    try {
      const o = syntheticOutcome({ sampled: true, warnings: [], withTruth: false });
      const chain = { ...o.chain!, logPosterior: o.chain!.logPosterior.subarray(1) };
      await expect(writeChainFile(join(dir, "chain.h5"), { names: o.names, units: o.units, chain })).rejects.toThrow(
        /log_posterior has 479 values; expected 480/,
      );
      expect(readdirSync(dir)).toEqual([]);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });

  it("nested samples alone give chain.h5 but no trace figure", async () => {
    const dir = mkdtempSync(join(tmpdir(), "arcfringe-nested-"));
    try {
      const o = syntheticOutcome({ sampled: true, warnings: [], withTruth: false });
      const nestedOnly = { ...o, chain: undefined, uncertaintyMethod: "nested" as const };
      const files = await writeFitOutputs(dir, nestedOnly);
      expect(files).toContain("chain.h5");
      expect(files).not.toContain("chain_trace.png");
      expect(existsSync(join(dir, "report.html"))).toBe(true);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });

  it("a sky image not centred on the phase centre is refused (its CRPIX would be wrong)", () => {
    const o = syntheticOutcome({ sampled: false, warnings: [], withTruth: false });
    const off = { ...o.images.modelSky, centreXArcsec: 0.3 };
    expect(() => encodeGridImage(off, { kind: "sky", raDeg: 10, decDeg: 20 }, undefined, [])).toThrow(/centred at \(0\.3, 0\) arcsec/);
  });
});
