/**
 * A small synthetic FitOutcome for the output-writer tests: 32² images built from closed forms
 * (a Gaussian ring for the lensed sky, a Gaussian source, seeded noise for the dirty images), a
 * tiny seeded ensemble chain and nested run, binned visibilities of a Gaussian source.
 */
import { Rng } from "../../../src/random.js";
import { parseModel } from "../../../src/model/index.js";
import type { ChainOutput, FitOutcome, GridImage, NestedOutput, Polyline } from "../../../src/fit/outcome.js";

export const N = 32;
export const SKY_CELL_ARCSEC = 0.1;
export const SRC_CELL_ARCSEC = 0.02;
export const SRC_CENTRE: [number, number] = [0.06, -0.04];
/** A single bright pixel on the sky grid, to check the orientation of the written WCS. */
export const SKY_MARK = { i: 21, j: 9 };
/** The source-plane Gaussian sits on this pixel of the source grid. */
export const SRC_PEAK = { i: 12, j: 19 };
export const BEAM = { bmajArcsec: 0.45, bminArcsec: 0.3, bpaDeg: 35 };
export const PHASE_CENTRE: [number, number] = [150.125, -2.5];
export const HOSTILE_NAME = `<script>alert("x")</script>.flux`;

function grid(data: Float64Array, cell: number, cx: number, cy: number, unit: string): GridImage {
  return { data, n: N, cellArcsec: cell, centreXArcsec: cx, centreYArcsec: cy, unit };
}

function circle(r: number, cx: number, cy: number, n = 64): Polyline {
  const x = new Float64Array(n + 1), y = new Float64Array(n + 1);
  for (let k = 0; k <= n; k++) {
    x[k] = cx + r * Math.sin((2 * Math.PI * k) / n);
    y[k] = cy + r * Math.cos((2 * Math.PI * k) / n);
  }
  return { xArcsec: x, yArcsec: y };
}

export interface SyntheticOptions {
  sampled: boolean;
  warnings: string[];
  withTruth: boolean;
}

