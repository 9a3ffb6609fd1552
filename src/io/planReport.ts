/**
 * The outputs of `arcfringe plan`: one table of quantities per configuration (terminal, CSV,
 * Markdown, HTML) and three figures (uv coverage with the dirty beam; forecast σ per parameter;
 * the dirty image of the simulated lens). The HTML page is self-contained: figures are embedded
 * as PNG data URIs.
 *
 * plan.csv is long-format: one row per configuration × quantity, columns
 * `configuration, quantity, value, unit, note`. Quantity keys are stable snake_case names
 * (`beam_natural_major`, `sigma:lens[0].theta_E`, `correlation:lens[0].theta_E:lens[0].q`, …);
 * values are in the stated unit ("inf" when unconstrained, empty when not computed); `note` says
 * "degenerate" for a parameter the data do not pin down and "unconstrained" when σ is infinite.
 * Reference: RFC 4180 (CSV); CommonMark (Markdown tables as in GitHub-flavoured Markdown).
 */
import { gridExtentArcsec, imagePanel } from "./imagePanel.js";
import { composeFigure } from "./layout.js";
import { renderPng } from "./render.js";
import { escapeXml, line, marker, rect, text, type Panel } from "./svg.js";
import { formatTick, logTicks, scaleToPx, type AxisScale } from "./ticks.js";
import { PALETTE, scatterPanel } from "./xyPanel.js";
import { writeFileAtomic } from "./atomicWrite.js";
import type { ConfigForecast, TimeTarget, TimeToReach, TrialSummary } from "../sim/plan/index.js";

/** What the plan run adds beyond the forecasts themselves. */
export interface PlanExtras {
  /** Sky file path as given. */
  skyLabel: string;
  /** Observation file path of each configuration. */
  configFiles: string[];
  seed: number;
  timeTarget?: TimeTarget;
  /** One per configuration, when a target was given. */
  times?: TimeToReach[];
  /** One per configuration (null where no trials ran). */
  trials?: (TrialSummary | null)[];
  /** Command line, for the report header. */
  command?: string;
}

/** One quantity across configurations. */
export interface QuantityRow {
  key: string;
  label: string;
  unit: string;
  values: number[];
  /** Per configuration: "", "degenerate" or "unconstrained". */
  notes: string[];
  /** Significant digits for display. */
  digits: number;
}

const UJY = 1e6;
const MJY = 1e3;
const HOUR_S = 3600;

/**
 * The rows of the comparison table, in display units.
 * @returns rows; σ rows carry parameter units, times hours, noise μJy/beam
 */
