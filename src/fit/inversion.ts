/**
 * Pixelised source reconstruction in the uv-plane: the regularised linear inversion of the
 * gridded statistics and its Bayesian evidence.
 *
 * With J_t = P_t L s the beam-attenuated model image of term t (P_t the primary beam, L the
 * mapping matrix, s the source [Jy/arcsec²]) and (D_t, B_t) its gridded statistics,
 *   χ²(s) = Σ_t [Σw|d|² − 2 sᵀLᵀP_t D_t + sᵀLᵀP_t (B_t⋆ P_t L s)] = Σw|d|² − 2 sᵀb + sᵀM s.
 * With the prior P(s | λ) ∝ exp(−½ λ sᵀHs) the most probable source solves
 *   (M + λH) s = b,   M = Σ_t Lᵀ P_t B_t P_t L,   b = Σ_t Lᵀ P_t D_t,
 * and the log-evidence of λ (Gaussian noise, Gaussian prior) is
 *   log E = −½ χ²(s) − ½ λ sᵀHs + ½ log det(λH) − ½ log det(M + λH) + c_d,
 * c_d = −Σ_k log(2π/w_k) the normalisation of the data (two real measurements per visibility).
 *
 * How M is built: the dirty-beam operator is taken once as an exact lag table (inversionMask.ts);
 * then, for blocks of 8 source cells, T = B⋆(P L e_c) is summed directly at the masked pixels
 * (cost ½·nnz(L) × masked pixels per term, using the symmetry of B; independent of the number of
 * visibilities and with no FFT per column), and M_{·c} = Lᵀ P T. Terms sharing a primary beam
 * share one summed lag table.
 * Gradient and curvature H are singular (constants, ramps): H is replaced by
 * H + ε·(tr H / K)·I with ε = 1e-8 by default (reported as `nullSpaceShift`), used consistently in
 * the solve, sᵀHs and both determinants, so the evidence is that of a proper prior; the shift
 * adds a λ-independent constant ½·(nullity)·log ε to log E, the same for every lens model with the
 * same grid structure. The linear algebra is dense Cholesky (all K); the evidence always needs it.
 * Above 3000 cells a solve without evidence or σ uses Jacobi-preconditioned conjugate gradients.
 *
 * Reference: Warren & Dye 2003, ApJ 590, 673 (semi-linear inversion); Suyu et al. 2006, MNRAS 371,
 * 983, eq. 19 and appendix (evidence of a regularised inversion; from memory); DESIGN.md (gridded
 * statistics).
 */
import { InputError } from "../errors.js";
import type { GriddedStats } from "../fourier/gridded.js";
import type { Lens } from "../lens/lens.js";
import type { RayTracePlan } from "../lens/raytrace.js";
import { MappingMatrix } from "../source/mapping.js";
import { AdaptiveSourceMesh, selectMeshPixels } from "../source/mesh.js";
import { KERNEL_KINDS, KernelPrior, type KernelKind } from "./kernelPrior.js";
import { MAX_GRID_CELLS, RegularSourceGrid, type SourceGrid, type SourceGridKind } from "../source/pixelGrid.js";
import {
  MeshRegularisationScratch,
  meshRegularisation,
  physicalRegularisationScale,
  REGULARISATION_ORDERS,
  regularGridRegularisation,
  SparseSymmetric,
  type RegularisationOrder,
} from "../source/regularisation.js";
import { ARCSEC_TO_RAD } from "../units.js";
import {
  CgWorkspace,
  choleskyInPlace,
  choleskyLogDet,
  choleskySolve,
  conjugateGradient,
  denseMatVec,
  forwardSubstitute,
  inverseDiagonal,
  invertLowerInPlace,
} from "./inversionLinalg.js";
import { maximiseOverLogLambda, type LambdaSearchResult } from "./inversionLambda.js";
import { autoMask, lagTable, maskFromArray, signalIslands, type AutoMaskOptions } from "./inversionMask.js";
import { BLOCK, buildNormalEquations, type BeamGroup, type MaskRuns } from "./inversionNormal.js";
import type { LensedSky } from "./sky.js";

/** One set of gridded statistics (a dataset's channel group) with its primary beam. */
export interface InversionTerm {
  stats: GriddedStats;
  /** Channel group within stats (default 0). */
  group?: number;
  /** Primary-beam response on the model grid (N², 1 on axis); null or absent: none. */
  beam?: Float64Array | null;
}

/**
 * Terms for every channel group of every dataset.
 * @param beams per dataset: one beam for all its groups, an array with one per group, or null.
 */
export function inversionTerms(
  stats: readonly GriddedStats[],
  beams?: readonly (Float64Array | null | readonly (Float64Array | null)[])[],
): InversionTerm[] {
  const out: InversionTerm[] = [];
  stats.forEach((s, d) => {
    const b = beams?.[d] ?? null;
    for (let g = 0; g < s.groupCount; g++) {
      const beam = b === null ? null : b instanceof Float64Array ? b : (b[g] ?? null);
      out.push({ stats: s, group: g, beam });
    }
  });
  return out;
}

/**
 * −Σ_k log(2π/w_k) over the visibilities with w_k > 0: the data normalisation of the Gaussian
 * likelihood, each visibility counting two real measurements of variance 1/w_k.
 */
