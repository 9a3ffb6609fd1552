import { describe, expect, it } from "vitest";
import { directAdjoint, directForward } from "../../src/fourier/direct.js";
import { NufftPlan } from "../../src/fourier/nufft.js";
import { gaussLegendre } from "../../src/fourier/kernel.js";
import { checkNyquist, pixelWindow, sinc } from "../../src/fourier/window.js";
import { ARCSEC_TO_RAD } from "../../src/units.js";
import { Rng } from "../../src/random.js";
import { expectAbs, expectRel } from "../helpers.js";

// REFERENCES.md §5 sample baselines [λ] and their analytic visibilities.
const U = new Float64Array([1e5, 0, 3e5]);
const V = new Float64Array([0, 2e5, 4e5]);
// Circular Gaussian, F = 1 Jy, σ = 0.1″: F·exp(−2π²σ²(u² + v²)).
const GAUSS = [0.95466394907, 0.830619438685, 0.31351842288];
// Point source at (0.3″, −0.2″), F = 1 Jy: e^{−2πi(u x0 + v y0)}.
const POINT_RE = [0.610699829882, 0.345082466694, 0.953961768986];
const POINT_IM = [-0.791862183579, 0.938572368643, -0.299928230271];

const N = 64;
const CELL = 0.05 * ARCSEC_TO_RAD;
const geometry = { nx: N, ny: N, cellRad: CELL };

describe("directForward", () => {
  it("a single pixel at (0.3″, −0.2″) gives the analytic point-source visibilities", () => {
    // x_i = (N/2 − i)Δ = 0.3″ → i = N/2 − 6; y_j = (j − N/2)Δ = −0.2″ → j = N/2 − 4 (CONVENTIONS.md).
    // A pixel holding F is a delta at its centre: M = F e^{−2πi(u x0 + v y0)} exactly
    // (REFERENCES.md §5 table, 12 digits → atol 1e-11). Also the sign test: East → negative phase at u > 0.
    const img = new Float64Array(N * N);
    img[(N / 2 - 4) * N + (N / 2 - 6)] = 1;
    const re = new Float64Array(3);
    const im = new Float64Array(3);
    directForward(geometry, img, U, V, re, im);
    for (let k = 0; k < 3; k++) {
      expectAbs(re[k], POINT_RE[k], 1e-11, `Re V(${U[k]}, ${V[k]})`);
      expectAbs(im[k], POINT_IM[k], 1e-11, `Im V(${U[k]}, ${V[k]})`);
    }
    expect(im[0]).toBeLessThan(0);
  });

  it("pixel-mean image of a Gaussian, divided by the pixel window, gives F·exp(−2π²σ²|u|²)", () => {
    // Pixel means by 16-point Gauss–Legendre sub-sampling per axis (the Gaussian is separable;
    // the rule is exact to round-off on a pixel of half a σ). The DFT of pixel means is the sky
    // visibility times h(u, v) plus aliases at u ± n/Δ, which are below e^{−60} here, and the
    // field (±16σ) truncates below e^{−128}: so the match is limited by the 12-digit table
    // values → atol 1e-11. Without /h the error is ~1e-2 at (3e5, 4e5) λ: assert > 1e-3.
    const sigma = 0.1 * ARCSEC_TO_RAD;
    const rule = gaussLegendre(16);
    const axis = new Float64Array(N);
    for (let i = 0; i < N; i++) {
      const c = (i - N / 2) * CELL; // same profile for x and y (symmetric Gaussian)
      let s = 0;
      for (let q = 0; q < 16; q++) {
        const x = c + 0.5 * CELL * rule.nodes[q];
        s += 0.5 * rule.weights[q] * Math.exp(-(x * x) / (2 * sigma * sigma));
      }
      axis[i] = s / (Math.sqrt(2 * Math.PI) * sigma) * CELL; // ∫ over the pixel of the 1D normal density
    }
    const img = new Float64Array(N * N);
    for (let j = 0; j < N; j++) for (let i = 0; i < N; i++) img[j * N + i] = axis[j] * axis[i]; // the profile is even, so x_i = −(i − N/2)Δ gives the same
    const re = new Float64Array(3);
    const im = new Float64Array(3);
    directForward(geometry, img, U, V, re, im, true);
    const reRaw = new Float64Array(3);
    directForward(geometry, img, U, V, reRaw, im, false);
    for (let k = 0; k < 3; k++) {
      expectAbs(re[k], GAUSS[k], 1e-11, `V(${U[k]}, ${V[k]})/h`);
      expectAbs(im[k], 0, 1e-11, "Im V of a centred Gaussian");
    }
    expect(Math.abs(reRaw[2] - GAUSS[2])).toBeGreaterThan(1e-3);

    // The same through the NUFFT at 1e-12 (ℓ2-relative; 3× slack, REFERENCES.md §9 → 3e-12 of |V|).
    const plan = new NufftPlan({ nx: N, cellRad: CELL, tolerance: 1e-12, threads: 1 });
    plan.setPoints(U, V);
    const nre = new Float64Array(3);
    const nim = new Float64Array(3);
    plan.execute(img, nre, nim);
    for (let k = 0; k < 3; k++) expectAbs(nre[k] / pixelWindow(U[k], V[k], CELL), GAUSS[k], 1e-11, `NUFFT V(${U[k]}, ${V[k]})/h`);
    plan.dispose();
  });

  it("directAdjoint is the adjoint of directForward under ⟨a, b⟩ = Σ Re(a* b)", () => {
    // ⟨F x, c⟩ = ⟨x, Re Fᴴ c⟩ (analytic identity); round-off only → rtol 1e-12.
    const rng = new Rng(7);
    const n = 12;
    const g = { nx: n, ny: n, cellRad: CELL };
    const x = Float64Array.from({ length: n * n }, () => rng.normal());
    const m = 40;
    const u = Float64Array.from({ length: m }, () => (rng.uniform() - 0.5) / CELL);
    const v = Float64Array.from({ length: m }, () => (rng.uniform() - 0.5) / CELL);
    const cRe = Float64Array.from({ length: m }, () => rng.normal());
    const cIm = Float64Array.from({ length: m }, () => rng.normal());
    const fr = new Float64Array(m);
    const fi = new Float64Array(m);
    directForward(g, x, u, v, fr, fi);
    let lhs = 0;
    for (let k = 0; k < m; k++) lhs += fr[k] * cRe[k] + fi[k] * cIm[k];
    const a = new Float64Array(n * n);
    directAdjoint(g, u, v, cRe, cIm, a);
    let rhs = 0;
    for (let p = 0; p < n * n; p++) rhs += x[p] * a[p];
    expectRel(lhs, rhs, 1e-12, "adjointness");
  });
});

describe("pixel window", () => {
  it("sinc and the Nyquist check", () => {
    // sinc(1/2) = 2/π (analytic).
    expectRel(sinc(0.5), 2 / Math.PI, 1e-15, "sinc(1/2)");
    expectRel(pixelWindow(0.5 / CELL, 0.5 / CELL, CELL), 4 / (Math.PI * Math.PI), 1e-15, "h at Nyquist");
    expect(() => checkNyquist(new Float64Array([0, 0.6 / CELL]), new Float64Array([0, 0]), CELL)).toThrow(
      /visibilities: entry 1 has \|u\| or \|v\| = .* beyond the model grid's Nyquist limit .* use a cell of at most/,
    );
  });
});
