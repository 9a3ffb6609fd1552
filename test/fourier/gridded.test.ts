import { describe, expect, it } from "vitest";
import { directForward } from "../../src/fourier/direct.js";
import { GriddedStats } from "../../src/fourier/gridded.js";
import { pixelWindow } from "../../src/fourier/window.js";
import { Rng } from "../../src/random.js";
import { expectRel, relL2 } from "../helpers.js";

const N = 24;
const CELL = 1e-7; // rad
const G = { nx: N, ny: N, cellRad: CELL };

/** Noisy multi-channel data: u, v scale with each group's frequency; per-group model images. */
function dataset(seed: number, m: number, groups: number) {
  const rng = new Rng(seed);
  const u = new Float64Array(m);
  const v = new Float64Array(m);
  const re = new Float64Array(m);
  const im = new Float64Array(m);
  const weight = new Float64Array(m);
  const group = new Int32Array(m);
  // A smooth sky: a few Gaussian blobs; group g sees it at frequency factor f_g (spectral index).
  const images: Float64Array[] = [];
  for (let g = 0; g < groups; g++) {
    const f = 1 + 0.05 * g;
    const img = new Float64Array(N * N);
    for (let j = 0; j < N; j++)
      for (let i = 0; i < N; i++) {
        const x = i - 9;
        const y = j - 13;
        img[j * N + i] = f ** -0.7 * (Math.exp(-(x * x + y * y) / 8) + 0.5 * Math.exp(-((x - 6) ** 2 + (y + 4) ** 2) / 3));
      }
    images.push(img);
  }
  for (let k = 0; k < m; k++) {
    const g = k % groups;
    const scale = 1 + 0.05 * g; // u, v in wavelengths of the group's channel
    u[k] = ((rng.uniform() - 0.5) * 0.8 * scale) / CELL / 1.2;
    v[k] = ((rng.uniform() - 0.5) * 0.8 * scale) / CELL / 1.2;
    group[k] = g;
    const sigma = 0.3 + rng.uniform();
    weight[k] = 1 / (sigma * sigma);
  }
  // Data = true model (per group) + noise, so χ² is a realistic mix of cancelling terms.
  for (let g = 0; g < groups; g++) {
    const idx: number[] = [];
    for (let k = 0; k < m; k++) if (group[k] === g) idx.push(k);
    const ug = Float64Array.from(idx, (k) => u[k]);
    const vg = Float64Array.from(idx, (k) => v[k]);
    const mr = new Float64Array(idx.length);
    const mi = new Float64Array(idx.length);
    directForward(G, images[g], ug, vg, mr, mi, true);
    idx.forEach((k, q) => {
      const s = 1 / Math.sqrt(weight[k]);
      re[k] = mr[q] + s * rng.normal();
      im[k] = mi[q] + s * rng.normal();
    });
  }
  return { u, v, re, im, weight, group, images };
}

/** Per-visibility χ² Σ w[(Re d − Re m)² + (Im d − Im m)²], m = M/h by the direct transform. */
function directChi2(d: ReturnType<typeof dataset>, models: Float64Array[]): number {
  let chi2 = 0;
  const one = new Float64Array(1);
  const oneV = new Float64Array(1);
  const mr = new Float64Array(1);
  const mi = new Float64Array(1);
  for (let k = 0; k < d.u.length; k++) {
    one[0] = d.u[k];
    oneV[0] = d.v[k];
    directForward(G, models[d.group[k]], one, oneV, mr, mi, true);
    chi2 += d.weight[k] * ((d.re[k] - mr[0]) ** 2 + (d.im[k] - mi[0]) ** 2);
  }
  return chi2;
}