export function dataLogNormalisation(weights: readonly Float64Array[]): number {
  let s = 0;
  const log2Pi = Math.log(2 * Math.PI);
  for (const w of weights) for (let k = 0; k < w.length; k++) if (w[k] > 0) s -= log2Pi - Math.log(w[k]);
  return s;
}

/** Source priors: finite-difference regularisation or a covariance kernel (kernelPrior.ts). */
export type SourcePrior = RegularisationOrder | KernelKind;

export const SOURCE_PRIORS: readonly SourcePrior[] = [...REGULARISATION_ORDERS, ...KERNEL_KINDS];

/** True for the covariance-kernel priors. */
export function isKernelPrior(prior: SourcePrior): prior is KernelKind {
  return (KERNEL_KINDS as readonly string[]).includes(prior);
}

/** The pixelised source of the model file (PixelisedNumbers without λ). */
export interface PixelisedSourceSpec {
  grid: SourceGridKind;
  cells: number;
  regularisation: SourcePrior;
  /** Correlation length ℓ [arcsec] of a kernel prior; absent: set by the evidence (optimiseKernelScale). */
  scaleArcsec?: number;
}

/** The model grid the rays are traced on (must match the gridded statistics). */
export interface InversionImageGrid {
  /** Pixels per side N. */
  n: number;
  /** Cell Δ [arcsec]. */
  cellArcsec: number;
  /** Sub-rays per pixel side s. */
  supersample: number;
}

/** Options of InversionPlan. */
export interface InversionPlanOptions {
  terms: readonly InversionTerm[];
  grid: InversionImageGrid;
  source: PixelisedSourceSpec;
  /** User mask: N² values in model-grid order, truthy inside. Absent: automatic from the data. */
  mask?: ArrayLike<number | boolean>;
  /** Options of the automatic mask (its thresholds also find the emission pixels for gridBox). */
  autoMask?: AutoMaskOptions;
  /**
   * What a regular grid's box covers: the rays of the masked pixels with detected emission
   * ("emission"; default with a user mask) or of all masked pixels ("mask"; default with the
   * automatic mask, which is itself the detected emission dilated by half a beam).
   */
  gridBox?: "emission" | "mask";
  /** c_d of the evidence (dataLogNormalisation of the weights); default 0 (excluded). */
  dataLogNormalisation?: number;
  /** ε of the zeroth-order term added to singular H, relative to tr H / K (default 1e-8). */
  nullSpaceShift?: number;
  /** Above this many cells a solve without evidence/σ uses conjugate gradients (default 3000). */
  cgAbove?: number;
}

/** Defaults of InversionPlanOptions. */
export const DEFAULT_INVERSION = Object.freeze({ nullSpaceShift: 1e-8, cgAbove: 3000, cgTolerance: 1e-10, cgMaxIterations: 5000 });

/** The pieces of one evaluation at a given λ. */
export interface EvidenceTerms {
  lambda: number;
  /** χ² of the most probable source. */
  chi2: number;
  /** sᵀ H s (H with the null-space shift). */
  regularisation: number;
  /** log det(λH), log det(M + λH). */
  logDetLambdaH: number;
  logDetPosterior: number;
  /** c_d (0 unless given). */
  dataLogNormalisation: number;
  logEvidence: number;
}

/** Result of InversionPlan.solve. */
export interface InversionResult extends EvidenceTerms {
  /** Source values s [Jy/arcsec²], K. */
  s: Float64Array;
  /** 1σ of each s_i [Jy/arcsec²] from the diagonal of (M + λH)⁻¹ (null when not requested). */
  sigma: Float64Array | null;
  /** Node positions [arcsec] (copies). */
  xArcsec: Float64Array;
  yArcsec: Float64Array;
  gridKind: SourceGridKind;
  /** Integrated source flux ∫ S d²β [Jy] and its 1σ (σ null when not requested). */
  fluxJy: number;
  fluxSigmaJy: number | null;
  /** Unattenuated lensed model image L s [Jy/pixel], N² (0 outside the mask). */
  image: Float64Array;
  /** Beam-attenuated model image P_t L s of each term [Jy/pixel], N² each. */
  termImages: Float64Array[];
  /** The ε·tr H/K added to H (0 for zeroth order). */
  nullSpaceShift: number;
  /** Rays of masked pixels that fell outside the source grid. */
  raysOutside: number;
  /** Iterations of conjugate gradients (0 when Cholesky was used). */
  cgIterations: number;
  /** Lens version of the plan that produced it (see InversionPlan.sourcePlaneImage). */
  lensVersion: number;
}

/** Relative widening of a regular grid's box on each side beyond the rays of the emission pixels. */
export const REGULAR_BOX_MARGIN = 0.05;


/**
 * Plan of a pixelised-source inversion for fixed data, model grid, mask and source-grid spec.
 * Build once; call `setLens` per lens model, then `logEvidence(λ)`, `optimiseLambda()` or
 * `solve(λ)`. All work buffers are allocated here and reused. Not re-entrant.
 */
