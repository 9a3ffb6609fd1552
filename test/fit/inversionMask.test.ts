import { describe, expect, it } from "vitest";
import { autoMask, gaussianSmooth, signalIslands } from "../../src/fit/inversionMask.js";
import { annulusMask } from "../../src/fit/pixelisedProblem.js";
import type { NumericModel, PixelisedNumbers } from "../../src/model/types.js";
import { InputError } from "../../src/errors.js";
import { Rng } from "../../src/random.js";

/** A (2n − 1)² lag table of a Gaussian dirty beam of the given FWHM [pixels], peak 1. */
function gaussianLag(n: number, fwhmPixels: number): Float64Array {
  const w = 2 * n - 1;
  const s2 = (fwhmPixels / (2 * Math.sqrt(2 * Math.LN2))) ** 2;
  const t = new Float64Array(w * w);
  for (let dj = -(n - 1); dj <= n - 1; dj++) {
    for (let di = -(n - 1); di <= n - 1; di++) t[(dj + n - 1) * w + (di + n - 1)] = Math.exp(-(di * di + dj * dj) / (2 * s2));
  }
  return t;
}

describe("automatic mask", () => {
  it("smoothing white noise by a Gaussian of σ pixels lowers its rms by 2√π σ (Σ k² = 1/(4πσ²))", () => {
    // The variance of white noise convolved with a normalised kernel k is σ_n² Σ k²; for a
    // Gaussian Σ k² ≈ ∫ k² = 1/(4πσ²) (standard result, e.g. Papoulis, Probability, Random
    // Variables and Stochastic Processes, linear systems with random inputs; from memory).
    const n = 128;
    const rng = new Rng(3);
    const img = Float64Array.from({ length: n * n }, () => rng.normal());
    const sigma = 2;
    const sm = gaussianSmooth(img, n, sigma);
    let s = 0;
    let c = 0;
    for (let j = 16; j < n - 16; j++) for (let i = 16; i < n - 16; i++, c++) s += sm[j * n + i] ** 2;
    const ratio = 1 / Math.sqrt(s / c);
    // 9216 correlated samples (~ 9216 / (4πσ²) ≈ 180 independent): the rms is known to ~5 %
    expect(Math.abs(ratio / (2 * Math.sqrt(Math.PI) * sigma) - 1)).toBeLessThan(0.15);
  });

  it("finds a faint extended ring in the smoothed image that the native-resolution islands miss", () => {
    // Detecting extended emission after smoothing is common practice in radio masking, no source;
    // the expected gain follows from the noise reduction checked above.
    const n = 96;
    const fwhm = 3;
    const rng = new Rng(5);
    const img = new Float64Array(n * n);
    const ring: number[] = [];
    for (let j = 0; j < n; j++) {
      for (let i = 0; i < n; i++) {
        const r = Math.hypot(i - n / 2, j - n / 2);
        img[j * n + i] = rng.normal();
        // a ring 6 pixels wide at 1.2σ per pixel, with one bright 12σ knot on it
        if (Math.abs(r - 25) < 3) {
          img[j * n + i] += 1.2;
          ring.push(j * n + i);
        }
      }
    }
    img[(n / 2) * n + n / 2 + 25] += 12;
    const lag = gaussianLag(n, fwhm);
    const fraction = (m: Uint8Array) => ring.filter((p) => m[p]).length / ring.length;
    const native = autoMask([img], lag, n, { smoothBeams: 0, dilateBeams: 0 });
    const smoothed = autoMask([img], lag, n, { smoothBeams: 1, dilateBeams: 0 });
    expect(fraction(native)).toBeLessThan(0.2);
    expect(fraction(smoothed)).toBeGreaterThan(0.9);
    // the emission pixels are the native islands dilated by a beam: the knot's neighbourhood only
    const islands = signalIslands([img], lag, n);
    expect(islands[(n / 2) * n + n / 2 + 25]).toBe(1);
    expect(fraction(islands)).toBeLessThan(0.2);
  });
});

describe("annular mask of a pixelised source", () => {
  const model = { lens: [{ type: "sie", theta_E: 1, q: 0.8, pa: 0, x: 0.2, y: -0.1, core: 0 }], source: [] } as unknown as NumericModel;
  const src = (inner?: number, outer?: number) => ({ type: "pixelised", grid: "regular", cells: 100, regularisation: "gaussian", mask_inner: inner, mask_outer: outer }) as PixelisedNumbers;

  it("holds the pixels between the radii about the lens centre (area π(r₁² − r₀²) within 2 %)", () => {
    const n = 200;
    const cell = 0.02;
    const m = annulusMask("m.json", src(0.5, 1.5), model, n, cell) as Uint8Array;
    let count = 0;
    for (const v of m) count += v;
    const area = Math.PI * (1.5 ** 2 - 0.5 ** 2);
    expect(Math.abs((count * cell * cell) / area - 1)).toBeLessThan(0.02);
    // pixel i sits at x = (n/2 − i)Δ (East left), row j at y = (j − n/2)Δ (CONVENTIONS.md)
    const pix = (x: number, y: number) => Math.round(n / 2 + y / cell) * n + Math.round(n / 2 - x / cell);
    expect(m[pix(0.2 + 1.0, -0.1)]).toBe(1);
    expect(m[pix(0.2, -0.1 + 1.0)]).toBe(1);
    expect(m[pix(0.2, -0.1)]).toBe(0);
    expect(m[pix(0.2 - 1.7, -0.1)]).toBe(0);
  });

  it("is absent without radii and refuses half or inverted annuli", () => {
    expect(annulusMask("m.json", src(), model, 50, 0.05)).toBeUndefined();
    expect(() => annulusMask("m.json", src(0.5), model, 50, 0.05)).toThrow(InputError);
    expect(() => annulusMask("m.json", src(1.5, 0.5), model, 50, 0.05)).toThrow(/mask_outer > mask_inner/);
    expect(() => annulusMask("m.json", src(5, 6), model, 50, 0.05)).toThrow(/holds no model pixel/);
  });
});