export function planRows(forecasts: ConfigForecast[], extras: PlanExtras): QuantityRow[] {
  const rows: QuantityRow[] = [];
  const add = (key: string, label: string, unit: string, get: (f: ConfigForecast, k: number) => number, digits = 3, note?: (f: ConfigForecast, k: number) => string): void => {
    rows.push({ key, label, unit, values: forecasts.map(get), notes: forecasts.map((f, k) => (note ? note(f, k) : "")), digits });
  };
  const nan = Number.NaN;
  add("n_antennas", "antennas", "", (f) => f.nAnt, 6);
  add("n_visibilities", "visibilities (Stokes I)", "", (f) => f.nVis, 8);
  add("on_source_time", "time on source", "h", (f) => f.onSourceS / HOUR_S);
  add("frequency", "band centre", "GHz", (f) => f.freqHz / 1e9, 4);
  add("resolution_rule", "λ/B_max (rule of thumb)", "arcsec", (f) => f.beams?.resolutionRuleArcsec ?? nan);
  add("beam_natural_major", "beam, natural: major FWHM", "arcsec", (f) => f.beams?.natural.bmajArcsec ?? nan);
  add("beam_natural_minor", "beam, natural: minor FWHM", "arcsec", (f) => f.beams?.natural.bminArcsec ?? nan);
  add("beam_natural_pa", "beam, natural: PA", "deg", (f) => f.beams?.natural.bpaDeg ?? nan);
  add("beam_briggs_major", "beam, Briggs 0.5: major FWHM", "arcsec", (f) => f.beams?.briggs.bmajArcsec ?? nan);
  add("beam_briggs_minor", "beam, Briggs 0.5: minor FWHM", "arcsec", (f) => f.beams?.briggs.bminArcsec ?? nan);
  add("beam_briggs_pa", "beam, Briggs 0.5: PA", "deg", (f) => f.beams?.briggs.bpaDeg ?? nan);
  add("largest_angular_scale", "largest angular scale 0.6 λ/B_min", "arcsec", (f) => f.largestAngularScaleArcsec);
  add("point_source_sigma", "point-source σ, natural (1/√Σw)", "uJy/beam", (f) => f.pointSigmaJy * UJY);
  add("radiometer_sigma", "radiometer-equation image σ", "uJy/beam", (f) => f.radiometerSigmaJy * UJY);
  add("surface_brightness_sigma_k", "surface-brightness σ per natural beam (RJ)", "K", (f) => f.surfaceBrightness?.kelvin ?? nan);
  add("surface_brightness_sigma", "surface-brightness σ per natural beam", "uJy/arcsec2", (f) => (f.surfaceBrightness?.jyPerArcsec2 ?? nan) * UJY);
  add("lensed_flux", "sky flux, lensed and beam-attenuated", "mJy", (f) => (f.recovery?.lensedFluxJy ?? nan) * MJY);
  add("recovered_fraction", "flux on sampled scales (recovered fraction)", "", (f) => f.recovery?.fraction ?? nan);
  add("peak", "peak of the noise-free dirty image", "mJy/beam", (f) => (f.recovery?.peakJyPerBeam ?? nan) * MJY);
  add("peak_snr", "peak S/N, natural weighting", "", (f) => f.recovery?.peakSnr ?? nan);
  add("fisher_condition_number", "condition number of F (unit diagonal)", "", (f) => f.summary.conditionNumber, 2);
  const names = forecasts[0]?.fisher.names ?? [];
  names.forEach((name, i) => {
    const unit = forecasts[0].fisher.units[i];
    add(`sigma:${name}`, `σ ${name} (truth ${formatNumber(forecasts[0].fisher.truth[i], 4)})`, unit, (f) => f.parameters[i].sigma, 3, (f) =>
      !Number.isFinite(f.parameters[i].sigma) ? "unconstrained" : f.parameters[i].degenerate ? "degenerate" : "");
  });
  if (extras.timeTarget && extras.times) {
    const t = extras.timeTarget;
    const times = extras.times;
    add(`time_to_reach:${t.name}`, `time to σ(${t.name}) = ${t.sigma}`, "h", (_f, k) => times[k].timeS / HOUR_S);
  }
  if (extras.trials) {
    const trials = extras.trials;
    names.forEach((name, i) => {
      add(`trial_scatter_over_sigma:${name}`, `trials: scatter/σ ${name}`, "", (_f, k) => trials[k]?.ratio[i] ?? nan);
      add(`trial_bias_over_sigma:${name}`, `trials: bias/σ ${name}`, "", (_f, k) => trials[k]?.biasInSigma[i] ?? nan);
    });
  }
  return rows;
}

/** A number for people: `digits` significant digits, "∞" and "–" for infinity and NaN. */
export function formatNumber(v: number, digits = 3): string {
  if (Number.isNaN(v)) return "–";
  if (!Number.isFinite(v)) return v > 0 ? "∞" : "−∞";
  if (v === 0) return "0";
  const a = Math.abs(v);
  if (Number.isInteger(v) && a < 1e9) return String(v);
  if (a >= 1e6 || a < 1e-3) return v.toExponential(Math.max(0, digits - 1)).replace("e+", "e");
  return String(Number(v.toPrecision(digits)));
}

function cell(row: QuantityRow, k: number): string {
  const s = formatNumber(row.values[k], row.digits);
  return row.notes[k] === "degenerate" ? `${s} (degenerate)` : s;
}