export class InversionPlan {
  readonly n: number;
  readonly cellArcsec: number;
  readonly supersample: number;
  readonly source: PixelisedSourceSpec;
  readonly terms: readonly InversionTerm[];
  /** 1 inside the mask, N². */
  readonly mask: Uint8Array;
  /** Pixel index of each masked pixel, raster order. */
  readonly maskedPixels: Int32Array;
  readonly grid: RegularSourceGrid | AdaptiveSourceMesh;
  readonly mapping: MappingMatrix;
  /** H of a finite-difference prior (sparse; unused with a kernel prior). */
  readonly regularisation = new SparseSymmetric();
  /** H = C⁻¹ of a kernel prior (null with a finite-difference prior). */
  readonly kernel: KernelPrior | null;
  readonly dataLogNormalisation: number;
  readonly nullSpaceShiftRelative: number;
  /** Σ w|d|² of all terms. */
  readonly sumWeightedDataSq: number;
  /** Bumped by each setLens. */
  lensVersion = 0;
  /** Times an adaptive mesh had to be re-triangulated while held (see holdMesh). */
  meshRebuildsWhileHeld = 0;
  private meshHeld = false;

  private readonly groups: BeamGroup[];
  private readonly lagBase: Int32Array;
  private readonly lagOff: Int32Array;
  private readonly runStart: Int32Array;
  private readonly runLen: Int32Array;
  private readonly runLagBase: Int32Array;
  private readonly runs: MaskRuns;
  private readonly maxCells: number;
  private readonly M: Float64Array;
  private readonly F: Float64Array;
  private readonly b: Float64Array;
  private readonly s: Float64Array;
  private readonly tmp: Float64Array;
  private readonly T: Float64Array;
  private readonly cg = new CgWorkspace();
  private readonly cgAbove: number;
  private readonly meshPixels: Int32Array | null;
  /** Pixels whose rays set a regular grid's box (see the constructor). */
  readonly boxPixels: Int32Array;
  private readonly meshX: Float64Array;
  private readonly meshY: Float64Array;
  private readonly meshBx: Float64Array;
  private readonly meshBy: Float64Array;
  private readonly meshScratch = new MeshRegularisationScratch();
  private K = 0;
  private shift = 0;
  private logDetH = 0;
  private regularKey = "";
  /** ℓ of a kernel prior [arcsec] (NaN until the first lens sets a default). */
  private kernelScale = NaN;
  private regularUnitVal = new Float64Array(0);
  private regularUnitShift = 0;
  private regularUnitLogDet = 0;
  private traceM = 0;
  /** λ of the last optimisation (warm start of the next). */
  private lastBestLog10Lambda = NaN;