export function syntheticOutcome(opt: SyntheticOptions): FitOutcome {
  const rng = new Rng(20240611);
  const spec = parseModel({
    lens: [{ type: "sie", theta_E: { init: 1, min: 0.5, max: 2 }, q: { init: 0.8, min: 0.3, max: 1 }, pa: 30, x: 0, y: 0 }],
    source: [{ type: "gaussian", flux: { init: 0.01, min: 0, max: 1 }, sigma: 0.1, q: 1, pa: 0, x: 0.06, y: -0.04 }],
  }, "synthetic-model.json");
  const names = [...spec.free.map((f) => f.name)];
  // The third reported name is hostile on purpose: user strings must come out escaped.
  names[2] = HOSTILE_NAME;
  const dim = names.length;
  const value = Float64Array.from([1.02, 0.999999, 0.0123]); // q at its upper bound 1
  const sigma = Float64Array.from([0.011, 0.02, 0.0009]);
  const covariance = Float64Array.from([
    sigma[0] ** 2, 0.6 * sigma[0] * sigma[1], -0.3 * sigma[0] * sigma[2],
    0.6 * sigma[0] * sigma[1], sigma[1] ** 2, 0,
    -0.3 * sigma[0] * sigma[2], 0, sigma[2] ** 2,
  ]);

  // Lensed sky: a Gaussian ring of radius 1″ (Jy/pixel) and one marked pixel.
  const sky = new Float64Array(N * N);
  for (let j = 0; j < N; j++) for (let i = 0; i < N; i++) {
    const x = (N / 2 - i) * SKY_CELL_ARCSEC, y = (j - N / 2) * SKY_CELL_ARCSEC;
    sky[j * N + i] = 1e-4 * Math.exp(-0.5 * ((Math.hypot(x, y) - 1) / 0.08) ** 2);
  }
  sky[SKY_MARK.j * N + SKY_MARK.i] = 5e-4;
  const src = new Float64Array(N * N);
  for (let j = 0; j < N; j++) for (let i = 0; i < N; i++) {
    const di = i - SRC_PEAK.i, dj = j - SRC_PEAK.j;
    src[j * N + i] = 0.2 * Math.exp(-0.5 * (di * di + dj * dj) / 4);
  }
  const model = new Float64Array(N * N), data = new Float64Array(N * N), resid = new Float64Array(N * N);
  let ss = 0;
  for (let k = 0; k < N * N; k++) {
    model[k] = 40 * sky[k];
    resid[k] = 2e-4 * rng.normal();
    data[k] = model[k] + resid[k];
    ss += resid[k] * resid[k];
  }

  // Binned visibilities of a circular Gaussian of 12 mJy and σ = 0.1″ (its transform is a Gaussian in uv).
  const nb = 12;
  const uv = new Float64Array(nb), dre = new Float64Array(nb), dim_ = new Float64Array(nb);
  const mre = new Float64Array(nb), mim = new Float64Array(nb), sj = new Float64Array(nb), count = new Int32Array(nb);
  for (let b = 0; b < nb; b++) {
    uv[b] = 50 + 100 * b;
    const sigRad = 0.1 / 206264.80624709636;
    mre[b] = 0.012 * Math.exp(-2 * Math.PI ** 2 * sigRad ** 2 * (uv[b] * 1e3) ** 2);
    sj[b] = 4e-4;
    count[b] = b === nb - 1 ? 0 : 100 + b;
    dre[b] = mre[b] + sj[b] * rng.normal();
    dim_[b] = sj[b] * rng.normal();
  }

  let chain: ChainOutput | undefined;
  let nested: NestedOutput | undefined;
  let posteriorSamples: FitOutcome["posteriorSamples"];
  if (opt.sampled) {
    const nSteps = 60, nWalkers = 8;
    const c = new Float64Array(nSteps * nWalkers * dim);
    const lp = new Float64Array(nSteps * nWalkers), ll = new Float64Array(nSteps * nWalkers);
    for (let w = 0; w < nWalkers; w++) {
      const z = new Float64Array(dim);
      for (let p = 0; p < dim; p++) z[p] = 3 * rng.normal();
      for (let s = 0; s < nSteps; s++) {
        let q = 0;
        for (let p = 0; p < dim; p++) {
          z[p] = 0.8 * z[p] + 0.6 * rng.normal(); // AR(1) with unit stationary variance
          c[(s * nWalkers + w) * dim + p] = value[p] + sigma[p] * z[p];
          q += z[p] * z[p];
        }
        ll[s * nWalkers + w] = -0.5 * q - 100;
        lp[s * nWalkers + w] = ll[s * nWalkers + w] - 1.5;
      }
    }
    const burnIn = 20;
    chain = {
      chain: c, logPosterior: lp, logLikelihood: ll, nSteps, nWalkers, dim, burnIn,
      tau: Float64Array.from([4.5, 9.1, 3.2]),
      acceptanceFraction: Float64Array.from({ length: nWalkers }, (_, w) => 0.25 + 0.01 * w),
      converged: false,
    };
    const n = (nSteps - burnIn) * nWalkers;
    posteriorSamples = { samples: c.slice(burnIn * nWalkers * dim), n };
    const nS = 50;
    const samples = new Float64Array(nS * dim), lw = new Float64Array(nS), lL = new Float64Array(nS);
    for (let s = 0; s < nS; s++) {
      for (let p = 0; p < dim; p++) samples[s * dim + p] = value[p] + sigma[p] * rng.normal();
      lL[s] = -100 + s * 0.1;
      lw[s] = -Math.log(nS) + 0.01 * s;
    }
    nested = { samples, logWeights: lw, logLikelihood: lL, nSamples: nS, dim, logEvidence: -123.4, logEvidenceError: 0.21 };
  }

  const chi2 = 24000.5, nVis = 12000;
  return {
    spec, names, units: ["arcsec", "", "Jy"], value, sigma,
    lo: Float64Array.from(value, (v, p) => v - sigma[p]),
    hi: Float64Array.from(value, (v, p) => v + sigma[p]),
    uncertaintyMethod: opt.sampled ? "ensemble" : "hessian",
    covariance,
    model: { lens: [], source: [] },
    chi2, nVis, nFree: dim, reducedChi2: chi2 / (2 * nVis - dim),
    ...(opt.sampled ? { logEvidence: { value: -123.4, error: 0.21 } } : {}),
    derived: { einstein_radius_arcsec: 1.02, einstein_mass_msun: 1.3e11, magnification_total: null },
    warnings: opt.warnings,
    datasets: [{
      name: "band7 & <main>", path: "/data/obs <1>.uvfits", nVis, noiseScale: 1.07, fluxScale: 1, chi2, beam: BEAM,
      phaseCentreDeg: PHASE_CENTRE,
    }],
    chain, nested, posteriorSamples,
    truth: opt.withTruth ? Float64Array.from([1.0, 0.95, NaN]) : undefined,
    images: {
      modelSky: grid(sky, SKY_CELL_ARCSEC, 0, 0, "Jy/pixel"),
      source: grid(src, SRC_CELL_ARCSEC, SRC_CENTRE[0], SRC_CENTRE[1], "Jy/arcsec2"),
      sourceSigma: grid(Float64Array.from(src, (v) => 0.05 * Math.sqrt(v + 1e-3)), SRC_CELL_ARCSEC, SRC_CENTRE[0], SRC_CENTRE[1], "Jy/arcsec2"),
      dataDirty: grid(data, SKY_CELL_ARCSEC, 0, 0, "Jy/beam"),
      modelDirty: grid(model, SKY_CELL_ARCSEC, 0, 0, "Jy/beam"),
      residualDirty: grid(resid, SKY_CELL_ARCSEC, 0, 0, "Jy/beam"),
      residualRmsJyPerBeam: Math.sqrt(ss / (N * N)),
    },
    criticalCurves: [circle(1, 0, 0)],
    caustics: [circle(0.12, 0.02, 0.01), circle(0.05, -0.1, 0.08, 16)],
    uvBins: [{ uvDistKlambda: uv, dataRe: dre, dataIm: dim_, modelRe: mre, modelIm: mim, sigmaJy: sj, count }],
    phaseCentreDeg: PHASE_CENTRE,
    timings: { optimise: 12.5, sample: 340.2 },
    command: `arcfringe fit obs.uvfits --model "m.json" --out out --sample --seed 7`,
    version: "0.1.0",
    seed: 7,
  };
}