/** The comparison as an aligned text table (quantities down, configurations across). */
export function terminalTable(forecasts: ConfigForecast[], rows: QuantityRow[]): string {
  const head = ["quantity", "unit", ...forecasts.map((f) => f.label)];
  const body = rows.map((r) => [r.label, r.unit, ...forecasts.map((_, k) => cell(r, k))]);
  const widths = head.map((h, c) => Math.max(h.length, ...body.map((b) => b[c].length)));
  const fmt = (cols: string[]): string => cols.map((s, c) => (c < 2 ? s.padEnd(widths[c]) : s.padStart(widths[c]))).join("  ").trimEnd();
  return [fmt(head), widths.map((w) => "-".repeat(w)).join("  "), ...body.map(fmt)].join("\n") + "\n";
}

function csvField(s: string): string {
  return /[",\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

function csvNumber(v: number): string {
  return Number.isNaN(v) ? "" : Number.isFinite(v) ? String(Number(v.toPrecision(8))) : v > 0 ? "inf" : "-inf";
}

/**
 * plan.csv: one row per configuration × quantity (see the module comment), then the forecast
 * correlation of every parameter pair as `correlation:<name i>:<name j>` (i < j; empty where a
 * σ is infinite).
 */
export function planCsv(forecasts: ConfigForecast[], rows: QuantityRow[]): string {
  const lines = ["configuration,quantity,value,unit,note"];
  forecasts.forEach((f, k) => {
    for (const r of rows) lines.push([f.label, r.key, csvNumber(r.values[k]), r.unit, r.notes[k]].map(csvField).join(","));
    const names = f.fisher.names;
    const p = names.length;
    for (let i = 0; i < p; i++) {
      for (let j = i + 1; j < p; j++) {
        lines.push([f.label, `correlation:${names[i]}:${names[j]}`, csvNumber(f.summary.correlation[i * p + j]), "", ""].map(csvField).join(","));
      }
    }
  });
  return lines.join("\n") + "\n";
}

/** Parameter details: truth, unit, prior, finite-difference step and formula (same for all configurations but the arcsec steps). */
function parameterDetailLines(forecasts: ConfigForecast[]): string[][] {
  const f0 = forecasts[0];
  if (!f0) return [];
  return f0.parameters.map((p, i) => [
    p.name, p.unit, formatNumber(p.truth, 6), p.priorSd !== undefined ? `normal, sd ${formatNumber(p.priorSd, 3)}` : "no curvature",
    forecasts.map((f) => `${formatNumber(f.parameters[i].step, 3)} (${f.parameters[i].scheme})`).join("; "),
  ]);
}

/** Correlation matrix of one configuration as rows of 2-decimal strings ("–" where σ is infinite). */
function correlationLines(f: ConfigForecast): string[][] {
  const p = f.fisher.names.length;
  const out: string[][] = [];
  for (let i = 0; i < p; i++) {
    const row = [String(i + 1)];
    for (let j = 0; j < p; j++) {
      const r = f.summary.correlation[i * p + j];
      row.push(Number.isFinite(r) ? (i === j ? "1" : r.toFixed(2)) : "–");
    }
    out.push(row);
  }
  return out;
}

/** Definitions shown under the table (Markdown and HTML). */
const DEFINITIONS: [string, string][] = [
  ["beam", "elliptical Gaussian fitted to the main lobe of the dirty beam (natural, and Briggs robust 0.5 on a 256² grid of cell λ/(6 B_max))"],
  ["largest angular scale", "0.6 λ/B_min, B_min the shortest projected baseline (REFERENCES.md §7, a rule of thumb)"],
  ["point-source σ", "natural-weighted image noise 1/√Σw, w = 1/σ² per visibility part; the radiometer-equation value is shown beside it"],
  ["surface-brightness σ", "point-source σ divided by the natural beam area πθ_maj θ_min/(4 ln 2); in kelvin as Rayleigh–Jeans brightness temperature σ λ²/(2kΩ)"],
  ["recovered fraction", "the beam-attenuated lensed sky with every spatial frequency shorter than B_min/λ removed, summed over the emission region (the brightest pixels holding 90 % of the lensed flux) and divided by the same sum of the full sky: the share of the lensed flux on the sampled scales (1 = nothing resolved out)"],
  ["peak S/N", "peak of the natural-weighted dirty image of the noise-free model over the point-source σ"],
  ["σ of a parameter", "√(F⁻¹)ᵢᵢ of the Fisher matrix of the uv-plane likelihood at the truth, from finite differences of the noise-free model visibilities (closed forms, or a ray-traced grid and NUFFT) summed over every visibility, plus the curvature of normal priors; 'degenerate': correlations widen σ more than 100×, or the direction is unconstrained (∞)"],
  ["trials", "Monte-Carlo check: scatter (sample standard deviation) and bias (mean − truth) of the fitted values over simulated noise realisations, in units of the forecast σ"],
  ["time to reach", "on-source time for the target σ with the same uv coverage (weights ∝ time); see the notes for where that scaling fails"],
];

/** plan.md: the comparison, definitions, notes and figure links. */
export function planMarkdown(forecasts: ConfigForecast[], rows: QuantityRow[], extras: PlanExtras, figureFiles: { file: string; caption: string }[]): string {
  const out: string[] = [];
  out.push(`# Array configurations for ${extras.skyLabel}`, "");
  if (extras.command) out.push("```", extras.command, "```", "");
  out.push("| configuration | file | antennas | hour angle [h] | band [GHz] | channels |", "| --- | --- | ---: | --- | ---: | ---: |");
  forecasts.forEach((f, k) => {
    out.push(`| ${mdEscape(f.label)} | ${mdEscape(extras.configFiles[k] ?? "")} | ${f.nAnt} | ${f.obs.hourAngleH[0]} … ${f.obs.hourAngleH[1]} | ${formatNumber(f.freqHz / 1e9, 4)} | ${f.obs.channels} |`);
  });
  out.push("", "## Comparison", "");
  out.push(`| quantity | unit | ${forecasts.map((f) => mdEscape(f.label)).join(" | ")} |`);
  out.push(`| --- | --- | ${forecasts.map(() => "---:").join(" | ")} |`);
  for (const r of rows) out.push(`| ${mdEscape(r.label)} | ${mdEscape(r.unit)} | ${forecasts.map((_, k) => mdEscape(cell(r, k))).join(" | ")} |`);
  out.push("", "Definitions:", "");
  for (const [term, def] of DEFINITIONS) out.push(`- **${term}**: ${def}.`);
  const details = parameterDetailLines(forecasts);
  if (details.length > 0) {
    out.push("", "## Free parameters", "");
    out.push(`| # | parameter | unit | truth | prior curvature | finite-difference step (${forecasts.map((f) => mdEscape(f.label)).join("; ")}) |`, "| ---: | --- | --- | ---: | --- | --- |");
    details.forEach((d, i) => out.push(`| ${i + 1} | ${d.map(mdEscape).join(" | ")} |`));
    for (const f of forecasts) {
      out.push("", `Correlations, ${mdEscape(f.label)} (parameters numbered as above):`, "");
      const p = f.fisher.names.length;
      out.push(`| | ${Array.from({ length: p }, (_, j) => j + 1).join(" | ")} |`, `| ---: | ${Array.from({ length: p }, () => "---:").join(" | ")} |`);
      for (const row of correlationLines(f)) out.push(`| ${row.join(" | ")} |`);
    }
  }
  const notes = collectNotes(forecasts, extras);
  if (notes.length > 0) {
    out.push("", "## Notes", "");
    for (const n of notes) out.push(`- ${mdEscape(n)}`);
  }
  if (figureFiles.length > 0) {
    out.push("", "## Figures", "");
    for (const fig of figureFiles) out.push(`![${mdEscape(fig.caption)}](${fig.file})`, "", `*${mdEscape(fig.caption)}*`, "");
  }
  out.push("", "plan.csv holds the same numbers, one row per configuration × quantity (columns configuration, quantity, value, unit, note), followed by the correlation of every parameter pair (`correlation:<name i>:<name j>`).", "");
  return out.join("\n");
}

function mdEscape(s: string): string {
  return s.replace(/\|/g, "\\|");
}

/** Notes worth reading next to the numbers: grid choices, degeneracies, time scaling. */
export function collectNotes(forecasts: ConfigForecast[], extras: PlanExtras): string[] {
  const notes: string[] = [];
  forecasts.forEach((f, k) => {
    for (const n of f.notes) notes.push(`${f.label}: ${n}`);
    const flagged = f.parameters.filter((p) => p.degenerate).map((p) => p.name);
    if (flagged.length > 0) notes.push(`${f.label}: degenerate or unconstrained: ${flagged.join(", ")}`);
    if (extras.times) for (const n of extras.times[k].notes) notes.push(`${f.label}: time to reach: ${n}`);
    const t = extras.trials?.[k];
    if (t) notes.push(`${f.label}: ${t.nOk} of ${t.nTrials} trial fits succeeded`);
  });
  return notes;
}

// ---- Figures ----

/** Uniform subsample of at most `max` indices (deterministic stride), for scatter plots. */
function strideIndices(count: number, max: number): number[] {
  const step = Math.max(1, Math.ceil(count / max));
  const out: number[] = [];
  for (let k = 0; k < count; k += step) out.push(k);
  return out;
}

/** Central crop of an N×N model-grid image with its pixel-edge extent [arcsec]. */
function crop(data: Float64Array, n: number, cellArcsec: number, half: number): { data: Float64Array; n: number; extent: [number, number, number, number] } {
  const h = Math.min(half, n / 2);
  if (h === n / 2) return { data, n, extent: gridExtentArcsec(n, cellArcsec) };
  const a = n / 2 - h, m = 2 * h;
  const out = new Float64Array(m * m);
  for (let j = 0; j < m; j++) for (let i = 0; i < m; i++) out[j * m + i] = data[(a + j) * n + (a + i)];
  // Column i of the crop is column a + i of the grid, at x = (n/2 − a − i)Δ.
  const extent: [number, number, number, number] = [(h + 0.5) * cellArcsec, (-h + 0.5) * cellArcsec, (-h - 0.5) * cellArcsec, (h - 0.5) * cellArcsec];
  return { data: out, n: m, extent };
}

/** uv coverage (both conjugates, kλ) and the natural dirty beam of each configuration, one row each. */
export function coverageFigure(forecasts: ConfigForecast[]): string {
  const panels: Panel[] = [];
  for (const f of forecasts) {
    const vis = f.coverage.vis;
    const idx = strideIndices(vis.count, 6000);
    const u = new Float64Array(2 * idx.length), v = new Float64Array(2 * idx.length);
    idx.forEach((k, q) => {
      u[2 * q] = vis.uLambda[k] / 1e3;
      v[2 * q] = vis.vLambda[k] / 1e3;
      u[2 * q + 1] = -vis.uLambda[k] / 1e3;
      v[2 * q + 1] = -vis.vLambda[k] / 1e3;
    });
    const r = (f.coverage.uvMaxRadialLambda / 1e3) * 1.05;
    panels.push(scatterPanel({
      series: [{ x: u, y: v, sizePx: 1.5, colour: PALETTE[0] }],
      xRange: [-r, r], yRange: [-r, r], widthPx: 330, heightPx: 330,
      xLabel: "u [kλ]", yLabel: "v [kλ]", title: `${f.label}: uv coverage`, legend: "none",
    }));
    if (f.beams) {
      const b = f.beams;
      const c = crop(b.psfNatural, b.size, b.cellArcsec, 48);
      panels.push(imagePanel({
        data: c.data, nx: c.n, ny: c.n, extentArcsec: c.extent, title: `${f.label}: dirty beam (natural)`,
        colourMap: "coolwarm", symmetric: true, unit: "relative", beam: b.natural, mapWidthPx: 250,
      }));
    }
  }
  return composeFigure(panels, { columns: forecasts[0]?.beams ? 2 : 1, title: "uv coverage and dirty beam" });
}

/** Natural-weighted dirty image (noise-free model plus one noise draw) of each configuration. */
export function dirtyFigure(forecasts: ConfigForecast[], seed: number): string {
  const panels: Panel[] = [];
  for (const f of forecasts) {
    const r = f.recovery;
    if (!r) continue;
    const data = Float64Array.from(r.dirtyNoisy, (x) => x * MJY);
    panels.push(imagePanel({
      data, nx: r.size, ny: r.size, extentArcsec: gridExtentArcsec(r.size, r.cellArcsec),
      title: `${f.label}: dirty image, S/N ${formatNumber(r.peakSnr, 3)}`, unit: "mJy/beam", colourMap: "viridis",
      beam: f.beams?.natural, mapWidthPx: 280,
    }));
  }
  return composeFigure(panels, { columns: Math.min(3, Math.max(1, panels.length)), title: `Simulated lens: natural-weighted dirty images (noise seed ${seed})` });
}

/**
 * Forecast σ per parameter per configuration, as a dot plot on a log axis: each row is one
 * parameter, its σ divided by the first configuration's (printed in the row label with its
 * unit), so configurations compare at a glance while the absolute scale stays readable.
 */
export function sigmaFigure(forecasts: ConfigForecast[]): string {
  const names = forecasts[0]?.fisher.names ?? [];
  const units = forecasts[0]?.fisher.units ?? [];
  const font = 12;
  const rowH = 22;
  const labels = names.map((n, i) => {
    const s0 = forecasts[0].parameters[i].sigma;
    return `${n}  σ₁ = ${formatNumber(s0, 3)}${units[i] ? ` ${unitSymbol(units[i])}` : ""}`;
  });
  const left = 12 + Math.max(80, ...labels.map((l) => l.length * font * 0.58));
  const plotW = 380, top = 40, plotH = Math.max(1, names.length) * rowH;
  const ratios: number[] = [];
  names.forEach((_, i) => {
    const s0 = forecasts[0].parameters[i].sigma;
    for (const f of forecasts) {
      const r = f.parameters[i].sigma / s0;
      if (r > 0 && Number.isFinite(r)) ratios.push(r);
    }
  });
  let lo = Math.min(0.5, ...ratios), hi = Math.max(2, ...ratios);
  lo = Math.pow(10, Math.floor(Math.log10(lo) * 2) / 2);
  hi = Math.pow(10, Math.ceil(Math.log10(hi) * 2) / 2);
  const xs: AxisScale = { domain: [lo, hi], range: [left, left + plotW], log: true };
  // Frame with decade ticks along x only: the rows are parameters, labelled at the left.
  let s = rect(left, top, plotW, plotH, "none", "#000", 1);
  for (const v of logTicks(lo, hi)) {
    const xp = scaleToPx(xs, v);
    s += line(xp, top + plotH, xp, top + plotH + 5) + text(xp, top + plotH + 7, formatTick(v), { sizePx: font * 0.9, anchor: "middle", baseline: "hanging" });
  }
  s += text(left + plotW / 2, top + plotH + 9 + font * 1.6, `σ relative to ${forecasts[0]?.label ?? ""} (log scale)`, { sizePx: font, anchor: "middle" });
  const x1 = scaleToPx(xs, 1);
  s += line(x1, top, x1, top + plotH, "#999", 1, "3 3");
  const shapes = ["circle", "square", "diamond", "triangle", "cross", "plus"] as const;
  names.forEach((_, i) => {
    const y = top + (i + 0.5) * rowH;
    s += text(left - 8, y, labels[i], { sizePx: font * 0.9, anchor: "end", baseline: "middle" });
    s += line(left, y, left + plotW, y, "#eee", 1);
    const s0 = forecasts[0].parameters[i].sigma;
    forecasts.forEach((f, k) => {
      const sig = f.parameters[i].sigma;
      const colour = PALETTE[k % PALETTE.length];
      const shape = shapes[k % shapes.length];
      if (!Number.isFinite(sig) || !Number.isFinite(s0)) {
        s += text(left + plotW - 4 - 14 * k, y, "∞", { sizePx: font, anchor: "end", baseline: "middle", colour });
        return;
      }
      const xp = Math.min(left + plotW, Math.max(left, scaleToPx(xs, sig / s0)));
      s += marker(xp, y, shape, 9, colour, !f.parameters[i].degenerate);
    });
  });
  // Legend: one entry per configuration (hollow markers: degenerate).
  let lx = left;
  forecasts.forEach((f, k) => {
    s += marker(lx + 5, top - 18, shapes[k % shapes.length], 9, PALETTE[k % PALETTE.length], true);
    s += text(lx + 14, top - 18, f.label, { sizePx: font * 0.9, baseline: "middle" });
    lx += 24 + f.label.length * font * 0.6;
  });
  s += text(left + plotW, top - 18, "hollow: degenerate", { sizePx: font * 0.8, anchor: "end", baseline: "middle", colour: "#555" });
  const panel: Panel = { widthPx: left + plotW + 20, heightPx: top + plotH + font * 4.5, svg: s };
  return composeFigure([panel], { title: "Forecast 1σ per parameter" });
}

function unitSymbol(unit: string): string {
  return unit === "arcsec" ? "″" : unit === "deg" ? "°" : unit;
}

/** plan.html: the table, definitions, notes and the figures embedded as PNG data URIs. */
export function planHtml(forecasts: ConfigForecast[], rows: QuantityRow[], extras: PlanExtras, figures: { png: Buffer; caption: string }[]): string {
  const e = escapeXml;
  const out: string[] = [];
  out.push("<!DOCTYPE html>", '<html lang="en"><head><meta charset="utf-8">', `<title>${e(`plan: ${extras.skyLabel}`)}</title>`);
  out.push("<style>body{font-family:'DejaVu Sans',sans-serif;margin:2em;max-width:70em}table{border-collapse:collapse}" +
    "td,th{border:1px solid #ccc;padding:2px 8px}td.n{text-align:right;font-variant-numeric:tabular-nums}" +
    "tr.deg td{background:#fff3e0}figure{margin:1.5em 0}img{max-width:100%}code{background:#f4f4f4}</style></head><body>");
  out.push(`<h1>Array configurations for ${e(extras.skyLabel)}</h1>`);
  if (extras.command) out.push(`<p><code>${e(extras.command)}</code></p>`);
  out.push("<table><tr><th>configuration</th><th>file</th><th>antennas</th><th>hour angle [h]</th><th>band [GHz]</th><th>channels</th></tr>");
  forecasts.forEach((f, k) => {
    out.push(`<tr><td>${e(f.label)}</td><td>${e(extras.configFiles[k] ?? "")}</td><td class="n">${f.nAnt}</td><td>${f.obs.hourAngleH[0]} … ${f.obs.hourAngleH[1]}</td><td class="n">${e(formatNumber(f.freqHz / 1e9, 4))}</td><td class="n">${f.obs.channels}</td></tr>`);
  });
  out.push("</table>", "<h2>Comparison</h2>");
  out.push(`<table><tr><th>quantity</th><th>unit</th>${forecasts.map((f) => `<th>${e(f.label)}</th>`).join("")}</tr>`);
  for (const r of rows) {
    const deg = r.notes.some((n) => n !== "");
    out.push(`<tr${deg ? ' class="deg"' : ""}><td>${e(r.label)}</td><td>${e(r.unit)}</td>${forecasts.map((_, k) => `<td class="n">${e(cell(r, k))}</td>`).join("")}</tr>`);
  }
  out.push("</table>", "<h3>Definitions</h3><ul>");
  for (const [term, def] of DEFINITIONS) out.push(`<li><b>${e(term)}</b>: ${e(def)}.</li>`);
  out.push("</ul>");
  const details = parameterDetailLines(forecasts);
  if (details.length > 0) {
    out.push("<h2>Free parameters</h2>");
    out.push(`<table><tr><th>#</th><th>parameter</th><th>unit</th><th>truth</th><th>prior curvature</th><th>finite-difference step (${e(forecasts.map((f) => f.label).join("; "))})</th></tr>`);
    details.forEach((d, i) => out.push(`<tr><td class="n">${i + 1}</td>${d.map((x) => `<td>${e(x)}</td>`).join("")}</tr>`));
    out.push("</table>");
    for (const f of forecasts) {
      const p = f.fisher.names.length;
      out.push(`<h3>Correlations, ${e(f.label)}</h3>`, `<table><tr><th></th>${Array.from({ length: p }, (_, j) => `<th>${j + 1}</th>`).join("")}</tr>`);
      for (const row of correlationLines(f)) out.push(`<tr>${row.map((x, j) => (j === 0 ? `<th>${e(x)}</th>` : `<td class="n">${e(x)}</td>`)).join("")}</tr>`);
      out.push("</table>");
    }
  }
  const notes = collectNotes(forecasts, extras);
  if (notes.length > 0) {
    out.push("<h2>Notes</h2><ul>");
    for (const n of notes) out.push(`<li>${e(n)}</li>`);
    out.push("</ul>");
  }
  out.push("<h2>Figures</h2>");
  for (const fig of figures) {
    out.push(`<figure><img alt="${e(fig.caption)}" src="data:image/png;base64,${fig.png.toString("base64")}"><figcaption>${e(fig.caption)}</figcaption></figure>`);
  }
  out.push("</body></html>", "");
  return out.join("\n");
}

/** File names written by writePlanReport. */
export const PLAN_FILES = Object.freeze({
  csv: "plan.csv",
  markdown: "plan.md",
  html: "plan.html",
  coverage: "plan_coverage.png",
  sigma: "plan_sigma.png",
  dirty: "plan_dirty.png",
});

/**
 * Write plan.csv, plan.md, the three PNG figures and plan.html into `outDir` (which must exist).
 * @returns the paths written and the table rows
 */
export async function writePlanReport(outDir: string, forecasts: ConfigForecast[], extras: PlanExtras): Promise<{ files: string[]; rows: QuantityRow[] }> {
  const rows = planRows(forecasts, extras);
  const join = (f: string): string => `${outDir.replace(/\/+$/, "")}/${f}`;
  const figures: { file: string; caption: string; png: Buffer }[] = [];
  figures.push({ file: PLAN_FILES.coverage, caption: "uv coverage (both conjugates) and natural-weighted dirty beam of each configuration", png: await renderPng(coverageFigure(forecasts)) });
  if (forecasts.length > 0 && forecasts[0].fisher.names.length > 0) {
    figures.push({ file: PLAN_FILES.sigma, caption: "forecast 1σ of each free parameter, relative to the first configuration", png: await renderPng(sigmaFigure(forecasts)) });
  }
  if (forecasts.some((f) => f.recovery)) {
    figures.push({ file: PLAN_FILES.dirty, caption: "natural-weighted dirty image of the simulated lens (noise-free model plus one thermal-noise draw)", png: await renderPng(dirtyFigure(forecasts, extras.seed)) });
  }
  const files: string[] = [];
  for (const fig of figures) {
    writeFileAtomic(join(fig.file), fig.png);
    files.push(join(fig.file));
  }
  writeFileAtomic(join(PLAN_FILES.csv), planCsv(forecasts, rows));
  files.push(join(PLAN_FILES.csv));
  writeFileAtomic(join(PLAN_FILES.markdown), planMarkdown(forecasts, rows, extras, figures));
  files.push(join(PLAN_FILES.markdown));
  writeFileAtomic(join(PLAN_FILES.html), planHtml(forecasts, rows, extras, figures));
  files.push(join(PLAN_FILES.html));
  return { files, rows };
}