  constructor(options: InversionPlanOptions) {
    const { grid, source, terms } = options;
    if (!Number.isInteger(grid.n) || grid.n < 2 || grid.n % 2 !== 0) {
      throw new InputError(`pixelised inversion: model grid n = ${grid.n}; need an even integer ≥ 2`);
    }
    if (!Number.isInteger(grid.supersample) || grid.supersample < 1) {
      throw new InputError(`pixelised inversion: supersample = ${grid.supersample}; need an integer ≥ 1`);
    }
    if (terms.length === 0) throw new InputError(`pixelised inversion: no data; give at least one set of gridded statistics`);
    if (!SOURCE_PRIORS.includes(source.regularisation)) {
      throw new InputError(`pixelised source: regularisation "${source.regularisation}"; allowed: ${SOURCE_PRIORS.join(", ")}`);
    }
    if (source.scaleArcsec !== undefined && !(source.scaleArcsec > 0 && Number.isFinite(source.scaleArcsec))) {
      throw new InputError(`pixelised source: scale = ${source.scaleArcsec}; the kernel's correlation length must be a positive number of arcsec`);
    }
    if (source.grid !== "regular" && source.grid !== "adaptive") {
      throw new InputError(`pixelised source: grid "${source.grid}"; allowed: regular, adaptive`);
    }
    if (!Number.isInteger(source.cells) || source.cells < 9 || source.cells > MAX_GRID_CELLS) {
      throw new InputError(`pixelised source: cells = ${source.cells}; need an integer in [9, ${MAX_GRID_CELLS}]`);
    }
    const n = grid.n;
    const cellRad = grid.cellArcsec * ARCSEC_TO_RAD;
    terms.forEach((t, i) => {
      if (t.stats.n !== n || Math.abs(t.stats.cellRad - cellRad) > 1e-9 * cellRad) {
        throw new InputError(
          `pixelised inversion: data set ${i} has gridded statistics on ${t.stats.n}² pixels of ${(t.stats.cellRad / ARCSEC_TO_RAD).toPrecision(6)}″ but the model grid is ${n}² of ${grid.cellArcsec}″; build both on the same grid`,
        );
      }
      const g = t.group ?? 0;
      if (!(g >= 0 && g < t.stats.groupCount)) {
        throw new InputError(`pixelised inversion: term ${i} asks for channel group ${g}; the data have ${t.stats.groupCount}`);
      }
      if (t.beam && t.beam.length !== n * n) {
        throw new InputError(`pixelised inversion: the primary beam of term ${i} has ${t.beam.length} pixels; expected ${n * n}`);
      }
    });
    this.n = n;
    this.cellArcsec = grid.cellArcsec;
    this.supersample = grid.supersample;
    this.source = { ...source };
    this.kernel = isKernelPrior(source.regularisation) ? new KernelPrior(source.regularisation) : null;
    if (source.scaleArcsec !== undefined) this.kernelScale = source.scaleArcsec;
    this.terms = terms;
    this.dataLogNormalisation = options.dataLogNormalisation ?? 0;
    this.nullSpaceShiftRelative = options.nullSpaceShift ?? DEFAULT_INVERSION.nullSpaceShift;
    this.cgAbove = options.cgAbove ?? DEFAULT_INVERSION.cgAbove;
    let dataSq = 0;
    for (const t of terms) dataSq += t.stats.sumWeightedDataSq(t.group ?? 0);
    this.sumWeightedDataSq = dataSq;

    // Lag tables, summed over the terms that share a beam.
    const w = 2 * n - 1;
    const byBeam = new Map<Float64Array | null, { lag: Float64Array; d: Float64Array }>();
    const scratch = new Float64Array(w * w);
    const lagSum = new Float64Array(w * w);
    const dAll: Float64Array[] = [];
    for (const t of terms) {
      const key = t.beam ?? null;
      let e = byBeam.get(key);
      if (!e) {
        e = { lag: new Float64Array(w * w), d: new Float64Array(n * n) };
        byBeam.set(key, e);
      }
      lagTable(t.stats, t.group ?? 0, scratch);
      for (let i = 0; i < w * w; i++) {
        e.lag[i] += scratch[i];
        lagSum[i] += scratch[i];
      }
      const d = t.stats.dataTerm(t.group ?? 0);
      for (let p = 0; p < n * n; p++) e.d[p] += d[p];
      dAll.push(d);
    }

    // Mask.
    this.mask = options.mask ? maskFromArray(options.mask, n) : autoMask(dAll, lagSum, n, options.autoMask);
    let nm = 0;
    for (let p = 0; p < n * n; p++) nm += this.mask[p];
    this.maskedPixels = new Int32Array(nm);
    for (let p = 0, r = 0; p < n * n; p++) if (this.mask[p]) this.maskedPixels[r++] = p;
    // The regular grid's box: the rays of the masked pixels that hold detected emission (all
    // masked pixels if none do), widened by REGULAR_BOX_MARGIN. Why, with a user mask: a generous
    // mask (e.g. an annulus about the Einstein ring) has outer pixels that map far out in the
    // source plane, and a box over all of them spends most nodes on empty sky; in our simulations
    // a 400-cell grid over such a box was too coarse for 0.05″ clumps and biased the lens.
    const rows: number[] = [];
    const gridBox = options.gridBox ?? (options.mask ? "emission" : "mask");
    if (gridBox === "emission") {
      const islands = signalIslands(dAll, lagSum, n, options.autoMask);
      for (let r = 0; r < nm; r++) if (islands[this.maskedPixels[r]]) rows.push(this.maskedPixels[r]);
    } else if (gridBox !== "mask") {
      throw new InputError(`pixelised inversion: gridBox "${options.gridBox}"; allowed: emission, mask`);
    }
    this.boxPixels = rows.length > 0 ? Int32Array.from(rows) : this.maskedPixels;

    // Lag indices and runs of consecutive masked pixels along rows.
    this.lagBase = new Int32Array(nm);
    this.lagOff = new Int32Array(nm);
    let runs = 0;
    for (let r = 0; r < nm; r++) {
      const p = this.maskedPixels[r];
      const i = p % n;
      const j = (p - i) / n;
      this.lagBase[r] = (j + n - 1) * w + (i + n - 1);
      this.lagOff[r] = j * w + i;
      if (r === 0 || this.maskedPixels[r - 1] !== p - 1 || i === 0) runs++;
    }
    this.runStart = new Int32Array(runs);
    this.runLen = new Int32Array(runs);
    this.runLagBase = new Int32Array(runs);
    for (let r = 0, q = -1; r < nm; r++) {
      const p = this.maskedPixels[r];
      if (r === 0 || this.maskedPixels[r - 1] !== p - 1 || p % n === 0) {
        q++;
        this.runStart[q] = r;
        this.runLagBase[q] = this.lagBase[r];
      }
      this.runLen[q]++;
    }
    this.runs = { runStart: this.runStart, runLen: this.runLen, runLagBase: this.runLagBase, lagOff: this.lagOff };
    this.groups = [];
    for (const [beam, e] of byBeam) {
      const dm = new Float64Array(nm);
      let bm: Float64Array | null = null;
      if (beam) bm = new Float64Array(nm);
      for (let r = 0; r < nm; r++) {
        dm[r] = e.d[this.maskedPixels[r]];
        if (bm && beam) bm[r] = beam[this.maskedPixels[r]];
      }
      this.groups.push({ beamMasked: bm, lag: e.lag, dMasked: dm });
    }

    // Source grid and buffers.
    const s2 = this.supersample * this.supersample;
    if (source.grid === "regular") {
      this.grid = new RegularSourceGrid(source.cells);
      this.meshPixels = null;
    } else {
      this.meshPixels = selectMeshPixels(this.maskedPixels, source.cells);
      this.grid = new AdaptiveSourceMesh(this.meshPixels.length);
    }
    this.meshX = new Float64Array(this.meshPixels ? this.meshPixels.length : 0);
    this.meshY = new Float64Array(this.meshX.length);
    this.meshBx = new Float64Array(this.meshX.length);
    this.meshBy = new Float64Array(this.meshX.length);
    if (this.meshPixels) {
      for (let t = 0; t < this.meshPixels.length; t++) {
        const p = this.meshPixels[t];
        const i = p % n;
        const j = (p - i) / n;
        this.meshX[t] = (n / 2 - i) * this.cellArcsec;
        this.meshY[t] = (j - n / 2) * this.cellArcsec;
      }
    }
    this.maxCells = this.grid instanceof RegularSourceGrid ? this.grid.cellCount : this.grid.maxPoints + 4;
    this.mapping = new MappingMatrix(nm, s2, this.grid.maxWeights, this.maxCells);
    const kk = this.maxCells;
    this.M = new Float64Array(kk * kk);
    this.F = new Float64Array(kk * kk);
    this.b = new Float64Array(kk);
    this.s = new Float64Array(kk);
    this.tmp = new Float64Array(Math.max(kk, nm));
    this.T = new Float64Array(BLOCK * nm);
  }

