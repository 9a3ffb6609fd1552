/**
 * `arcfringe convert IN OUT`: between UVFITS, arcfringe HDF5 and CSV, formats from the
 * extensions. The readers bring every file to the internal sign convention and the writers
 * take it back to each format's own (UVFITS stores the conjugate, CONVENTIONS.md), so no sign
 * handling happens here. Flagged, non-finite and autocorrelation entries are not carried over
 * (the readers drop them); `--stokes-i` also combines the parallel hands into Stokes I.
 * Reference: CONVENTIONS.md "Visibilities"; DESIGN.md (formats).
 */
import { InputError } from "../errors.js";
import { note, printJson, printTable } from "./output.js";
import type { CommandSpec } from "./spec.js";

export interface ConvertOptions {
  stokesI?: boolean;
  json?: boolean;
  debug?: boolean;
}

export const convertCommand: CommandSpec<ConvertOptions> = {
  name: "convert",
  args: "<in> <out>",
  summary: "convert visibilities between UVFITS, HDF5 and CSV (formats from the extensions)",
  options: [
    { flags: "--stokes-i", description: "combine the parallel hands into Stokes I before writing (default: keep the correlations)", kind: "flag" },
    { flags: "--json", description: "print what was kept and dropped as JSON on stdout", kind: "flag" },
  ],
  examples: [
    { comment: "UVFITS to arcfringe HDF5, keeping every correlation", command: "arcfringe convert data.uvfits data.h5" },
    { comment: "Stokes I as a CSV table (internal sign convention)", command: "arcfringe convert data.uvfits data.csv --stokes-i" },
  ],
  action: runConvert,
};

async function runConvert(args: string[], opts: ConvertOptions): Promise<number> {
  const [inPath, outPath] = args;
  const { readVisibilities, writeVisibilities, formatFromExtension, toStokesI } = await import("../vis/index.js");
  const { resolve, dirname } = await import("node:path");
  const { existsSync, statSync } = await import("node:fs");
  const format = formatFromExtension(outPath);
  if (!format) throw new InputError(`${outPath}: cannot tell the output format from the extension; use .uvfits, .h5 or .csv`);
  if (resolve(inPath) === resolve(outPath)) throw new InputError(`${outPath}: the output would overwrite the input; choose another name`);
  const dir = dirname(outPath);
  if (!existsSync(dir) || !statSync(dir).isDirectory()) throw new InputError(`${outPath}: folder ${dir} does not exist; create it first`);

  const read = await readVisibilities(inPath);
  let vis = read.vis;
  const r = read.report;
  let stokes = null;
  if (opts.stokesI) {
    const s = toStokesI(vis);
    if (s.vis.count === 0) {
      throw new InputError(`${inPath}: no Stokes I can be formed (${s.report.crossHandsIgnored} cross-hand and ${s.report.singleDropped} lone linear-hand entries); drop --stokes-i to keep the correlations`);
    }
    vis = s.vis;
    stokes = s.report;
  }
  await writeVisibilities(outPath, vis, { format });

  const result = {
    input: inPath, output: outPath, inputFormat: r.format, outputFormat: format,
    entriesInFile: r.entriesInFile, kept: r.kept, droppedFlagged: r.droppedFlagged, droppedNonFinite: r.droppedNonFinite,
    droppedAuto: r.droppedAuto, stokesI: stokes, written: vis.count, notes: r.notes,
  };
  if (opts.json) {
    printJson(result);
  } else {
    const rows: [string, string][] = [
      ["read", `${inPath} (${r.format}): ${r.entriesInFile} entries`],
      ["dropped", `${r.droppedFlagged} flagged (weight ≤ 0), ${r.droppedNonFinite} non-finite, ${r.droppedAuto} autocorrelations`],
    ];
    if (stokes) {
      rows.push([
        "Stokes I",
        `${stokes.pairs} pairs combined, ${stokes.singleKept} single circular hands kept, ${stokes.singleDropped} single linear hands dropped, ` +
          `${stokes.crossHandsIgnored} cross-hand entries dropped, ${stokes.alreadyI} already I`,
      ]);
    }
    rows.push(["wrote", `${outPath} (${format}): ${vis.count} visibilities`]);
    printTable(rows, 0);
  }
  for (const n of r.notes) note(`note: ${n}`);
  return 0;
}
