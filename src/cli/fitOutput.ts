/**
 * What `fit` and `demo` write and print once the fit is done: result.json (atomic), then the
 * images, chain and report; a parameter table on stdout; warnings loudly on stderr.
 */
import { mkdirSync } from "node:fs";
import { join } from "node:path";
import type { FitOutcome } from "../fit/outcome.js";
import { toResultJson } from "../fit/result.js";
import { writeFileAtomic } from "../io/atomicWrite.js";
import { fmt, heading, out, printTable, toJsonText, useColour } from "./output.js";

/** Write every output file; returns the paths written (relative to dir). */
export async function writeFitFiles(dir: string, outcome: FitOutcome): Promise<string[]> {
  mkdirSync(dir, { recursive: true });
  const { writeFitOutputs } = await import("../fit/outputs/index.js");
  const written = await writeFitOutputs(dir, outcome);
  // result.json last: its presence means every other file is complete.
  writeFileAtomic(join(dir, "result.json"), toJsonText(toResultJson(outcome)) + "\n");
  return [...written, "result.json"];
}

/** Parameter table, fit statistics, derived quantities and warnings. */
export function printFitSummary(o: FitOutcome, written: string[], dir: string): void {
  const hasTruth = o.truth !== undefined;
  heading(`Best fit (${o.uncertaintyMethod === "hessian" ? "maximum a posteriori; σ from the curvature" : o.uncertaintyMethod === "none" ? "maximum a posteriori; no σ" : `maximum a posteriori; σ and 16–84% from ${o.uncertaintyMethod} sampling`})`);
  const rows: [string, string][] = o.names.map((name, i) => {
    const unit = o.units[i] ? ` ${o.units[i] === "arcsec" ? "″" : o.units[i] === "deg" ? "°" : o.units[i]}` : "";
    let text = `${fmt(o.value[i], 6)} ± ${fmt(o.sigma[i], 2)}${unit}`;
    if (hasTruth && Number.isFinite(o.truth![i])) {
      const pull = (o.value[i] - o.truth![i]) / o.sigma[i];
      text += `   truth ${fmt(o.truth![i], 6)}${Number.isFinite(pull) ? `  (${pull >= 0 ? "+" : ""}${pull.toFixed(1)}σ)` : ""}`;
    }
    return [name, text];
  });
  printTable(rows);
  out();
  heading("Fit statistics");
  const stats: [string, string][] = [
    ["χ² (stored weights)", `${fmt(o.chi2, 8)} for ${o.nVis} visibilities, ${o.nFree} free parameters`],
    ["reduced χ²", o.reducedChi2.toFixed(4)],
    ...o.datasets.map((d): [string, string] => [`noise scale ${d.name}`, `${d.noiseScale.toFixed(4)}${d.fluxScale !== 1 ? `, flux scale ${fmt(d.fluxScale, 4)}` : ""}`]),
    ["residual rms (dirty)", `${fmt(o.images.residualRmsJyPerBeam * 1e3, 4)} mJy/beam`],
  ];
  if (o.logEvidence) stats.push(["log evidence", `${fmt(o.logEvidence.value, 8)} ± ${fmt(o.logEvidence.error, 2)}`]);
  printTable(stats);
  out();
  heading("Derived");
  const d = o.derived;
  const derivedRows: [string, string][] = [];
  if (d.einstein_radius_arcsec != null) derivedRows.push(["Einstein radius", `${fmt(d.einstein_radius_arcsec, 5)}″`]);
  if (d.einstein_mass_msun != null) derivedRows.push(["mass inside θ_E", `${fmt(d.einstein_mass_msun, 4)} M_sun`]);
  if (d.velocity_dispersion_kms != null) derivedRows.push(["SIS-equivalent σ_v", `${fmt(d.velocity_dispersion_kms, 4)} km/s`]);
  if (d.total_magnification != null) derivedRows.push(["total magnification", fmt(d.total_magnification, 4)]);
  for (const [k, v] of Object.entries(d)) {
    const m = /^source\[(\d+)\]\.(magnification|intrinsic_flux_jy)$/.exec(k);
    if (m && v != null) derivedRows.push([`source[${m[1]}] ${m[2] === "magnification" ? "magnification" : "intrinsic flux"}`, m[2] === "magnification" ? fmt(v, 4) : `${fmt(v * 1e3, 4)} mJy`]);
  }
  printTable(derivedRows);
  out();
  out(`wrote ${written.length} files to ${dir}/ (open ${join(dir, "report.html")})`);
  if (o.warnings.length > 0) {
    const bold = useColour(process.stderr) ? (s: string) => `\x1b[1;31m${s}\x1b[0m` : (s: string) => s;
    process.stderr.write(`\n${bold(`WARNING: this fit has ${o.warnings.length} problem(s) you must check before using the numbers:`)}\n`);
    for (const w of o.warnings) process.stderr.write(`  - ${w}\n`);
  }
}
