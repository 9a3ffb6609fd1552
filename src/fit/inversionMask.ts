/**
 * Image-plane support of a pixelised-source inversion: the dirty-beam operator of the gridded
 * statistics as an explicit lag table, and the mask of pixels the lensed source may occupy
 * (automatic from the data, or given by the user).
 *
 * Lag table: B⋆J of GriddedStats is out_p = Σ_q B(x_p − x_q) J_q with B even; applying it to a
 * unit image at the corner pixel (0, 0) gives B at every lag (di, dj) = (i_p − i_q, j_p − j_q)
 * with di, dj ≥ 0, and at the corner (N − 1, 0) every lag with di ≤ 0, dj ≥ 0; evenness gives the
 * other half. Two calls of applyB therefore give the exact operator restricted to any pixel set.
 *
 * Automatic mask: the natural-weighted dirty image D / B(0) [Jy/beam] (D the weighted
 * back-projection, B(0) = Σ w/h² the dirty-beam peak): islands of pixels above k × its rms that
 * hold a pixel above k_seed × rms (so isolated noise peaks, which would stretch the source grid
 * over empty source plane, are dropped), then dilated by a disc of radius (dilateBeams × the beam
 * FWHM) so that the faint edges of the emission are inside. The same islands are also found in
 * the dirty image smoothed by a Gaussian of smoothBeams × the beam FWHM (each image with its own
 * rms), and the mask is the union: smoothing lifts faint extended emission out of thermal noise.
 * The rms is that of the negative pixels (noise and sidelobes are symmetric about zero, the
 * lensed emission is positive), so it includes the sidelobe confusion of the dirty image: with
 * sparse uv coverage the mask follows the dirty image's dynamic range, which smoothing does not
 * improve. When the beam resolves the arcs this can leave much of their flux outside (our
 * simulation with a beam of θ_E/6, 20 antennas: 15–40 % of it, smoothing or not), and a user mask
 * is the better choice.
 *
 * Reference: DESIGN.md (gridded statistics); noise from negative pixels, thresholded and dilated
 * masks are common practice in radio imaging, no source.
 */
import { InputError } from "../errors.js";
import type { GriddedStats } from "../fourier/gridded.js";

/**
 * B on the (2N − 1)² lag grid of group `group`: entry (dj + N − 1)·(2N − 1) + (di + N − 1) holds
 * the coupling of pixels with i_p − i_q = di, j_p − j_q = dj (dimensionless χ² per (Jy/pixel)²).
 * @param out optional (2N − 1)² buffer.
 */
export function lagTable(stats: GriddedStats, group: number, out?: Float64Array): Float64Array {
  const n = stats.n;
  const w = 2 * n - 1;
  const table = out ?? new Float64Array(w * w);
  const delta = new Float64Array(n * n);
  const res = new Float64Array(n * n);
  delta[0] = 1;
  stats.applyB(delta, res, group);
  for (let j = 0; j < n; j++) {
    for (let i = 0; i < n; i++) {
      const v = res[j * n + i];
      table[(j + n - 1) * w + (i + n - 1)] = v;
      table[(n - 1 - j) * w + (n - 1 - i)] = v;
    }
  }
  delta[0] = 0;
  delta[n - 1] = 1;
  stats.applyB(delta, res, group);
  for (let j = 0; j < n; j++) {
    for (let i = 0; i < n; i++) {
      const v = res[j * n + i];
      // di = i − (n − 1)
      table[(j + n - 1) * w + i] = v;
      table[(n - 1 - j) * w + (2 * n - 2 - i)] = v;
    }
  }
  return table;
}

/**
 * FWHM of the dirty beam [pixels] from a lag table: twice the mean of the half-power radii along
 * +x and +y (linear interpolation between lags).
 */
export function beamFwhmPixels(table: Float64Array, n: number): number {
  const w = 2 * n - 1;
  const c = (n - 1) * w + (n - 1);
  const peak = table[c];
  if (!(peak > 0)) return 1;
  const half = (stride: number): number => {
    let prev = 1;
    for (let d = 1; d < n; d++) {
      const v = table[c + d * stride] / peak;
      if (v < 0.5) return d - 1 + (prev - 0.5) / (prev - v);
      prev = v;
    }
    return n - 1;
  };
  return half(1) + half(w);
}

/** Options of the automatic mask. */
export interface AutoMaskOptions {
  /** Pixels above k × rms join an island (default 2). */
  thresholdSigma?: number;
  /** An island is kept only if it holds a pixel above this × rms (default 5): noise islands go. */
  seedSigma?: number;
  /** Dilation radius in beam FWHMs (default 0.5). */
  dilateBeams?: number;
  /** FWHM of the Gaussian smoothing of the second detection image, in beam FWHMs (default 1; 0: none). */
  smoothBeams?: number;
  /** Dilation of the emission pixels that set a regular source grid's box, in beam FWHMs (default 0.5). */
  emissionDilateBeams?: number;
}