  /** Number of source cells K of the current lens. */
  get cellCount(): number {
    return this.K;
  }

  /**
   * Keep an adaptive mesh's triangles from the next setLens on (the nodes still move with the
   * lens; AdaptiveSourceMesh.moveNodes), or a regular grid's box where it is (the nodes stay put
   * in the source plane), until releaseMesh. Why: re-triangulating for every lens makes the
   * evidence jump by several units at each edge flip, and a box that follows the rays moves every
   * node with each lens, so the evidence wiggles as the source features fall differently between
   * nodes; the quasi-Newton polish and the finite-difference curvature cannot work with either.
   * When a triangle would turn over, the mesh is rebuilt anyway (counted in meshRebuildsWhileHeld).
   */
  holdMesh(): void {
    this.meshHeld = true;
  }

  /** Re-triangulate an adaptive mesh for every lens again (see holdMesh). */
  releaseMesh(): void {
    this.meshHeld = false;
  }

  /** Convenience: setLens with a LensedSky whose model has been set. */
  setSky(sky: LensedSky): void {
    this.setLens(sky.plan, sky.lens);
  }

  /**
   * Place the source grid for a lens and build L, H, M and b (independent of λ).
   * @param rays a plan traced with `lens` on the plan's model grid
   */
  setLens(rays: RayTracePlan, lens: Lens): void {
    if (rays.n !== this.n || Math.abs(rays.cellArcsec - this.cellArcsec) > 1e-9 * this.cellArcsec || rays.supersample !== this.supersample) {
      throw new InputError(
        `pixelised inversion: rays traced on ${rays.n}² pixels of ${rays.cellArcsec}″ with ${rays.supersample}² sub-rays; the plan needs ${this.n}², ${this.cellArcsec}″, ${this.supersample}²`,
      );
    }
    const s2 = this.supersample * this.supersample;
    const bx = rays.betaX;
    const by = rays.betaY;
    let xMin = Infinity;
    let xMax = -Infinity;
    let yMin = Infinity;
    let yMax = -Infinity;
    // a regular grid's box comes from the pixels with detected emission; a mesh's from all masked
    const bp = this.grid instanceof RegularSourceGrid ? this.boxPixels : this.maskedPixels;
    for (let r = 0; r < bp.length; r++) {
      const base = bp[r] * s2;
      for (let k = 0; k < s2; k++) {
        const x = bx[base + k];
        const y = by[base + k];
        if (x < xMin) xMin = x;
        if (x > xMax) xMax = x;
        if (y < yMin) yMin = y;
        if (y > yMax) yMax = y;
      }
    }
    const grid = this.grid;
    if (grid instanceof RegularSourceGrid) {
      // held (see holdMesh): the nodes stay where they are in the source plane
      if (!(this.meshHeld && this.lensVersion > 0)) {
        const margin = this.boxPixels === this.maskedPixels ? 0 : REGULAR_BOX_MARGIN;
        const mx = margin * (xMax - xMin);
        const my = margin * (yMax - yMin);
        grid.setBounds(xMin - mx, xMax + mx, yMin - my, yMax + my);
      }
    } else {
      const m = this.meshX.length;
      lens.sourcePositions(this.meshX, this.meshY, this.meshBx, this.meshBy, m);
      if (!(this.meshHeld && grid.moveNodes(this.meshBx, this.meshBy, m, xMin, xMax, yMin, yMax))) {
        grid.build(this.meshBx, this.meshBy, m, xMin, xMax, yMin, yMax);
        if (this.meshHeld) this.meshRebuildsWhileHeld++;
      }
    }
    this.K = grid.cellCount;
    this.mapping.build(grid, bx, by, s2, this.maskedPixels, rays.pixelAreaArcsec2);
    this.buildRegularisation();
    this.buildNormalEquations();
    this.lensVersion++;
  }

