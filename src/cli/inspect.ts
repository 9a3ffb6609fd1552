/**
 * `arcfringe inspect FILE`: what a visibility file holds and whether it looks usable — entries
 * kept and dropped (and why), channels, correlations, baselines, resolution and scales, the
 * weight-scale check, times — as an aligned report or as JSON; optionally the uv-coverage and
 * amplitude-vs-uv-distance figures.
 *
 * The natural-weighted Stokes I image noise printed here is 1/sqrt(Σ w_I) [Jy/beam]: a
 * natural-weighted dirty image is Σ w Re(d e^{iφ})/Σ w and each Re(d e^{iφ}) has variance 1/w
 * (CONVENTIONS.md weights), so its variance is Σ w²(1/w)/(Σ w)² = 1/Σ w (analytic).
 * A weight scale outside [0.5, 2] means the weights are off by more than a factor of 2 in
 * variance (√2 in σ), enough to bias every uncertainty: it gets a loud warning.
 * Reference: REFERENCES.md §5–7; src/vis/summary.ts and src/vis/noise.ts for the estimates.
 */
import { InputError } from "../errors.js";
import type { VisSummary } from "../vis/summary.js";
import type { StokesReport } from "../vis/types.js";
import { checkOutDir, fluxText, fmt, heading, note, out, printJson, printTable, warn, withUnit } from "./output.js";
import type { CommandSpec } from "./spec.js";

export interface InspectOptions {
  json?: boolean;
  out?: string;
  rescaleWeights?: boolean;
  debug?: boolean;
}

/** Weight-scale factors outside this range get a warning (see the module comment). */
export const WEIGHT_SCALE_OK: readonly [number, number] = [0.5, 2];

export const inspectCommand: CommandSpec<InspectOptions> = {
  name: "inspect",
  args: "<file>",
  summary: "summary and diagnostics of a visibility file (UVFITS, HDF5 or CSV)",
  options: [
    { flags: "--json", description: "print the summary as JSON on stdout instead of the report", kind: "flag" },
    { flags: "--out <dir>", description: "also write uv_coverage.png and amp_vs_uvdist.png into this folder", kind: "string" },
    {
      flags: "--rescale-weights",
      description: "multiply the weights by the estimated weight-scale factor before reporting (as fit --rescale-weights would)",
      kind: "flag",
    },
  ],
  examples: [
    { comment: "Report what the file holds, with the weight check", command: "arcfringe inspect data.uvfits" },
    { comment: "The same as JSON, for scripts", command: "arcfringe inspect data.uvfits --json > summary.json" },
    { comment: "uv coverage and amplitude vs uv distance as PNG", command: "arcfringe inspect data.h5 --out plots" },
  ],
  action: runInspect,
};

/** The JSON `inspect --json` prints: the vis summary plus Stokes I formation, noise and warnings. */
export interface InspectJson extends VisSummary {
  file: string;
  stokesI: StokesReport & { visibilities: number };
  naturalImageNoiseJyPerBeam: number | null;
  weightsRescaledBy: number | null;
  warnings: string[];
}

