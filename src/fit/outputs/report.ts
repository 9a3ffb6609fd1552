/**
 * report.html: one self-contained page summarising a fit — status and warnings, the parameter
 * table, goodness of fit per dataset, evidence, derived quantities, every figure (embedded as
 * base64 PNG data URIs) and how the run was made. Inline CSS only, no scripts, no external
 * resources, so the file can be mailed or archived and still open anywhere.
 *
 * Every piece of text that can come from a user file (parameter and dataset names, paths, the
 * command line, warnings) passes through `escapeHtml`.
 * Reference: HTML Living Standard (WHATWG), §13.1 (syntax) and §4.8.4 (img); RFC 2397 (data URIs).
 */
import { freeIndex, isAtBound } from "../../model/parameters.js";
import type { FitOutcome } from "../outcome.js";
import type { WrittenFigure } from "./figures.js";

/** Escape text for HTML element content and quoted attribute values. */
export function escapeHtml(text: string): string {
  return text
    .replace(/&/g, "&amp;")
    .replace(/</g, "&lt;")
    .replace(/>/g, "&gt;")
    .replace(/"/g, "&quot;")
    .replace(/'/g, "&#39;");
}

/** A number for a table: 5 significant digits, exponent form outside [1e-3, 1e5); "—" when absent. */
export function formatNumber(v: number | null | undefined): string {
  if (v === null || v === undefined || Number.isNaN(v)) return "—";
  if (!Number.isFinite(v)) return v > 0 ? "∞" : "-∞";
  if (v === 0) return "0";
  const a = Math.abs(v);
  if (a >= 1e5 || a < 1e-3) return v.toExponential(3);
  return String(Number(v.toPrecision(5)));
}

/**
 * A value rounded to the precision its uncertainty supports: the decimal place of the second
 * significant digit of σ (common practice, e.g. the Particle Data Group's rounding of errors to
 * two significant digits). Falls back to {@link formatNumber} when σ is absent or values are huge.
 */
export function formatWithSigma(value: number, sigma: number): { value: string; sigma: string } {
  if (!(sigma > 0) || !Number.isFinite(sigma) || !Number.isFinite(value)) return { value: formatNumber(value), sigma: formatNumber(sigma) };
  const a = Math.max(Math.abs(value), sigma);
  if (a >= 1e5 || a < 1e-3) return { value: formatNumber(value), sigma: formatNumber(sigma) };
  const decimals = Math.min(12, Math.max(0, 1 - Math.floor(Math.log10(sigma))));
  return { value: value.toFixed(decimals), sigma: sigma.toFixed(decimals) };
}

const STYLE = `
body{font-family:system-ui,"DejaVu Sans",Helvetica,Arial,sans-serif;margin:0;background:#f6f7f9;color:#1d232b;line-height:1.45}
main{max-width:1100px;margin:0 auto;padding:20px 28px 40px;background:#fff;min-height:100vh}
h1{font-size:1.6em;margin:0.2em 0}
h2{font-size:1.2em;margin:1.6em 0 0.5em;padding-bottom:0.2em;border-bottom:1px solid #d7dce2}
.lead{color:#4a5563;margin:0 0 1em}
.status{padding:12px 16px;border-radius:6px;margin:14px 0;font-weight:600}
.status.clean{background:#e8f5ec;border:1px solid #8cc79f;color:#1e5631}
.alert{background:#fff1e0;border:2px solid #d9480f;border-left-width:10px;color:#5c1d00;padding:12px 18px;border-radius:6px;margin:14px 0}
.alert h2{border:none;margin:0 0 0.4em;color:#b33c00;font-size:1.25em}
.alert ul{margin:0;padding-left:1.3em}
table{border-collapse:collapse;margin:0.4em 0 1em;font-size:0.93em}
th,td{padding:4px 10px;border-bottom:1px solid #e3e6ea;text-align:right;vertical-align:top}
th{background:#eef1f4;font-weight:600}
td.name,th.name{text-align:left;font-family:"DejaVu Sans Mono",Menlo,Consolas,monospace}
td.flag{color:#b33c00;font-weight:600;text-align:left}
.kv td:first-child{text-align:left;color:#4a5563}
figure{margin:1.2em 0 2em}
figure img{max-width:100%;height:auto;border:1px solid #e3e6ea}
figcaption{font-size:0.92em;color:#374151;margin-top:0.4em}
figcaption b{font-family:"DejaVu Sans Mono",Menlo,Consolas,monospace}
pre{background:#f1f3f5;padding:8px 12px;white-space:pre-wrap;word-break:break-all}
.muted{color:#6b7280}
`;

export interface ReportOptions {
  /** Time stamp shown in the header (default: now). */
  date?: Date;
}

/**
 * Build the HTML report.
 * @param o the fit outcome
 * @param figures written figures (PNG bytes and captions), in display order
 * @returns the complete HTML document
 * Reference: see the module comment.
 */
export function buildReportHtml(o: FitOutcome, figures: readonly WrittenFigure[], options: ReportOptions = {}): string {
  const e = escapeHtml;
  const parts: string[] = [];
  parts.push(`<!DOCTYPE html>\n<html lang="en">\n<head>\n<meta charset="utf-8">\n<meta name="viewport" content="width=device-width, initial-scale=1">`);
  parts.push(`<title>Lens-model fit — arcfringe report</title>\n<style>${STYLE}</style>\n</head>\n<body>\n<main>`);
  parts.push(`<h1>Lens-model fit</h1>`);
  parts.push(`<p class="lead">arcfringe ${e(o.version)} · ${e((options.date ?? new Date()).toISOString().slice(0, 19).replace("T", " "))} UTC · ` +
    `${o.datasets.length} dataset${o.datasets.length === 1 ? "" : "s"}, ${o.nVis} visibilities, ${o.nFree} free parameters</p>`);
  parts.push(statusBlock(o));
  parts.push(parameterSection(o));
  parts.push(fitQualitySection(o));
  parts.push(derivedSection(o));
  parts.push(figureSection(figures));
  parts.push(runSection(o));
  parts.push(`</main>\n</body>\n</html>\n`);
  return parts.join("\n");
}

function statusBlock(o: FitOutcome): string {
  if (o.warnings.length === 0) return `<div class="status clean">Fit finished with no warnings.</div>`;
  const n = o.warnings.length;
  const items = o.warnings.map((w) => `<li>${escapeHtml(w)}</li>`).join("\n");
  return `<section class="alert" id="warnings" role="alert">\n<h2>WARNING: ${n} issue${n === 1 ? "" : "s"} to check before using these results</h2>\n<ul>\n${items}\n</ul>\n</section>`;
}

function methodText(m: FitOutcome["uncertaintyMethod"]): string {
  switch (m) {
    case "ensemble": return "ensemble sampling (σ and percentiles from the samples after burn-in)";
    case "nested": return "nested sampling (weighted samples)";
    case "hessian": return "curvature at the maximum (Gaussian approximation; lo/hi = value ∓ σ)";
    default: return "none computed";
  }
}

function parameterSection(o: FitOutcome): string {
  const e = escapeHtml;
  const hasTruth = o.truth !== undefined;
  const head = `<tr><th class="name">parameter</th><th>value (MAP)</th><th>σ</th><th>16th pct</th><th>84th pct</th><th>unit</th>` +
    `${hasTruth ? "<th>truth</th>" : ""}<th class="name">at prior bound</th></tr>`;
  const rows = o.names.map((name, p) => {
    const vs = formatWithSigma(o.value[p], o.sigma[p]);
    const lo = formatWithSigma(o.lo[p], o.sigma[p]).value;
    const hi = formatWithSigma(o.hi[p], o.sigma[p]).value;
    const truth = hasTruth ? `<td>${formatWithSigma(o.truth![p], o.sigma[p]).value}</td>` : "";
    const bound = boundFlag(o, name, o.value[p]);
    return `<tr><td class="name">${e(name)}</td><td>${vs.value}</td><td>${vs.sigma}</td><td>${lo}</td><td>${hi}</td>` +
      `<td>${e(o.units[p] ?? "")}</td>${truth}<td class="flag">${bound}</td></tr>`;
  });
  return `<h2>Parameters</h2>\n<p class="muted">Uncertainties: ${e(methodText(o.uncertaintyMethod))}.</p>\n` +
    `<table>\n${head}\n${rows.join("\n")}\n</table>`;
}

/** "lower" / "upper" when the value sits at a hard edge of its prior; empty otherwise. */
function boundFlag(o: FitOutcome, name: string, value: number): string {
  if (freeIndex(o.spec, name) < 0 || !Number.isFinite(value)) return "";
  const at = isAtBound(o.spec, name, value);
  return at === "min" ? "at lower bound" : at === "max" ? "at upper bound" : "";
}

function fitQualitySection(o: FitOutcome): string {
  const e = escapeHtml;
  const dof = 2 * o.nVis - o.nFree;
  let s = `<h2>Goodness of fit</h2>\n<table class="kv">\n`;
  s += `<tr><td>χ²</td><td>${Number.isFinite(o.chi2) ? o.chi2.toFixed(2) : "—"}</td></tr>\n`;
  s += `<tr><td>degrees of freedom (2·n<sub>vis</sub> − n<sub>free</sub>)</td><td>${dof}</td></tr>\n`;
  s += `<tr><td>reduced χ²</td><td>${formatNumber(o.reducedChi2)}</td></tr>\n`;
  s += `<tr><td>residual rms of the dirty image</td><td>${formatNumber(o.images.residualRmsJyPerBeam)} Jy/beam</td></tr>\n`;
  if (o.logEvidence) {
    s += `<tr><td>log evidence ln Z</td><td>${formatNumber(o.logEvidence.value)} ± ${formatNumber(o.logEvidence.error)}</td></tr>\n`;
  }
  s += `</table>\n`;
  s += `<table>\n<tr><th class="name">dataset</th><th class="name">file</th><th>visibilities</th><th>χ²</th><th>noise scale</th><th>flux scale</th><th>beam (FWHM, PA)</th></tr>\n`;
  for (const d of o.datasets) {
    const beam = d.beam ? `${formatNumber(d.beam.bmajArcsec)}″ × ${formatNumber(d.beam.bminArcsec)}″, ${formatNumber(d.beam.bpaDeg)}°` : "—";
    s += `<tr><td class="name">${e(d.name)}</td><td class="name">${e(d.path)}</td><td>${d.nVis}</td><td>${Number.isFinite(d.chi2) ? d.chi2.toFixed(2) : "—"}</td>` +
      `<td>${formatNumber(d.noiseScale)}</td><td>${formatNumber(d.fluxScale)}</td><td>${beam}</td></tr>\n`;
  }
  s += `</table>\n<p class="muted">The noise scale multiplies every σ of its dataset; 1 means the stated weights were kept.</p>`;
  return s;
}

function derivedSection(o: FitOutcome): string {
  const keys = Object.keys(o.derived);
  if (keys.length === 0) return "";
  const rows = keys.map((k) => `<tr><td class="name">${escapeHtml(k)}</td><td>${formatNumber(o.derived[k])}</td></tr>`);
  return `<h2>Derived quantities</h2>\n<table>\n<tr><th class="name">quantity</th><th>value</th></tr>\n${rows.join("\n")}\n</table>`;
}

function figureSection(figures: readonly WrittenFigure[]): string {
  if (figures.length === 0) return "";
  const items = figures.map((f) =>
    `<figure>\n<img src="data:image/png;base64,${f.png.toString("base64")}" alt="${escapeHtml(f.file)}">\n` +
    `<figcaption><b>${escapeHtml(f.file)}</b> — ${escapeHtml(f.caption)}</figcaption>\n</figure>`);
  return `<h2>Figures</h2>\n${items.join("\n")}`;
}

function runSection(o: FitOutcome): string {
  const e = escapeHtml;
  let s = `<h2>How this fit was made</h2>\n<pre>${e(o.command)}</pre>\n<table class="kv">\n`;
  s += `<tr><td>arcfringe version</td><td>${e(o.version)}</td></tr>\n<tr><td>random seed</td><td>${o.seed}</td></tr>\n`;
  s += `<tr><td>model file</td><td class="name">${e(o.spec.label)}</td></tr>\n`;
  s += `<tr><td>phase centre (RA, Dec)</td><td>${o.phaseCentreDeg[0].toFixed(6)}°, ${o.phaseCentreDeg[1].toFixed(6)}°</td></tr>\n`;
  for (const [stage, sec] of Object.entries(o.timings)) {
    s += `<tr><td>time: ${e(stage)}</td><td>${formatNumber(sec)} s</td></tr>\n`;
  }
  return s + `</table>`;
}