  private buildRegularisation(): void {
    const grid = this.grid;
    const K = this.K;
    if (this.kernel) {
      // default ℓ before the evidence sets it: two node spacings over the grid's box
      if (!Number.isFinite(this.kernelScale)) this.kernelScale = 2 * this.nodeSpacingArcsec;
      this.buildKernel();
      return;
    }
    const order = this.source.regularisation as RegularisationOrder;
    const H = this.regularisation;
    if (grid instanceof RegularSourceGrid) {
      const key = `${grid.side}:${order}`;
      if (key !== this.regularKey) {
        // the index-unit H depends only on the grid's structure: build it, its shift and log det once
        regularGridRegularisation(grid.side, order, H);
        this.regularKey = key;
        this.regularUnitVal = Float64Array.from(H.val.subarray(0, H.nnz));
        this.regularUnitShift = order === "zeroth" ? 0 : (this.nullSpaceShiftRelative * H.trace()) / K;
        this.regularUnitLogDet = this.checkedLogDet(H, this.regularUnitShift);
      }
      // sky units, so that the prior does not change with the cell size the lens sets: H = c·H_unit,
      // its shift c·shift_unit, log det(H + shift) = K log c + log det(H_unit + shift_unit)
      const c = physicalRegularisationScale(order, grid.dxArcsec);
      const unit = this.regularUnitVal;
      for (let p = 0; p < unit.length; p++) H.val[p] = c * unit[p];
      this.shift = c * this.regularUnitShift;
      this.logDetH = this.regularUnitLogDet + K * Math.log(c);
      return;
    }
    meshRegularisation(grid, order, H, this.meshScratch);
    this.shift = order === "zeroth" ? 0 : (this.nullSpaceShiftRelative * H.trace()) / K;
    this.logDetH = this.checkedLogDet(H, this.shift);
  }

  private buildKernel(): void {
    const kernel = this.kernel as KernelPrior;
    if (!kernel.build(this.grid.xArcsec, this.grid.yArcsec, this.K, this.kernelScale)) {
      throw new InputError(
        `pixelised inversion: the ${kernel.kind} kernel with scale ${this.kernelScale}″ is not positive definite on this grid; give a smaller scale`,
      );
    }
    this.shift = 0;
    this.logDetH = kernel.logDet;
  }

  /** √(box area / K) [arcsec]: the mean node spacing of the current grid. */
  get nodeSpacingArcsec(): number {
    const g = this.grid;
    return Math.sqrt(((g.xMaxArcsec - g.xMinArcsec) * (g.yMaxArcsec - g.yMinArcsec)) / Math.max(1, this.K));
  }

  /** The prior precision H in use (finite-difference or kernel). */
  private get precision(): SparseSymmetric | KernelPrior {
    return this.kernel ?? this.regularisation;
  }

  /** ℓ of a kernel prior [arcsec] (NaN for finite-difference priors). */
  get kernelScaleArcsec(): number {
    return this.kernel ? this.kernelScale : NaN;
  }

  /** Set ℓ of a kernel prior [arcsec] and rebuild H for the current lens. */
  setKernelScale(scaleArcsec: number): void {
    if (!this.kernel) throw new Error("InversionPlan.setKernelScale: the source prior has no kernel");
    if (!(scaleArcsec > 0) || !Number.isFinite(scaleArcsec)) {
      throw new InputError(`pixelised source: scale = ${scaleArcsec}; the kernel's correlation length must be a positive number of arcsec`);
    }
    this.kernelScale = scaleArcsec;
    if (this.lensVersion > 0) this.buildKernel();
  }

  /**
   * ℓ and λ of a kernel prior that maximise the evidence for the current lens: a scan in log ℓ from
   * ½ to 16 node spacings (extended while the best point sits at an end), then golden section to
   * `tolerance` decades, with λ optimised at each ℓ (or held at `lambda` when given). Leaves ℓ
   * set to the best value.
   */
  optimiseKernelScale(options: { tolerance?: number; lambda?: number } = {}): { scaleArcsec: number; lambda: number; logEvidence: number; curve: LambdaSearchResult["curve"] } {
    this.requireLens();
    if (!this.kernel) throw new Error("InversionPlan.optimiseKernelScale: the source prior has no kernel");
    const h = this.nodeSpacingArcsec;
    let bestLogE = -Infinity;
    let bestLambda = NaN;
    const res = maximiseOverLogLambda(
      (x) => {
        try {
          this.setKernelScale(Math.pow(10, x));
        } catch (err) {
          // a kernel far wider than the grid can lose positive definiteness in floating point
          if (err instanceof InputError) return -Infinity;
          throw err;
        }
        const best =
          options.lambda !== undefined
            ? { lambda: options.lambda, logEvidence: this.logEvidence(options.lambda) }
            : this.optimiseLambda({ tolerance: options.tolerance ?? 0.02 });
        if (best.logEvidence > bestLogE) {
          bestLogE = best.logEvidence;
          bestLambda = best.lambda;
        }
        return best.logEvidence;
      },
      { log10Min: Math.log10(0.5 * h), log10Max: Math.log10(16 * h), scanPoints: 7, tolerance: options.tolerance ?? 0.02, maxExtension: 1.5 },
    );
    const scale = res.lambda;
    this.setKernelScale(scale);
    this.lastBestLog10Lambda = Math.log10(bestLambda);
    return { scaleArcsec: scale, lambda: bestLambda, logEvidence: res.logEvidence, curve: res.curve };
  }