async function runInspect(args: string[], opts: InspectOptions): Promise<number> {
  const file = args[0];
  if (opts.out !== undefined) checkOutDir(opts.out);
  const { readVisibilities, summariseVisibilities, toStokesI, estimateWeightScale, rescaleWeights } = await import("../vis/index.js");
  const { basename } = await import("node:path");
  const read = await readVisibilities(file);
  let vis = read.vis;
  const warnings: string[] = [];
  let rescaledBy: number | null = null;
  if (opts.rescaleWeights) {
    const ws = estimateWeightScale(vis);
    if (!(ws.weightScale > 0) || !Number.isFinite(ws.weightScale)) {
      throw new InputError(
        `--rescale-weights: ${basename(file)} has no consecutive integrations on the same baseline and channel, so the weight scale cannot be estimated; drop --rescale-weights`,
      );
    }
    vis = rescaleWeights(vis, ws.weightScale);
    rescaledBy = ws.weightScale;
  }
  const summary = summariseVisibilities(vis, read.report);
  const stokes = toStokesI(vis);
  let sumW = 0;
  for (let k = 0; k < stokes.vis.count; k++) sumW += stokes.vis.weight[k];
  const noise = sumW > 0 ? 1 / Math.sqrt(sumW) : null;

  const scale = summary.weightScale.robust;
  if (scale !== null && (scale < WEIGHT_SCALE_OK[0] || scale > WEIGHT_SCALE_OK[1])) {
    warnings.push(
      `weights look wrong by a factor ${fmt(scale, 3)} (the scatter of consecutive integrations implies weights × ${fmt(scale, 3)}); use --rescale-weights in fit`,
    );
  }
  if (stokes.report.singleDropped > 0) {
    warnings.push(`${stokes.report.singleDropped} single-hand linear-feed entries (XX or YY without its partner) cannot form Stokes I and are not used`);
  }
  if (stokes.vis.count === 0) warnings.push("no Stokes I can be formed from these correlations (cross hands only?)");

  const figures = opts.out !== undefined ? await renderFigures(vis, basename(file)) : undefined;

  if (opts.json) {
    const json: InspectJson = {
      file,
      ...summary,
      stokesI: { ...stokes.report, visibilities: stokes.vis.count },
      naturalImageNoiseJyPerBeam: noise,
      weightsRescaledBy: rescaledBy,
      warnings,
    };
    printJson(json);
  } else {
    printReport(file, summary, stokes.report, stokes.vis.count, noise, rescaledBy);
  }
  if (rescaledBy !== null) note(`weights multiplied by ${fmt(rescaledBy, 4)} (robust estimate)`);
  for (const w of warnings) warn(w);

  if (figures && opts.out !== undefined) {
    const { writeFileAtomic } = await import("../io/atomicWrite.js");
    const { join } = await import("node:path");
    writeFileAtomic(join(opts.out, "uv_coverage.png"), figures.coverage);
    writeFileAtomic(join(opts.out, "amp_vs_uvdist.png"), figures.amplitude);
    note(`wrote ${join(opts.out, "uv_coverage.png")} and ${join(opts.out, "amp_vs_uvdist.png")}`);
  }
  return 0;
}

/** Render both figures to PNG bytes (before anything is written, so a failure leaves no file). */
async function renderFigures(vis: import("../vis/types.js").Visibilities, name: string): Promise<{ coverage: Buffer; amplitude: Buffer }> {
  const { uvCoverageFigure, ampVsUvDistFigure } = await import("../io/uvPlots.js");
  const { renderPng } = await import("../io/render.js");
  const coverage = await renderPng(uvCoverageFigure(vis.uLambda, vis.vLambda, name));
  const amplitude = await renderPng(ampVsUvDistFigure(vis.uLambda, vis.vLambda, vis.reJy, vis.imJy, vis.weight, name));
  return { coverage, amplitude };
}

function ghz(hz: number | null): string {
  return hz === null ? "n/a" : `${fmt(hz / 1e9, 7)} GHz`;
}

