/**
 * `arcfringe lens MODEL.json`: properties of a lens model with its free parameters at their
 * `init` values — the Einstein radius sqrt(A_t/π) from the tangential critical curve traced on
 * a grid (CONVENTIONS.md), and with redshifts the distances, Σ_crit, the Einstein mass and the
 * equivalent SIS velocity dispersion (src/lens/summary.ts, src/cosmo) — as a report or JSON;
 * with `--out`, maps of convergence and magnification (PNG with the critical curves, and FITS)
 * and the source plane with the caustics and the source components.
 *
 * Grid: `--size` and `--cell` give the field width and the node spacing (n = size/cell, made
 * even); one alone keeps 256 nodes per side; neither uses the model's `field`, else a field
 * 2.5 Einstein diameters across with 256 nodes (src/lens/summary.ts). The Einstein radius from
 * a polygon of chords ℓ on a circle of radius R is short by about ℓ²/(12R²) relative (the
 * inscribed-polygon area deficit ℓ²/(6R²), halved by the square root; analytic), so a cell of
 * R/50 gives about 1e-4 at worst.
 * Reference: CONVENTIONS.md "Lens models"; REFERENCES.md §1–2.
 */
import { InputError } from "../errors.js";
import { checkOutDir, fmt, note, printJson, printTable, withUnit } from "./output.js";
import type { CommandSpec } from "./spec.js";

export interface LensOptions {
  json?: boolean;
  out?: string;
  size?: number;
  cell?: number;
  debug?: boolean;
}

/** Grid nodes per side used when only one of --size / --cell is given. */
const DEFAULT_NODES = 256;
/** Largest grid side accepted [nodes]: a 4096² map is 128 MB per Float64 map. */
const MAX_NODES = 4096;
/** Nodes per side of the source-plane brightness map drawn in source_plane.png. */
const SOURCE_MAP_NODES = 240;

export const lensCommand: CommandSpec<LensOptions> = {
  name: "lens",
  args: "<model>",
  summary: "lens properties, maps, critical curves and caustics of a model file",
  options: [
    { flags: "--json", description: "print the properties and curves as JSON on stdout", kind: "flag" },
    { flags: "--out <dir>", description: "write convergence.png/.fits, magnification.png/.fits and source_plane.png here", kind: "string" },
    {
      flags: "--size <arcsec>", description: "width of the map grid (default: the model's field, else 2.5 Einstein diameters)", kind: "number",
      min: 0, rangeHint: "the field width must be positive",
    },
    {
      flags: "--cell <arcsec>", description: "grid spacing (default: size/256); the Einstein radius is good to ≈ (cell/θ_E)²/12", kind: "number",
      min: 0, rangeHint: "the grid spacing must be positive",
    },
  ],
  examples: [
    { comment: "Einstein radius, mass and velocity dispersion of a model", command: "arcfringe lens model.json" },
    { comment: "The same as JSON on a fine grid, for scripts", command: "arcfringe lens model.json --json --size 4 --cell 0.01" },
    { comment: "Maps with critical curves and caustics as PNG and FITS", command: "arcfringe lens model.json --out lens-maps" },
  ],
  action: runLens,
};

/** The grid of the maps from the options (see the module comment), or undefined for the default. */
export function lensGrid(sizeArcsec: number | undefined, cellArcsec: number | undefined): { n: number; cellArcsec: number } | undefined {
  if (sizeArcsec === undefined && cellArcsec === undefined) return undefined;
  if (sizeArcsec !== undefined && !(sizeArcsec > 0)) throw new InputError(`--size ${sizeArcsec}: the field width must be a positive number of arcsec`);
  if (cellArcsec !== undefined && !(cellArcsec > 0)) throw new InputError(`--cell ${cellArcsec}: the grid spacing must be a positive number of arcsec`);
  let n: number;
  let cell: number;
  if (sizeArcsec !== undefined && cellArcsec !== undefined) {
    n = 2 * Math.round(sizeArcsec / cellArcsec / 2);
    cell = cellArcsec;
  } else if (sizeArcsec !== undefined) {
    n = DEFAULT_NODES;
    cell = sizeArcsec / DEFAULT_NODES;
  } else {
    n = DEFAULT_NODES;
    cell = cellArcsec!;
  }
  if (n < 16) throw new InputError(`--size ${sizeArcsec} --cell ${cellArcsec}: only ${n} grid nodes per side; use a field at least 16 cells wide`);
  if (n > MAX_NODES) {
    throw new InputError(`--size ${sizeArcsec} --cell ${cellArcsec}: ${n} grid nodes per side is more than ${MAX_NODES}; use a larger --cell or a smaller --size`);
  }
  return { n, cellArcsec: cell };
}