  private checkedLogDet(H: SparseSymmetric, shift: number): number {
    const K = H.size;
    const bw = H.bandwidth();
    let logDet: number;
    if (3 * bw * bw > K * K) {
      // A mesh's node order leaves a wide band: the band factorisation's K·bw² then costs more
      // than a dense one (K³/3, in the tuned dense kernel). F is free here (factorise refills it).
      const F = this.F;
      F.fill(0, 0, K * K);
      H.addToDense(F, 1);
      for (let i = 0; i < K; i++) F[i * K + i] += shift;
      logDet = choleskyInPlace(F, K) ? choleskyLogDet(F, K) : NaN;
    } else {
      logDet = H.logDetShifted(shift);
    }
    if (!Number.isFinite(logDet)) {
      throw new InputError(
        `pixelised inversion: the ${this.source.regularisation} regularisation matrix is not positive definite after a shift of ${shift}; raise nullSpaceShift`,
      );
    }
    return logDet;
  }

  /** M, b and tr M of the current mapping (inversionNormal.ts). */
  private buildNormalEquations(): void {
    this.traceM = buildNormalEquations(this.K, this.n, this.mapping, this.groups, this.runs, this.M, this.b, this.T);
  }

  /** The normal matrix M (K × K row-major view) and vector b of the current lens. */
  normalEquations(): { M: Float64Array; b: Float64Array; cells: number } {
    const K = this.K;
    return { M: this.M.subarray(0, K * K), b: this.b.subarray(0, K), cells: K };
  }

  /** Shift ε·tr H/K added to H (0 for zeroth order). */
  get nullSpaceShift(): number {
    return this.shift;
  }

  /** F = M + λ(H + shift·I), factorised in place; false if not positive definite. */
  private factorise(lambda: number): boolean {
    const K = this.K;
    const { F, M } = this;
    F.set(M.subarray(0, K * K));
    this.precision.addToDense(F, lambda);
    const ls = lambda * this.shift;
    if (ls !== 0) for (let i = 0; i < K; i++) F[i * K + i] += ls;
    const ok = choleskyInPlace(F, K);
    return ok;
  }

  /** The evidence terms at λ from the current factorisation and s. */
  private evidenceTerms(lambda: number): EvidenceTerms {
    const K = this.K;
    const { s, b, tmp, M, F } = this;
    denseMatVec(M.subarray(0, K * K), K, s, tmp);
    let sb = 0;
    let sMs = 0;
    let ss = 0;
    for (let i = 0; i < K; i++) {
      sb += s[i] * b[i];
      sMs += s[i] * tmp[i];
      ss += s[i] * s[i];
    }
    const chi2 = this.sumWeightedDataSq - 2 * sb + sMs;
    const reg = this.precision.quadratic(s) + this.shift * ss;
    const logDetLambdaH = K * Math.log(lambda) + this.logDetH;
    const logDetPosterior = choleskyLogDet(F, K);
    const logEvidence =
      -0.5 * chi2 - 0.5 * lambda * reg + 0.5 * logDetLambdaH - 0.5 * logDetPosterior + this.dataLogNormalisation;
    return { lambda, chi2, regularisation: reg, logDetLambdaH, logDetPosterior, dataLogNormalisation: this.dataLogNormalisation, logEvidence };
  }

  /** Evidence terms at λ (> 0); logEvidence is −∞ when M + λH is not positive definite. */
  evaluate(lambda: number): EvidenceTerms {
    this.requireLens();
    if (!(lambda > 0) || !Number.isFinite(lambda)) {
      throw new InputError(`pixelised source: lambda = ${lambda}; the regularisation strength must be a positive number`);
    }
    const K = this.K;
    if (!this.factorise(lambda)) {
      return { lambda, chi2: NaN, regularisation: NaN, logDetLambdaH: NaN, logDetPosterior: NaN, dataLogNormalisation: this.dataLogNormalisation, logEvidence: -Infinity };
    }
    const s = this.s;
    s.set(this.b.subarray(0, K));
    choleskySolve(this.F, K, s);
    return this.evidenceTerms(lambda);
  }

  /** log E at λ. */
  logEvidence(lambda: number): number {
    return this.evaluate(lambda).logEvidence;
  }

  /** λ that balances the data and prior terms, tr M / tr H: the centre of the default search. */
  get naturalLambda(): number {
    const trH = this.precision.trace() + this.shift * this.K;
    return this.traceM > 0 && trH > 0 ? this.traceM / trH : 1;
  }

