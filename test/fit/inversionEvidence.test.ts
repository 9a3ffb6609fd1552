import { CholeskyDecomposition, Matrix } from "ml-matrix";
import { describe, expect, it } from "vitest";
import { dataLogNormalisation, InversionPlan } from "../../src/fit/inversion.js";
import { physicalRegularisationScale } from "../../src/source/regularisation.js";
import { RegularSourceGrid } from "../../src/source/pixelGrid.js";
import { directForward } from "../../src/fourier/direct.js";
import { GriddedStats } from "../../src/fourier/gridded.js";
import { buildLens } from "../../src/lens/build.js";
import type { Lens } from "../../src/lens/lens.js";
import { RayTracePlan } from "../../src/lens/raytrace.js";
import { Rng } from "../../src/random.js";
import type { PixelisedSourceSpec } from "../../src/fit/inversion.js";
import { ARCSEC_TO_RAD } from "../../src/units.js";
import { expectRel } from "../helpers.js";

interface Problem {
  n: number;
  cellArcsec: number;
  u: Float64Array;
  v: Float64Array;
  w: Float64Array;
  lens: Lens;
  rays: RayTracePlan;
  mask: Uint8Array;
}

function problem(seed: number, n: number, cellArcsec: number, nVis: number, thetaE: number, maskRadius: number): Problem {
  const cellRad = cellArcsec * ARCSEC_TO_RAD;
  const rng = new Rng(seed);
  const u = new Float64Array(nVis);
  const v = new Float64Array(nVis);
  const w = new Float64Array(nVis);
  for (let k = 0; k < nVis; k++) {
    u[k] = (rng.uniform() - 0.5) * 0.9 / cellRad;
    v[k] = (rng.uniform() - 0.5) * 0.9 / cellRad;
    w[k] = 1 + rng.uniform();
  }
  const lens = buildLens([
    { type: "sie", theta_E: thetaE, q: 0.75, pa: 35, x: 0.01, y: 0.02 },
    { type: "shear", gamma: 0.04, pa: 110 },
  ]);
  const rays = new RayTracePlan({ n, cellArcsec, supersample: 2, refineFactor: 1 });
  rays.trace(lens);
  const mask = new Uint8Array(n * n);
  for (let j = 0; j < n; j++) {
    for (let i = 0; i < n; i++) {
      mask[j * n + i] = Math.hypot((n / 2 - i) * cellArcsec, (j - n / 2) * cellArcsec) < maskRadius ? 1 : 0;
    }
  }
  return { n, cellArcsec, u, v, w, lens, rays, mask };
}

/** Model visibilities of the image J [Jy/pixel] (direct transform, window divided). */
function visibilities(p: Problem, J: Float64Array): { re: Float64Array; im: Float64Array } {
  const re = new Float64Array(p.u.length);
  const im = new Float64Array(p.u.length);
  directForward({ nx: p.n, ny: p.n, cellRad: p.cellArcsec * ARCSEC_TO_RAD }, J, p.u, p.v, re, im, true);
  return { re, im };
}

/** The image L s of a plan (rows are its masked pixels). */
function imageOf(plan: InversionPlan, s: Float64Array): Float64Array {
  const nm = plan.maskedPixels.length;
  const ls = new Float64Array(nm);
  plan.mapping.apply(s, ls);
  const img = new Float64Array(plan.n * plan.n);
  plan.maskedPixels.forEach((px, r) => (img[px] = ls[r]));
  return img;
}