async function runLens(args: string[], opts: LensOptions): Promise<number> {
  const path = args[0];
  if (opts.out !== undefined) checkOutDir(opts.out);
  const grid = lensGrid(opts.size, opts.cell);
  const { loadModelFile, toNumbers, initialVector } = await import("../model/index.js");
  const spec = loadModelFile(path);
  const model = toNumbers(spec, initialVector(spec));
  if (model.lens.length === 0) throw new InputError(`${path}: lens: the model has no lens components; add at least one (e.g. an sie)`);
  const { lensSummary, summaryToJson } = await import("../lens/summary.js");
  type SummaryModel = Parameters<typeof lensSummary>[0];
  const summary = lensSummary(model as unknown as SummaryModel, { grid });
  const json = summaryToJson(summary);

  let files: Array<{ name: string; bytes: Uint8Array | Buffer }> = [];
  if (opts.out !== undefined) files = await renderMaps(model, summary, path);

  if (opts.out !== undefined) {
    const { writeFileAtomic } = await import("../io/atomicWrite.js");
    const { join } = await import("node:path");
    for (const f of files) writeFileAtomic(join(opts.out, f.name), f.bytes);
    note(`wrote ${files.map((f) => f.name).join(", ")} in ${opts.out}`);
  }

  if (opts.json) {
    printJson({ model: path, ...json });
    return 0;
  }
  const g = summary.grid;
  const rows: [string, string][] = [
    [
      "Einstein radius",
      summary.einstein_radius_arcsec !== null
        ? `${withUnit(summary.einstein_radius_arcsec, "″", 7)}  (sqrt(area/π) of the tangential critical curve on a ${g.n}² grid of ${fmt(g.cell_arcsec, 4)}″)`
        : `none: no closed tangential critical curve inside the ${fmt(g.n * g.cell_arcsec, 4)}″ grid (a subcritical lens, or enlarge --size)`,
    ],
  ];
  if (model.redshift) {
    rows.push(
      ["redshifts", `lens ${model.redshift.lens}, source ${model.redshift.source}${model.cosmology ? `; H0 ${model.cosmology.H0}, Ωm ${model.cosmology.Om0}` : "; H0 70, Ωm 0.3 (default)"}`],
      ["D_l, D_s, D_ls", `${fmt(summary.D_l_mpc, 7)}, ${fmt(summary.D_s_mpc, 7)}, ${fmt(summary.D_ls_mpc, 7)} Mpc (angular diameter)`],
      ["Σ_crit", `${fmt(summary.sigma_crit_msun_per_arcsec2, 7)} M☉/arcsec²`],
      ["Einstein mass", `${fmt(summary.einstein_mass_msun, 7)} M☉ inside θ_E`],
      ["SIS velocity dispersion", `${withUnit(summary.velocity_dispersion_kms, "km/s", 6)}`],
    );
  } else {
    rows.push(["masses", "give redshift: { lens, source } in the model file for distances, Σ_crit, mass and velocity dispersion"]);
  }
  if (summary.source_magnification !== null) rows.push(["source magnification", `${fmt(summary.source_magnification, 5)} (lensed / intrinsic flux)`]);
  const c = json.critical_curves;
  rows.push(["critical curves", `${c.tangential.length} tangential, ${c.radial.length} radial`]);
  printTable(rows, 0);
  return 0;
}