  /**
   * λ maximising the evidence for the current lens (golden section on log λ after a coarse scan).
   * Without a range, the first call scans log10 λ over [−5, +3] decades around tr M / tr H and
   * later calls ±1 decade around the previous optimum.
   */
  optimiseLambda(options: { log10Min?: number; log10Max?: number; tolerance?: number; scanPoints?: number } = {}): LambdaSearchResult {
    this.requireLens();
    let lo = options.log10Min;
    let hi = options.log10Max;
    let scan = options.scanPoints;
    if (lo === undefined || hi === undefined) {
      if (Number.isFinite(this.lastBestLog10Lambda)) {
        lo = this.lastBestLog10Lambda - 1;
        hi = this.lastBestLog10Lambda + 1;
        scan = scan ?? 5;
      } else {
        const c = Math.log10(this.naturalLambda);
        lo = c - 5;
        hi = c + 3;
        scan = scan ?? 9;
      }
    }
    const res = maximiseOverLogLambda((x) => this.logEvidence(Math.pow(10, x)), {
      log10Min: lo,
      log10Max: hi,
      scanPoints: scan,
      tolerance: options.tolerance ?? 0.02,
    });
    if (Number.isFinite(res.logEvidence)) this.lastBestLog10Lambda = Math.log10(res.lambda);
    return res;
  }

  /**
   * The most probable source at λ with its evidence terms, images and (optionally) 1σ errors.
   * @param options.sigma compute σ and the flux error (one extra K³/3 inversion; default true)
   * @param options.evidence compute the evidence (needs Cholesky; default true)
   */
  solve(lambda: number, options: { sigma?: boolean; evidence?: boolean } = {}): InversionResult {
    this.requireLens();
    const wantSigma = options.sigma ?? true;
    const wantEvidence = options.evidence ?? true;
    const K = this.K;
    const { s } = this;
    let terms: EvidenceTerms;
    let cgIterations = 0;
    if (!wantSigma && !wantEvidence && K > this.cgAbove) {
      const F = this.F;
      F.set(this.M.subarray(0, K * K));
      this.precision.addToDense(F, lambda);
      for (let i = 0; i < K; i++) F[i * K + i] += lambda * this.shift;
      cgIterations = conjugateGradient(F, K, this.b, s, DEFAULT_INVERSION.cgTolerance, DEFAULT_INVERSION.cgMaxIterations, this.cg);
      const chi = this.chi2Of(s);
      terms = { lambda, chi2: chi, regularisation: this.precision.quadratic(s), logDetLambdaH: NaN, logDetPosterior: NaN, dataLogNormalisation: this.dataLogNormalisation, logEvidence: NaN };
    } else {
      terms = this.evaluate(lambda);
      if (!Number.isFinite(terms.logEvidence)) {
        throw new InputError(`pixelised inversion: M + λH is not positive definite at λ = ${lambda}; use a larger lambda or a zeroth-order term`);
      }
    }
    const sOut = Float64Array.from(s.subarray(0, K));
    const weights = new Float64Array(K);
    this.grid.integrationWeights(weights);
    let flux = 0;
    for (let i = 0; i < K; i++) flux += weights[i] * sOut[i];
    let sigma: Float64Array | null = null;
    let fluxSigma: number | null = null;
    if (wantSigma) {
      // var(aᵀs) = aᵀ(LLᵀ)⁻¹a = |L⁻¹a|²; then L⁻¹ in place for the diagonal
      const x = Float64Array.from(weights);
      forwardSubstitute(this.F, K, x);
      let v = 0;
      for (let i = 0; i < K; i++) v += x[i] * x[i];
      fluxSigma = Math.sqrt(v);
      invertLowerInPlace(this.F, K, this.tmp);
      sigma = new Float64Array(K);
      inverseDiagonal(this.F, K, sigma);
      for (let i = 0; i < K; i++) sigma[i] = Math.sqrt(sigma[i]);
    }
    const n = this.n;
    const nm = this.maskedPixels.length;
    const lsMasked = new Float64Array(nm);
    this.mapping.apply(sOut, lsMasked);
    const image = new Float64Array(n * n);
    for (let r = 0; r < nm; r++) image[this.maskedPixels[r]] = lsMasked[r];
    const termImages = this.terms.map((t) => {
      const img = new Float64Array(n * n);
      for (let r = 0; r < nm; r++) {
        const p = this.maskedPixels[r];
        img[p] = (t.beam ? t.beam[p] : 1) * lsMasked[r];
      }
      return img;
    });
    return {
      ...terms,
      s: sOut,
      sigma,
      xArcsec: Float64Array.from(this.grid.xArcsec.subarray(0, K)),
      yArcsec: Float64Array.from(this.grid.yArcsec.subarray(0, K)),
      gridKind: this.grid.kind,
      fluxJy: flux,
      fluxSigmaJy: fluxSigma,
      image,
      termImages,
      nullSpaceShift: this.shift,
      raysOutside: this.mapping.raysOutside,
      cgIterations,
      lensVersion: this.lensVersion,
    };
  }

  /** χ²(s) = Σw|d|² − 2sᵀb + sᵀMs. */
  chi2Of(s: Float64Array): number {
    const K = this.K;
    denseMatVec(this.M.subarray(0, K * K), K, s, this.tmp);
    let sb = 0;
    let sMs = 0;
    for (let i = 0; i < K; i++) {
      sb += s[i] * this.b[i];
      sMs += s[i] * this.tmp[i];
    }
    return this.sumWeightedDataSq - 2 * sb + sMs;
  }

  /** The source grid of the current lens (valid until the next setLens). */
  get sourceGrid(): SourceGrid {
    return this.grid;
  }

  private requireLens(): void {
    if (this.lensVersion === 0) throw new Error("InversionPlan: call setLens (or setSky) first");
  }
}