/**
 * Half a beam of dilation: the 2σ contour of the dirty image already carries the beam's blur, so
 * little true emission lies beyond it; every extra pixel widens the source plane the grid must
 * cover (coarser cells for the same count) and the cost of the normal equations. In our clumpy
 * SIE + shear simulation the evidence rose by ~570 from 2 beams to ½ beam, and a 400-cell regular
 * grid's evidence maximum moved from q = 0.71 to the true 0.75.
 */
// emissionDilateBeams: half a beam around the detected emission sets a regular grid's box with a
// user mask. In our resolved-arc simulation (400 cells) a whole beam gave a 1.01″ box, 0.050″
// cells and the lens 5–7σ off; half a beam a 0.78″ box, 0.039″ cells and ≤ 2.9σ on six seeds.
export const DEFAULT_AUTO_MASK = Object.freeze({ thresholdSigma: 2, seedSigma: 5, dilateBeams: 0.5, smoothBeams: 1, emissionDilateBeams: 0.5 });

/**
 * Automatic mask from the summed weighted back-projections D_t and dirty-beam lag tables of the
 * data (see the module comment): islands of 8-connected pixels above thresholdSigma × rms that
 * contain a pixel above seedSigma × rms, dilated. Returns 1 inside, N² long.
 * @param dTerms D of each term [N²]; @param lagSum Σ of the terms' lag tables
 */
export function autoMask(dTerms: readonly Float64Array[], lagSum: Float64Array, n: number, options: AutoMaskOptions = {}): Uint8Array {
  const k = options.thresholdSigma ?? DEFAULT_AUTO_MASK.thresholdSigma;
  const kSeed = Math.max(k, options.seedSigma ?? DEFAULT_AUTO_MASK.seedSigma);
  const dilate = options.dilateBeams ?? DEFAULT_AUTO_MASK.dilateBeams;
  const smooth = options.smoothBeams ?? DEFAULT_AUTO_MASK.smoothBeams;
  if (!(k > 0) || !(dilate >= 0) || !(smooth >= 0)) {
    throw new InputError(
      `automatic mask: thresholdSigma = ${k}, dilateBeams = ${dilate}, smoothBeams = ${smooth}; need a threshold > 0, a dilation ≥ 0 and a smoothing ≥ 0`,
    );
  }
  const np = n * n;
  const w = 2 * n - 1;
  const peak = lagSum[(n - 1) * w + (n - 1)];
  const img = new Float64Array(np);
  for (const d of dTerms) for (let p = 0; p < np; p++) img[p] += d[p];
  for (let p = 0; p < np; p++) img[p] /= peak;
  const fwhm = beamFwhmPixels(lagSum, n);
  const seed = new Uint8Array(np);
  const found = markIslands(img, n, k, kSeed, seed);
  let foundSmooth = 0;
  if (smooth > 0) {
    // σ of a Gaussian with FWHM smooth × beam, in pixels
    foundSmooth = markIslands(gaussianSmooth(img, n, (smooth * fwhm) / (2 * Math.sqrt(2 * Math.LN2))), n, k, kSeed, seed).seeds;
  }
  if (found.seeds + foundSmooth === 0) {
    throw new InputError(
      `automatic mask: no pixel of the dirty image exceeds ${kSeed} × rms (${found.rms.toPrecision(3)} Jy/beam); give a mask or lower seedSigma`,
    );
  }
  return dilateMask(seed, n, dilate * fwhm);
}

/**
 * The islands of the natural-weighted dirty image at its own resolution (thresholds as in
 * autoMask), dilated by emissionDilateBeams: the pixels that hold detected emission and its
 * beam-blurred edges. 1 inside, N² long (all 0 if none).
 */
export function signalIslands(dTerms: readonly Float64Array[], lagSum: Float64Array, n: number, options: AutoMaskOptions = {}): Uint8Array {
  const k = options.thresholdSigma ?? DEFAULT_AUTO_MASK.thresholdSigma;
  const kSeed = Math.max(k, options.seedSigma ?? DEFAULT_AUTO_MASK.seedSigma);
  const np = n * n;
  const w = 2 * n - 1;
  const peak = lagSum[(n - 1) * w + (n - 1)];
  const img = new Float64Array(np);
  for (const d of dTerms) for (let p = 0; p < np; p++) img[p] += d[p] / peak;
  const out = new Uint8Array(np);
  markIslands(img, n, k, kSeed, out);
  return dilateMask(out, n, (options.emissionDilateBeams ?? DEFAULT_AUTO_MASK.emissionDilateBeams) * beamFwhmPixels(lagSum, n));
}