describe("InversionPlan log-evidence", () => {
  it("equals the brute-force marginal likelihood log N(d; 0, C + A(λH)⁻¹Aᵀ) with explicit dense F, W, L, H (1e-9 relative)", () => {
    // Suyu et al. 2006: E(λ) = ∫ P(d|s) P(s|λ) ds. With d = A s + n, n ~ N(0, C) and
    // s ~ N(0, (λH)⁻¹) the marginal of d is Gaussian with covariance C + A(λH)⁻¹Aᵀ (analytic), a
    // formula that shares nothing with the plan's χ²/determinant route. Here A = [Re F; Im F]·L
    // from the direct transform, C = diag(1/w) for the real and the imaginary parts.
    const p = problem(7, 16, 0.1, 120, 0.45, 0.65);
    const rng = new Rng(8);
    const nVis = p.u.length;
    for (const spec of [
      { grid: "regular", cells: 16, regularisation: "zeroth" },
      { grid: "regular", cells: 16, regularisation: "gradient" },
      { grid: "regular", cells: 25, regularisation: "curvature" },
      { grid: "adaptive", cells: 20, regularisation: "gradient" },
      { grid: "adaptive", cells: 20, regularisation: "curvature" },
      { grid: "regular", cells: 16, regularisation: "gaussian", scaleArcsec: 0.15 },
      { grid: "adaptive", cells: 20, regularisation: "matern", scaleArcsec: 0.2 },
    ] as PixelisedSourceSpec[]) {
      // data: a random source through the lens, plus noise of σ = 1/√w
      const pre = new InversionPlan({
        terms: [{ stats: dummyStats(p) }],
        grid: { n: p.n, cellArcsec: p.cellArcsec, supersample: 2 },
        source: spec,
        mask: p.mask,
      });
      pre.setLens(p.rays, p.lens);
      const sTrue = Float64Array.from({ length: pre.cellCount }, () => 30 * (1 + rng.normal()));
      const model = visibilities(p, imageOf(pre, sTrue));
      const re = new Float64Array(nVis);
      const im = new Float64Array(nVis);
      for (let k = 0; k < nVis; k++) {
        re[k] = model.re[k] + rng.normal() / Math.sqrt(p.w[k]);
        im[k] = model.im[k] + rng.normal() / Math.sqrt(p.w[k]);
      }
      const stats = new GriddedStats({ uLambda: p.u, vLambda: p.v, reJy: re, imJy: im, weight: p.w }, { n: p.n, cellRad: p.cellArcsec * ARCSEC_TO_RAD });
      // a larger null-space shift keeps the brute-force covariance well conditioned
      const plan = new InversionPlan({
        terms: [{ stats }],
        grid: { n: p.n, cellArcsec: p.cellArcsec, supersample: 2 },
        source: spec,
        mask: p.mask,
        dataLogNormalisation: dataLogNormalisation([p.w]),
        nullSpaceShift: 1e-3,
      });
      plan.setLens(p.rays, p.lens);
      const K = plan.cellCount;
      // A (2·nVis × K) column by column: visibilities of the image of each unit source cell
      const A = Matrix.zeros(2 * nVis, K);
      const e = new Float64Array(K);
      for (let c = 0; c < K; c++) {
        e.fill(0);
        e[c] = 1;
        const col = visibilities(p, imageOf(plan, e));
        for (let k = 0; k < nVis; k++) {
          A.set(k, c, col.re[k]);
          A.set(nVis + k, c, col.im[k]);
        }
      }
      let Hd = Matrix.zeros(K, K);
      if (spec.scaleArcsec !== undefined) {
        // kernel prior: H = C⁻¹, C_ij = k(|β_i − β_j|/ℓ) + 1e-6 δ_ij written out here from
        // Rasmussen & Williams 2006 eqs. 4.9 and 4.17 (from memory), inverted by ml-matrix
        const gx = plan.sourceGrid.xArcsec;
        const gy = plan.sourceGrid.yArcsec;
        const C = Matrix.zeros(K, K);
        for (let i = 0; i < K; i++) {
          for (let j = 0; j < K; j++) {
            const r = Math.hypot(gx[i] - gx[j], gy[i] - gy[j]) / spec.scaleArcsec;
            const k = spec.regularisation === "gaussian" ? Math.exp(-0.5 * r * r) : (1 + Math.sqrt(3) * r) * Math.exp(-Math.sqrt(3) * r);
            C.set(i, j, k + (i === j ? 1e-6 : 0));
          }
        }
        Hd = new CholeskyDecomposition(C).solve(Matrix.eye(K));
        Hd = Hd.add(Hd.transpose()).mul(0.5);
      } else {
        const H = plan.regularisation;
        for (let i = 0; i < K; i++) {
          for (let q = H.rowPtr[i]; q < H.rowPtr[i + 1]; q++) Hd.set(i, H.col[q], H.val[q]);
          Hd.set(i, i, Hd.get(i, i) + plan.nullSpaceShift);
        }
      }
      const d = Matrix.columnVector([...re, ...im]);
      for (const lambda of [0.3 * plan.naturalLambda, 3 * plan.naturalLambda]) {
        const prior = new CholeskyDecomposition(Hd.clone().mul(lambda)).solve(Matrix.eye(K));
        const c0 = A.mmul(prior).mmul(A.transpose());
        const cov = c0.add(c0.transpose()).mul(0.5); // exact symmetry for ml-matrix's Cholesky
        for (let k = 0; k < nVis; k++) {
          cov.set(k, k, cov.get(k, k) + 1 / p.w[k]);
          cov.set(nVis + k, nVis + k, cov.get(nVis + k, nVis + k) + 1 / p.w[k]);
        }
        const ch = new CholeskyDecomposition(cov);
        expect(ch.isPositiveDefinite()).toBe(true);
        const Lc = ch.lowerTriangularMatrix;
        let logDet = 0;
        for (let i = 0; i < 2 * nVis; i++) logDet += 2 * Math.log(Lc.get(i, i));
        const quad = d.transpose().mmul(ch.solve(d)).get(0, 0);
        const ref = -0.5 * quad - 0.5 * logDet - nVis * Math.log(2 * Math.PI);
        // both sides are double-precision dense algebra on matrices with condition ≲ 1e6 → ~1e-11;
        // the gridded statistics carry their 1e-12 NUFFT tolerance. 1e-9 leaves slack.
        expectRel(plan.logEvidence(lambda), ref, 1e-9, `log E (${spec.grid}, ${spec.regularisation}, λ = ${lambda})`);
      }
    }
  });

  it("peaks within a factor 2 of the λ₀ that generated the source s ~ N(0, (λ₀I)⁻¹) (Suyu et al. 2006 §2.3 construction)", () => {
    // The evidence estimate of λ is a variance estimate from the K well-measured modes: its
    // relative standard deviation is about sqrt(2/γ), γ ≤ K the number of good modes (Suyu et al.
    // 2006, from memory; standard for a Gaussian variance). With K = 100 and γ > 80 this is < 16 %,
    // so a factor 2 (|Δ ln λ| < 0.69) is more than 4σ.
    const p = problem(31, 32, 0.05, 2500, 0.35, 0.55);
    const nVis = p.u.length;
    const rng = new Rng(32);
    const lambda0 = 4;
    const spec: PixelisedSourceSpec = { grid: "regular", cells: 100, regularisation: "zeroth" };
    const pre = new InversionPlan({
      terms: [{ stats: dummyStats(p) }],
      grid: { n: p.n, cellArcsec: p.cellArcsec, supersample: 2 },
      source: spec,
      mask: p.mask,
    });
    pre.setLens(p.rays, p.lens);
    const sTrue = Float64Array.from({ length: pre.cellCount }, () => rng.normal() / Math.sqrt(lambda0));
    const model = visibilities(p, imageOf(pre, sTrue));
    const re = new Float64Array(nVis);
    const im = new Float64Array(nVis);
    const sigmaScale = 1e-4; // strong data: every mode measured far better than its prior width
    for (let k = 0; k < nVis; k++) {
      p.w[k] = 1 / sigmaScale ** 2;
      re[k] = model.re[k] + sigmaScale * rng.normal();
      im[k] = model.im[k] + sigmaScale * rng.normal();
    }
    const stats = new GriddedStats({ uLambda: p.u, vLambda: p.v, reJy: re, imJy: im, weight: p.w }, { n: p.n, cellRad: p.cellArcsec * ARCSEC_TO_RAD });
    const plan = new InversionPlan({
      terms: [{ stats }],
      grid: { n: p.n, cellArcsec: p.cellArcsec, supersample: 2 },
      source: spec,
      mask: p.mask,
    });
    plan.setLens(p.rays, p.lens);
    const search = plan.optimiseLambda({ log10Min: -2, log10Max: 8 });
    // the plan's H is in sky units, c·I with c = Δ² for zeroth order (physicalRegularisationScale),
    // so the prior precision λ₀·I of the generated s is λ = λ₀ / c in the plan's units
    const c = physicalRegularisationScale("zeroth", (plan.grid as RegularSourceGrid).dxArcsec);
    const ratio = (search.lambda * c) / lambda0;
    expect(ratio > 0.5 && ratio < 2, `λ̂·c = ${search.lambda * c}, λ₀ = ${lambda0}`).toBe(true);
    // the returned curve has its maximum at the returned λ and falls off on both sides
    const i = search.curve.logEvidence.indexOf(search.logEvidence);
    expect(search.curve.lambda[i]).toBe(search.lambda);
    expect(search.curve.logEvidence[0]).toBeLessThan(search.logEvidence - 1);
    expect(search.curve.logEvidence[search.curve.logEvidence.length - 1]).toBeLessThan(search.logEvidence - 1);
  });

  it("finds the correlation length ℓ₀ and λ₀ that generated a source s ~ N(0, C(ℓ₀)/λ₀) (kernel prior)", () => {
    // The same construction for a kernel prior: draw s from the prior itself on 8 seeds, observe it
    // with strong data, and the evidence maximum over (ℓ, λ) must return the generating values on
    // average. Each estimate scatters (10 × 10 nodes hold only ~50 patches of size ℓ₀, so λ̂, a
    // variance estimate, scatters by ~30 %); the test is on the mean of ln(ℓ̂/ℓ₀) and ln(λ̂/λ₀)
    // over the seeds, within 3 standard errors of zero (standard errors from the seeds' own scatter).
    const p = problem(31, 32, 0.05, 2500, 0.35, 0.55);
    const nVis = p.u.length;
    const logRatios = { gaussian: { scale: [] as number[], lambda: [] as number[] }, matern: { scale: [] as number[], lambda: [] as number[] } };
    for (const [kind, seed] of [41, 42, 43, 44, 45, 46, 47, 48].flatMap((q) => [["gaussian", q], ["matern", q]]) as ["gaussian" | "matern", number][]) {
      const rng = new Rng(seed);
      const lambda0 = 4;
      const spec: PixelisedSourceSpec = { grid: "regular", cells: 100, regularisation: kind };
      const pre = new InversionPlan({ terms: [{ stats: dummyStats(p) }], grid: { n: p.n, cellArcsec: p.cellArcsec, supersample: 2 }, source: spec, mask: p.mask });
      pre.setLens(p.rays, p.lens);
      const K = pre.cellCount;
      const gx = pre.sourceGrid.xArcsec;
      const gy = pre.sourceGrid.yArcsec;
      const scale0 = 1.5 * pre.nodeSpacingArcsec;
      const C = Matrix.zeros(K, K);
      for (let i = 0; i < K; i++) {
        for (let j = 0; j < K; j++) {
          const r = Math.hypot(gx[i] - gx[j], gy[i] - gy[j]) / scale0;
          C.set(i, j, (kind === "gaussian" ? Math.exp(-0.5 * r * r) : (1 + Math.sqrt(3) * r) * Math.exp(-Math.sqrt(3) * r)) + (i === j ? 1e-6 : 0));
        }
      }
      const Lc = new CholeskyDecomposition(C).lowerTriangularMatrix;
      const z = Matrix.columnVector(Array.from({ length: K }, () => rng.normal() / Math.sqrt(lambda0)));
      const sTrue = Float64Array.from(Lc.mmul(z).getColumn(0));
      const model = visibilities(p, imageOf(pre, sTrue));
      const re = new Float64Array(nVis);
      const im = new Float64Array(nVis);
      const sigmaScale = 1e-4;
      const w = new Float64Array(nVis).fill(1 / sigmaScale ** 2);
      for (let k = 0; k < nVis; k++) {
        re[k] = model.re[k] + sigmaScale * rng.normal();
        im[k] = model.im[k] + sigmaScale * rng.normal();
      }
      const stats = new GriddedStats({ uLambda: p.u, vLambda: p.v, reJy: re, imJy: im, weight: w }, { n: p.n, cellRad: p.cellArcsec * ARCSEC_TO_RAD });
      // the same nodes as the draw: the box over all masked pixels, not over the detected emission
      const plan = new InversionPlan({ terms: [{ stats }], grid: { n: p.n, cellArcsec: p.cellArcsec, supersample: 2 }, source: spec, mask: p.mask, gridBox: "mask" });
      plan.setLens(p.rays, p.lens);
      const best = plan.optimiseKernelScale();
      logRatios[kind].scale.push(Math.log(best.scaleArcsec / scale0));
      logRatios[kind].lambda.push(Math.log(best.lambda / lambda0));
      // every single estimate within a factor 2 (the scatter above is ≤ 30 %)
      expect(Math.abs(Math.log(best.scaleArcsec / scale0)), `${kind} seed ${seed}: ℓ̂/ℓ₀ = ${best.scaleArcsec / scale0}`).toBeLessThan(Math.LN2);
      expect(Math.abs(Math.log(best.lambda / lambda0)), `${kind} seed ${seed}: λ̂/λ₀ = ${best.lambda / lambda0}`).toBeLessThan(Math.LN2);
    }
    for (const [kind, r] of Object.entries(logRatios)) {
      for (const [name, v] of Object.entries(r)) {
        const mean = v.reduce((a, b) => a + b, 0) / v.length;
        const sd = Math.sqrt(v.reduce((a, b) => a + (b - mean) ** 2, 0) / (v.length - 1));
        expect(Math.abs(mean), `${kind} mean ln(${name}̂/${name}₀) = ${mean.toFixed(3)}, sd ${sd.toFixed(3)}`).toBeLessThan((3 * sd) / Math.sqrt(v.length));
      }
    }
  });
});

/** Statistics of all-zero data on the problem's baselines (only to build a mapping). */
function dummyStats(p: Problem): GriddedStats {
  const z = new Float64Array(p.u.length);
  return new GriddedStats({ uLambda: p.u, vLambda: p.v, reJy: z, imJy: z, weight: p.w }, { n: p.n, cellRad: p.cellArcsec * ARCSEC_TO_RAD });
}
