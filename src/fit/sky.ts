/**
 * The lensed model sky on a grid: builds the lens and the analytic source of a numbers-only
 * model, traces the grid once per lens, and renders source components into Jy/pixel images
 * (CONVENTIONS.md model grid; a pixel holds the mean brightness × area). Fluxes are linear: a
 * component can be rendered at unit flux for the fitter's linear solve.
 * Pixelised sources are not rendered here (their inversion uses the traced positions).
 */
import { buildLens } from "../lens/build.js";
import type { Lens } from "../lens/lens.js";
import { RayTracePlan } from "../lens/raytrace.js";
import type { NumericModel, SourceNumbers } from "../model/types.js";
import { buildSource, isAnalyticSourceType, type AnalyticSource } from "../source/analytic.js";

/** The model grid of a fit or a simulation. */
export interface SkyGrid {
  /** Pixels per side (even). */
  n: number;
  /** Cell [arcsec]. */
  cellArcsec: number;
  /** Sub-rays per pixel side (default 2). */
  supersample?: number;
  /** Extra refinement factor near steep brightness (default 1 = off: fits need a smooth χ²). */
  refineFactor?: number;
}

export class LensedSky {
  readonly grid: Required<SkyGrid>;
  readonly plan: RayTracePlan;
  private lensObj: Lens | null = null;
  private sourceObj: AnalyticSource | null = null;
  /** Index in model.source of each analytic component (pixelised ones are skipped). */
  private analyticIndex: number[] = [];

  constructor(grid: SkyGrid) {
    this.grid = { supersample: 2, refineFactor: 1, ...grid };
    this.plan = new RayTracePlan({
      n: this.grid.n,
      cellArcsec: this.grid.cellArcsec,
      supersample: this.grid.supersample,
      refineFactor: this.grid.refineFactor,
    });
  }

  /** Build lens and source from the model and trace the grid (throws InputError on bad values). */
  setModel(model: NumericModel): void {
    const ctx = { redshift: model.redshift, cosmology: model.cosmology };
    this.lensObj = buildLens(model.lens as never, ctx);
    const analytic: SourceNumbers[] = [];
    this.analyticIndex = [];
    model.source.forEach((s, i) => {
      if (isAnalyticSourceType(s.type)) {
        analytic.push(s);
        this.analyticIndex.push(i);
      }
    });
    this.sourceObj = buildSource(analytic as never);
    this.plan.trace(this.lensObj);
  }

  get lens(): Lens {
    if (!this.lensObj) throw new Error("LensedSky: setModel first");
    return this.lensObj;
  }

  get source(): AnalyticSource {
    if (!this.sourceObj) throw new Error("LensedSky: setModel first");
    return this.sourceObj;
  }

  /** Number of analytic source components. */
  get componentCount(): number {
    return this.analyticIndex.length;
  }

  /** model.source index of analytic component k. */
  modelIndex(k: number): number {
    return this.analyticIndex[k];
  }

  /** Render analytic component k at unit flux [Jy/pixel per Jy] (no spectral factor). */
  renderUnit(k: number, out: Float64Array): void {
    this.plan.renderComponent(this.source, k, out);
  }

  /** Render all analytic components at their fluxes [Jy/pixel], at freqHz for spectral indices. */
  renderTotal(out: Float64Array, freqHz?: number): void {
    this.plan.render(this.source, out, freqHz);
  }
}