/** Encode the FITS maps and render the three PNG figures (nothing is written here). */
async function renderMaps(
  model: import("../model/types.js").NumericModel,
  summary: import("../lens/summary.js").LensSummary,
  path: string,
): Promise<Array<{ name: string; bytes: Uint8Array | Buffer }>> {
  const { encodeFitsImage } = await import("../io/fits.js");
  const { convergenceFigure, magnificationFigure, sourcePlaneFigure } = await import("../io/lensPlots.js");
  const { renderPng } = await import("../io/render.js");
  const { basename } = await import("node:path");
  const n = summary.grid.n;
  const cell = summary.grid.cell_arcsec;
  const name = basename(path);
  const toCurves = (set: { tangential: { closed: boolean; points: [number, number][] }[]; radial: { closed: boolean; points: [number, number][] }[] }) => {
    const conv = (l: { closed: boolean; points: [number, number][] }[]) =>
      l.map((p) => ({ closed: p.closed, xArcsec: p.points.map((q) => q[0]), yArcsec: p.points.map((q) => q[1]) }));
    return { tangential: conv(set.tangential), radial: conv(set.radial) };
  };
  const critical = toCurves(summary.critical_curves);
  const caustics = toCurves(summary.caustics);
  const comments = [
    `lens model ${name} with free parameters at init; offsets in arcsec from the model origin (x East, y North)`,
  ];
  const common = { nx: n, ny: n, cellArcsec: cell, celestial: { kind: "offset" as const }, bitpix: -64 as const, comments };
  const files: Array<{ name: string; bytes: Uint8Array | Buffer }> = [
    { name: "convergence.fits", bytes: encodeFitsImage({ ...common, data: summary.maps.convergence, bunit: "", history: ["convergence kappa = Sigma/Sigma_crit"] }) },
    { name: "magnification.fits", bytes: encodeFitsImage({ ...common, data: summary.maps.magnification, bunit: "", history: ["signed magnification mu = 1/det A"] }) },
  ];
  const grid = { n, cellArcsec: cell };
  files.push({ name: "convergence.png", bytes: await renderPng(convergenceFigure({ ...grid, data: summary.maps.convergence }, critical, name)) });
  files.push({ name: "magnification.png", bytes: await renderPng(magnificationFigure({ ...grid, data: summary.maps.magnification }, critical, name)) });

  // Source plane: the intrinsic brightness of the extended components on a square that holds
  // the caustics and every source (3 sizes around each centre), plus markers and ellipses.
  const shapes = model.source.flatMap((s, k) => {
    if (s.type === "pixelised") return [];
    const size = s.type === "sersic" ? s.r_eff : s.type === "gaussian" ? s.sigma : 0;
    const q = s.type === "point_source" ? 1 : s.q;
    const pa = s.type === "point_source" ? 0 : s.pa;
    return [{ xArcsec: s.x, yArcsec: s.y, sizeArcsec: size, q, paDeg: pa, label: `source[${k}]` }];
  });
  let half = 0;
  for (const l of [...caustics.tangential, ...caustics.radial]) {
    for (let k = 0; k < l.xArcsec.length; k++) half = Math.max(half, Math.abs(l.xArcsec[k]), Math.abs(l.yArcsec[k]));
  }
  for (const s of shapes) half = Math.max(half, Math.abs(s.xArcsec) + (3 * s.sizeArcsec) / Math.sqrt(s.q), Math.abs(s.yArcsec) + (3 * s.sizeArcsec) / Math.sqrt(s.q));
  half = Math.max(0.25, 1.15 * (Number.isFinite(half) ? half : 1));
  const m = SOURCE_MAP_NODES;
  const sCell = (2 * half) / m;
  const bx = new Float64Array(m * m);
  const by = new Float64Array(m * m);
  for (let j = 0; j < m; j++) {
    for (let i = 0; i < m; i++) {
      bx[j * m + i] = (m / 2 - i) * sCell;
      by[j * m + i] = (j - m / 2) * sCell;
    }
  }
  const brightness = new Float64Array(m * m);
  const extended = model.source.filter((s) => s.type === "sersic" || s.type === "gaussian");
  if (extended.length > 0) {
    const { buildSource } = await import("../source/analytic.js");
    buildSource(extended as never).evaluate(bx, by, brightness);
  }
  files.push({ name: "source_plane.png", bytes: await renderPng(sourcePlaneFigure(caustics, shapes, { n: m, cellArcsec: sCell, data: brightness }, name)) });
  return files;
}