describe("GriddedStats", () => {
  for (const groups of [1, 3, 8]) {
    it(`chi2 equals the per-visibility χ² with ${groups} channel group(s)`, () => {
      // The expansion of χ² is exact algebra (DESIGN.md); D and B come from NUFFTs at 1e-12 and
      // the sums are compensated, so agreement is ~1e-11: assert rtol 1e-8 (the brief's target).
      const d = dataset(100 + groups, 1200, groups);
      const stats = new GriddedStats(
        { uLambda: d.u, vLambda: d.v, reJy: d.re, imJy: d.im, weight: d.weight, group: groups > 1 ? d.group : undefined },
        { n: N, cellRad: CELL },
      );
      expect(stats.groupCount).toBe(groups);
      // At the truth (χ² ≈ 2 n_vis) and at a perturbed model (χ² larger).
      const perturbed = d.images.map((img, g) => img.map((x, p) => x * (1.1 + 0.01 * g) + 0.01 * Math.sin(p)));
      for (const models of [d.images, perturbed]) {
        const ref = directChi2(d, models);
        expectRel(stats.chi2(models), ref, 1e-8, `χ² with ${groups} groups`);
      }
      if (groups === 1) {
        // One image for every group is accepted as a bare Float64Array.
        expectRel(stats.chi2(d.images[0]), directChi2(d, d.images), 1e-8, "χ², single image");
      }
    });
  }

  it("D, Σw|d|² and applyB match brute-force sums", () => {
    // D_p = Σ (w/h) Re[d e^{+2πi(u x_p + v y_p)}] and (B⋆J)_p = Σ_q Σ_k (w/h²) cos 2π(u Δx + v Δy) J_q
    // by direct loops (DESIGN.md definitions); NUFFT at 1e-12 → rtol 1e-9 on ℓ2.
    const n = 8;
    const g = { nx: n, ny: n, cellRad: CELL };
    const rng = new Rng(9);
    const m = 60;
    const u = Float64Array.from({ length: m }, () => (rng.uniform() - 0.5) / CELL);
    const v = Float64Array.from({ length: m }, () => (rng.uniform() - 0.5) / CELL);
    const re = Float64Array.from({ length: m }, () => rng.normal());
    const im = Float64Array.from({ length: m }, () => rng.normal());
    const weight = Float64Array.from({ length: m }, () => 0.5 + rng.uniform());
    const stats = new GriddedStats({ uLambda: u, vLambda: v, reJy: re, imJy: im, weight }, { n, cellRad: CELL });
    const xOf = (i: number) => (n / 2 - i) * CELL;
    const yOf = (j: number) => (j - n / 2) * CELL;
    const dRef = new Float64Array(n * n);
    let dsq = 0;
    for (let k = 0; k < m; k++) dsq += weight[k] * (re[k] ** 2 + im[k] ** 2);
    for (let j = 0; j < n; j++)
      for (let i = 0; i < n; i++) {
        let s = 0;
        for (let k = 0; k < m; k++) {
          const ph = 2 * Math.PI * (u[k] * xOf(i) + v[k] * yOf(j));
          s += (weight[k] / pixelWindow(u[k], v[k], CELL)) * (re[k] * Math.cos(ph) - im[k] * Math.sin(ph));
        }
        dRef[j * n + i] = s;
      }
    expect(relL2(stats.dataTerm(), dRef)).toBeLessThan(1e-9);
    expectRel(stats.sumWeightedDataSq(), dsq, 1e-14, "Σw|d|²");
    const J = Float64Array.from({ length: n * n }, () => rng.normal());
    const out = new Float64Array(n * n);
    stats.applyB(J, out);
    const bRef = new Float64Array(n * n);
    for (let jp = 0; jp < n; jp++)
      for (let ip = 0; ip < n; ip++) {
        let s = 0;
        for (let jq = 0; jq < n; jq++)
          for (let iq = 0; iq < n; iq++) {
            let b = 0;
            for (let k = 0; k < m; k++) {
              const h = pixelWindow(u[k], v[k], CELL);
              b += (weight[k] / (h * h)) * Math.cos(2 * Math.PI * (u[k] * (xOf(ip) - xOf(iq)) + v[k] * (yOf(jp) - yOf(jq))));
            }
            s += b * J[jq * n + iq];
          }
        bRef[jp * n + ip] = s;
      }
    expect(relL2(out, bRef)).toBeLessThan(1e-9);
    // ⟨J, B⋆J⟩ by the half-spectrum route equals ⟨J, applyB(J)⟩ (two FFT routes; round-off → 1e-12).
    let q = 0;
    for (let p = 0; p < n * n; p++) q += J[p] * out[p];
    expectRel(stats.quadratic(J), q, 1e-12, "quadratic");
  });

  it("rejects bad input with one-line messages", () => {
    const a = new Float64Array(3);
    expect(() => new GriddedStats({ uLambda: a, vLambda: a, reJy: a, imJy: a, weight: new Float64Array(2) }, { n: 8, cellRad: CELL })).toThrow(
      /weight has 2 entries but uLambda has 3/,
    );
    const w = new Float64Array([1, -1, 1]);
    expect(() => new GriddedStats({ uLambda: a, vLambda: a, reJy: a, imJy: a, weight: w }, { n: 8, cellRad: CELL })).toThrow(
      /visibility 1 has .* weight = -1; .* weights finite and ≥ 0/,
    );
    const far = new Float64Array([0, 0, 0.7 / CELL]);
    expect(() => new GriddedStats({ uLambda: far, vLambda: a, reJy: a, imJy: a, weight: new Float64Array(3).fill(1) }, { n: 8, cellRad: CELL })).toThrow(
      /beyond the model grid's Nyquist limit/,
    );
    const stats = new GriddedStats({ uLambda: a, vLambda: a, reJy: a, imJy: a, weight: new Float64Array(3).fill(1) }, { n: 8, cellRad: CELL });
    expect(() => stats.chi2(new Float64Array(10))).toThrow(/image has 10 pixels, expected 8×8 = 64/);
  });
});
