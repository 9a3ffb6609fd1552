/**
 * Benchmarks of the dirty imager (gridding + FFT, image and PSF) and of figure rendering.
 * Reports wall-clock times; machines here are noisy, so these are figures, not pass/fail limits.
 */
import type { BenchResult } from "./types.js";
import { dirtyImage } from "../src/fourier/dirty.js";
import { fitBeam } from "../src/fourier/beamFit.js";
import { imagePanel, gridExtentArcsec } from "../src/io/imagePanel.js";
import { panelDocument } from "../src/io/svg.js";
import { renderPng } from "../src/io/render.js";
import { Rng } from "../src/random.js";

function coverage(m: number, seed: number) {
  const rng = new Rng(seed);
  const u = new Float64Array(m), v = new Float64Array(m), re = new Float64Array(m), im = new Float64Array(m), w = new Float64Array(m);
  for (let k = 0; k < m; k++) {
    const r = 1e6 * Math.sqrt(rng.uniform()), t = 2 * Math.PI * rng.uniform();
    u[k] = r * Math.cos(t);
    v[k] = r * Math.sin(t);
    re[k] = 1 + rng.normal();
    im[k] = rng.normal();
    w[k] = 1;
  }
  return { uLambda: u, vLambda: v, reJy: re, imJy: im, weight: w };
}

function best(f: () => void, repeats: number): number {
  let t = Infinity;
  for (let r = 0; r < repeats; r++) {
    const t0 = performance.now();
    f();
    t = Math.min(t, performance.now() - t0);
  }
  return t / 1000;
}

export async function run(): Promise<BenchResult[]> {
  const out: BenchResult[] = [];
  for (const [m, n] of [[1e5, 256], [1e6, 256], [1e5, 1024]] as const) {
    const vis = coverage(m, 1);
    const s = best(() => dirtyImage(vis, { size: n, cellArcsec: 0.04, weighting: "briggs", robust: 0.5 }), 2);
    out.push({ name: "dirty_image_briggs", value: s, unit: "s", params: { visibilities: m, size: n, tolerance: 1e-6 } });
  }
  const vis = coverage(1e5, 2);
  const res = dirtyImage(vis, { size: 256, cellArcsec: 0.04 });
  out.push({ name: "beam_fit", value: best(() => fitBeam(res.psf, 256, 0.04), 3), unit: "s", params: { size: 256 } });
  const svg = panelDocument(imagePanel({ data: res.image, nx: 256, ny: 256, extentArcsec: gridExtentArcsec(256, 0.04), unit: "Jy/beam", title: "bench" }));
  await renderPng(svg); // initialise wasm and font outside the timing
  let t = Infinity;
  for (let r = 0; r < 3; r++) {
    const t0 = performance.now();
    await renderPng(svg);
    t = Math.min(t, performance.now() - t0);
  }
  out.push({ name: "render_image_panel_png", value: t / 1000, unit: "s", params: { size: 256 } });
  return out;
}