function printReport(file: string, s: VisSummary, st: StokesReport, nI: number, noise: number | null, rescaledBy: number | null): void {
  heading(`${file}  (${s.format.toUpperCase()})`);
  const rows: [string, string][] = [];
  if (s.object || s.telescope) rows.push(["object / telescope", `${s.object ?? "?"} / ${s.telescope ?? "?"}`]);
  rows.push([
    "phase centre",
    s.phaseCentreDeg ? `RA ${s.phaseCentreDeg[0].toFixed(6)}°, Dec ${s.phaseCentreDeg[1].toFixed(6)}°` : "unknown (not in the file)",
  ]);
  printTable(rows);

  heading("Entries");
  const e = s.entries;
  printTable([
    ["in file", String(e.inFile)],
    ["kept", String(e.kept)],
    ["dropped, flagged", `${e.droppedFlagged}  (weight ≤ 0)`],
    ["dropped, non-finite", `${e.droppedNonFinite}  (NaN or infinite data or weight)`],
    ["dropped, autocorrelations", String(e.droppedAuto)],
    ["correlations", Object.entries(s.correlations).map(([k, v]) => `${k} ${v}`).join(", ") || "none"],
    [
      "Stokes I",
      `${nI} visibilities: ${st.pairs} pairs combined, ${st.singleKept} single circular hands kept, ${st.singleDropped} single linear hands dropped, ` +
        `${st.crossHandsIgnored} cross-hand entries unused, ${st.alreadyI} already I`,
    ],
  ]);

  heading("Frequencies and array");
  const c = s.channels;
  printTable([
    ["channels", `${c.count}: ${ghz(c.minFreqHz)} – ${ghz(c.maxFreqHz)}, width ${c.widthHz > 0 ? fmt(c.widthHz / 1e6, 5) + " MHz" : "unknown"}`],
    ["antennas / baselines", `${s.antennas} / ${s.baselines}`],
    ["baseline length", s.baselineLengthM.max !== null ? `${withUnit(s.baselineLengthM.min, "m")} – ${withUnit(s.baselineLengthM.max, "m")}` : "n/a"],
    ["uv distance", `${withUnit(s.uvDistanceKLambda.min, "kλ")} – ${withUnit(s.uvDistanceKLambda.max, "kλ")}`],
    ["max |u|, |v|, |w|", `${withUnit(s.maxAbsULambda / 1e3, "kλ")}, ${withUnit(s.maxAbsVLambda / 1e3, "kλ")}, ${withUnit(s.maxAbsWLambda / 1e3, "kλ")}`],
  ]);

  heading("Scales");
  const b = s.synthesizedBeamArcsec;
  printTable([
    ["resolution λ/B_max", withUnit(b.lambdaOverBmax, "″")],
    ["natural beam (estimate)", `${withUnit(b.naturalMajor, "″")} × ${withUnit(b.naturalMinor, "″")}, PA ${fmt(b.naturalPaDeg, 4)}°`],
    ["largest angular scale", `${withUnit(s.largestAngularScaleArcsec, "″")}  (0.6 λ/B_min)`],
    [
      "primary beam FWHM",
      s.primaryBeamFwhmArcsec !== null
        ? `${withUnit(s.primaryBeamFwhmArcsec, "″")}  (1.13 λ/D, D = ${s.dishDiameterM} m, mean frequency)`
        : "unknown (no dish diameter in the file)",
    ],
  ]);

  heading("Noise and weights");
  const w = s.weightScale;
  printTable([
    [
      "weight scale",
      w.robust !== null
        ? `${fmt(w.robust, 4)} (robust), ${fmt(w.mean, 4)} (mean) from ${w.pairs} pairs of consecutive integrations; 1 = weights match the scatter`
        : "n/a (no consecutive integrations on one baseline)",
    ],
    ...(rescaledBy !== null ? [["weights rescaled by", fmt(rescaledBy, 4)] as [string, string]] : []),
    ["Stokes I image noise", noise !== null ? `${fluxText(noise, "Jy/beam")}  (natural weighting, from the weights)` : "n/a"],
  ]);

  heading("Time");
  const t = s.time;
  // A file without dates counts from JD 0 (4713 BC); no interferometer data predate 1900.
  const dated = t.start !== null && t.end !== null && Date.parse(t.start) > Date.UTC(1900, 0, 1);
  printTable([
    ["range (UTC)", dated ? `${t.start} – ${t.end}` : "unknown (the file gives no dates)"],
    ["span", `${fmt(t.spanS / 3600, 4)} h, ${t.distinctTimes} distinct times`],
  ]);
  if (s.notes.length > 0) {
    heading("Notes from the reader");
    for (const n of s.notes) out(`  ${n}`);
  }
}