/**
 * Add to `out` the islands of `img` (8-connected pixels above k × rms holding a pixel above
 * kSeed × rms), rms from the negative pixels. Returns the rms and the number of seed pixels.
 */
function markIslands(img: Float64Array, n: number, k: number, kSeed: number, out: Uint8Array): { rms: number; seeds: number } {
  const np = n * n;
  // Noise from the negative pixels: lensed emission is positive, while thermal noise and the
  // sidelobes of the emission are symmetric about zero (a median/MAD estimate is biased when the
  // arcs fill much of the field).
  let sumSq = 0;
  let neg = 0;
  for (let p = 0; p < np; p++) {
    if (img[p] < 0) {
      sumSq += img[p] * img[p];
      neg++;
    }
  }
  const rms = neg > 0 ? Math.sqrt(sumSq / neg) : 0;
  // Grow islands from the seeds through pixels above the threshold (breadth-first, 8-connected).
  const seen = new Uint8Array(np);
  const queue = new Int32Array(np);
  let head = 0;
  let tail = 0;
  for (let p = 0; p < np; p++) {
    if (img[p] > kSeed * rms) {
      seen[p] = 1;
      queue[tail++] = p;
    }
  }
  const seeds = tail;
  while (head < tail) {
    const p = queue[head++];
    const i = p % n;
    const j = (p - i) / n;
    for (let jj = Math.max(0, j - 1); jj <= Math.min(n - 1, j + 1); jj++) {
      for (let ii = Math.max(0, i - 1); ii <= Math.min(n - 1, i + 1); ii++) {
        const q = jj * n + ii;
        if (seen[q] || !(img[q] > k * rms)) continue;
        seen[q] = 1;
        queue[tail++] = q;
      }
    }
  }
  for (let p = 0; p < np; p++) if (seen[p]) out[p] = 1;
  return { rms, seeds };
}

/** img convolved with a normalised Gaussian of σ = sigmaPixels (separable, truncated at 4σ, zero outside). */
export function gaussianSmooth(img: Float64Array, n: number, sigmaPixels: number): Float64Array {
  const r = Math.max(1, Math.ceil(4 * sigmaPixels));
  const kern = new Float64Array(2 * r + 1);
  for (let d = -r; d <= r; d++) kern[d + r] = Math.exp((-0.5 * d * d) / (sigmaPixels * sigmaPixels));
  let sum = 0;
  for (const v of kern) sum += v;
  for (let t = 0; t < kern.length; t++) kern[t] /= sum;
  const tmp = new Float64Array(n * n);
  const out = new Float64Array(n * n);
  for (let j = 0; j < n; j++) {
    for (let i = 0; i < n; i++) {
      let s = 0;
      for (let d = Math.max(-r, -i); d <= Math.min(r, n - 1 - i); d++) s += kern[d + r] * img[j * n + i + d];
      tmp[j * n + i] = s;
    }
  }
  for (let j = 0; j < n; j++) {
    for (let i = 0; i < n; i++) {
      let s = 0;
      for (let d = Math.max(-r, -j); d <= Math.min(r, n - 1 - j); d++) s += kern[d + r] * tmp[(j + d) * n + i];
      out[j * n + i] = s;
    }
  }
  return out;
}

/** Mask dilated by a disc of `radius` pixels (the seed pixels included). */
export function dilateMask(seed: Uint8Array, n: number, radius: number): Uint8Array {
  const out = new Uint8Array(n * n);
  const r = Math.floor(radius);
  const r2 = radius * radius;
  for (let j = 0; j < n; j++) {
    for (let i = 0; i < n; i++) {
      if (!seed[j * n + i]) continue;
      for (let dj = -r; dj <= r; dj++) {
        const jj = j + dj;
        if (jj < 0 || jj >= n) continue;
        for (let di = -r; di <= r; di++) {
          const ii = i + di;
          if (ii < 0 || ii >= n || di * di + dj * dj > r2) continue;
          out[jj * n + ii] = 1;
        }
      }
    }
  }
  return out;
}

/**
 * A user-given mask (N × N, model-grid order, truthy = inside) as 0/1 bytes.
 * @param where names the source of the mask in messages (file or option)
 */
export function maskFromArray(mask: ArrayLike<number | boolean>, n: number, where = "mask"): Uint8Array {
  if (mask.length !== n * n) {
    throw new InputError(`${where}: has ${mask.length} pixels but the model grid is ${n} × ${n} = ${n * n}; give one value per model pixel`);
  }
  const out = new Uint8Array(n * n);
  let count = 0;
  for (let p = 0; p < n * n; p++) {
    if (mask[p]) {
      out[p] = 1;
      count++;
    }
  }
  if (count === 0) throw new InputError(`${where}: no pixel is inside the mask; mark the pixels the lensed source may occupy`);
  return out;
}
