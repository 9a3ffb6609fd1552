/**
 * `lensSummary`: what `arcfringe lens` reports for a model — Einstein radius (from the
 * tangential critical curve), and with redshifts the Einstein mass, Σ_crit, distances and the
 * equivalent SIS velocity dispersion — plus critical curves, caustics and maps for plotting.
 * Pure: no I/O. Conventions: CONVENTIONS.md; distances: Hogg (1999); masses: Wambsganss (1998).
 */
import { InputError } from "../errors.js";
import { DEFAULT_COSMOLOGY, FlatLambdaCDM, type CosmologyParams } from "../cosmo/distances.js";
import { einsteinMassMsun, lensDistances, sisVelocityDispersionKms, type RedshiftPair } from "../cosmo/lensing.js";
import { buildSource } from "../source/analytic.js";
import { buildLens } from "./build.js";
import {
  caustics as causticsOf,
  convergenceMap,
  criticalCurves,
  einsteinRadiusFromCurves,
  magnificationMap,
  totalMagnification,
  type CriticalCurves,
  type GridSpec,
} from "./critical.js";
import type { Lens } from "./lens.js";
import { RayTracePlan } from "./raytrace.js";
import type { ComponentInput } from "./validate.js";

/** A numbers-only model, as in the model file (DESIGN.md). */
export interface NumericModel {
  lens: ComponentInput[];
  source?: ComponentInput[];
  redshift?: RedshiftPair;
  cosmology?: CosmologyParams;
  field?: { size_arcsec: number; pixel_arcsec: number };
}

export interface SummaryOptions {
  /** Grid for curves and maps (default: model.field, else a field 2.5× the largest θ_E across, 256 pixels). */
  grid?: GridSpec;
}

/** Polylines as [x, y] pairs [arcsec], for JSON. */
export type JsonPolyline = { closed: boolean; points: [number, number][] };

export interface LensSummary {
  einstein_radius_arcsec: number | null;
  einstein_mass_msun: number | null;
  sigma_crit_msun_per_arcsec2: number | null;
  D_l_mpc: number | null;
  D_s_mpc: number | null;
  D_ls_mpc: number | null;
  velocity_dispersion_kms: number | null;
  /** Lensed/intrinsic flux of the model's analytic source, when it has one. */
  source_magnification: number | null;
  grid: { n: number; cell_arcsec: number };
  critical_curves: { tangential: JsonPolyline[]; radial: JsonPolyline[] };
  caustics: { tangential: JsonPolyline[]; radial: JsonPolyline[] };
  /** Maps on the grid (p = j·N + i, CONVENTIONS.md); not JSON — see summaryToJson. */
  maps: { convergence: Float64Array; magnification: Float64Array };
}

/**
 * Summarise a lens model.
 * @param model numbers-only model (lens components, optional source, redshift, cosmology, field)
 */
export function lensSummary(model: NumericModel, options: SummaryOptions = {}): LensSummary {
  const ctx = { redshift: model.redshift, cosmology: model.cosmology };
  const lens = buildLens(model.lens, ctx);
  const grid = options.grid ?? defaultGrid(model, lens);
  const curves = criticalCurves(lens, grid);
  const caus = causticsOf(lens, curves);
  const thetaE = einsteinRadiusFromCurves(curves);
  let dist = null;
  if (model.redshift) {
    dist = lensDistances(model.redshift, new FlatLambdaCDM(model.cosmology ?? DEFAULT_COSMOLOGY, "cosmology"), "redshift");
  }
  let sourceMag: number | null = null;
  const analytic = (model.source ?? []).filter((c) => c.type !== "pixelised");
  if (analytic.length > 0) {
    const src = buildSource(analytic);
    if (src.totalFluxJy() > 0) {
      const plan = new RayTracePlan({ n: grid.n, cellArcsec: grid.cellArcsec, supersample: 4 });
      plan.trace(lens);
      sourceMag = totalMagnification(plan, src);
    }
  }
  return {
    einstein_radius_arcsec: thetaE,
    einstein_mass_msun: dist && thetaE !== null ? einsteinMassMsun(thetaE, dist) : null,
    sigma_crit_msun_per_arcsec2: dist ? dist.sigmaCritMsunPerArcsec2 : null,
    D_l_mpc: dist ? dist.dLMpc : null,
    D_s_mpc: dist ? dist.dSMpc : null,
    D_ls_mpc: dist ? dist.dLsMpc : null,
    velocity_dispersion_kms: dist && thetaE !== null ? sisVelocityDispersionKms(thetaE, dist) : null,
    source_magnification: sourceMag,
    grid: { n: grid.n, cell_arcsec: grid.cellArcsec },
    critical_curves: toJson(curves),
    caustics: toJson(caus),
    maps: { convergence: convergenceMap(lens, grid), magnification: magnificationMap(lens, grid) },
  };
}

/** The summary without its typed-array maps, ready for JSON.stringify. */
export function summaryToJson(s: LensSummary): Omit<LensSummary, "maps"> {
  const { maps: _maps, ...rest } = s;
  return rest;
}

function toJson(c: CriticalCurves): { tangential: JsonPolyline[]; radial: JsonPolyline[] } {
  const conv = (l: CriticalCurves["tangential"]) =>
    l.map((p) => ({ closed: p.closed, points: p.xArcsec.map((x, k) => [x, p.yArcsec[k]] as [number, number]) }));
  return { tangential: conv(c.tangential), radial: conv(c.radial) };
}

function defaultGrid(model: NumericModel, lens: Lens): GridSpec {
  if (model.field) {
    const { size_arcsec: size, pixel_arcsec: pix } = model.field;
    if (!(size > 0) || !(pix > 0) || pix > size) {
      throw new InputError(`field: size_arcsec ${size} and pixel_arcsec ${pix} must be positive with pixel ≤ size`);
    }
    let n = Math.round(size / pix);
    if (n % 2 === 1) n += 1;
    return { n: Math.max(n, 2), cellArcsec: pix };
  }
  let scale = 0;
  for (const c of lens.components) {
    const p = (c as unknown as { params: Record<string, number> }).params;
    const t = p.thetaEArcsec ?? (p.rSArcsec !== undefined ? p.rSArcsec * p.kappaS * 4 : 0);
    if (Number.isFinite(t)) scale = Math.max(scale, t + Math.hypot(p.xArcsec ?? 0, p.yArcsec ?? 0));
  }
  const size = Math.max(4, 2.5 * 2 * scale);
  return { n: 256, cellArcsec: size / 256 };
}
