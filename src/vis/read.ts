/**
 * Read and write visibility files of any supported format: UVFITS, arcfringe HDF5, CSV.
 * Reading dispatches on the file signature (FITS "SIMPLE", the HDF5 magic bytes), then on the
 * extension; writing dispatches on the extension and is atomic (a temporary file in the same
 * folder, renamed over the target; nothing is left behind on failure).
 *
 * After reading, a file that yields nothing usable is an InputError with the reason (every
 * entry flagged, all weights zero, all u, v zero), so no later stage sees an empty dataset.
 *
 * Reference: DESIGN.md (formats), CONVENTIONS.md "Visibilities".
 */
import { closeSync, existsSync, openSync, readSync, renameSync, statSync, unlinkSync } from "node:fs";
import { basename, dirname, extname, join } from "node:path";
import { InputError } from "../errors.js";
import { readCsv, writeCsv } from "./csv.js";
import { readHdf5, writeHdf5 } from "./hdf5.js";
import type { ReadReport, Visibilities } from "./types.js";
import { readUvfits } from "./uvfits.js";
import { writeUvfits } from "./uvfitsWrite.js";

export type VisFormat = "uvfits" | "hdf5" | "csv";

const FITS_EXT = new Set([".uvfits", ".fits", ".uvf", ".vis", ".fit"]);
const HDF5_EXT = new Set([".h5", ".hdf5", ".hdf"]);

/** Options of `readVisibilities`. */
export interface ReadOptions {
  /** Force the format instead of detecting it (default: from the signature, then the extension). */
  format?: VisFormat;
}

/** Format of a file from its first bytes, then its extension; undefined when unknown. */
export function detectFormat(path: string): VisFormat | undefined {
  const head = Buffer.alloc(8);
  const fd = openSync(path, "r");
  let n: number;
  try {
    n = readSync(fd, head, 0, 8, 0);
  } finally {
    closeSync(fd);
  }
  if (n >= 6 && head.toString("latin1", 0, 6) === "SIMPLE") return "uvfits";
  if (n === 8 && head[0] === 0x89 && head.toString("latin1", 1, 4) === "HDF") return "hdf5";
  return formatFromExtension(path);
}

/** Format implied by a file name's extension, or undefined. */
export function formatFromExtension(path: string): VisFormat | undefined {
  const ext = extname(path).toLowerCase();
  if (FITS_EXT.has(ext)) return "uvfits";
  if (HDF5_EXT.has(ext)) return "hdf5";
  if (ext === ".csv") return "csv";
  return undefined;
}

/**
 * Read a visibility file.
 * @param path UVFITS (.uvfits/.fits/.uvf/.vis), HDF5 (.h5/.hdf5) or CSV (.csv)
 * @returns visibilities in the internal convention (u, v [λ], data [Jy], w = 1/σ² [Jy⁻²]) and
 *   the report of what was kept and dropped.
 * Reference: CONVENTIONS.md "Visibilities".
 */
export async function readVisibilities(path: string, opts: ReadOptions = {}): Promise<{ vis: Visibilities; report: ReadReport }> {
  const name = basename(path);
  let st;
  try {
    st = statSync(path);
  } catch {
    throw new InputError(`${path}: file not found; check the path`);
  }
  if (!st.isFile()) throw new InputError(`${path}: not a regular file; give a visibility file (.uvfits, .h5, .csv)`);
  if (st.size === 0) throw new InputError(`${name}: the file is empty`);
  const format = opts.format ?? detectFormat(path);
  let result: { vis: Visibilities; report: ReadReport };
  if (format === "uvfits") {
    if (!startsWithSimple(path)) {
      throw new InputError(`${name}: does not start with SIMPLE; not a FITS file, although its extension says so`);
    }
    result = readUvfits(path);
  } else if (format === "hdf5") result = await readHdf5(path, st.size);
  else if (format === "csv") result = readCsv(path);
  else {
    throw new InputError(`${name}: unknown visibility format; use UVFITS (.uvfits, .fits, .uvf), HDF5 (.h5, .hdf5) or CSV (.csv)`);
  }
  checkUsable(name, result.vis, result.report);
  return result;
}

function startsWithSimple(path: string): boolean {
  const head = Buffer.alloc(6);
  const fd = openSync(path, "r");
  try {
    return readSync(fd, head, 0, 6, 0) === 6 && head.toString("latin1") === "SIMPLE";
  } finally {
    closeSync(fd);
  }
}

/** Refuse data with nothing usable, saying why. */
function checkUsable(name: string, vis: Visibilities, r: ReadReport): void {
  if (r.entriesInFile === 0) throw new InputError(`${name}: the file holds no visibilities`);
  if (vis.count === 0) {
    const why: string[] = [];
    if (r.droppedFlagged > 0) why.push(`${r.droppedFlagged} flagged (weight ≤ 0)`);
    if (r.droppedNonFinite > 0) why.push(`${r.droppedNonFinite} non-finite`);
    if (r.droppedAuto > 0) why.push(`${r.droppedAuto} autocorrelations`);
    const allZeroWeight = r.droppedFlagged === r.entriesInFile;
    throw new InputError(
      `${name}: no usable visibilities among ${r.entriesInFile}: ${why.join(", ")}` +
        (allZeroWeight ? "; every entry is flagged or has weight 0 — check the weights or the flagging" : ""),
    );
  }
  let nonZero = false;
  for (let k = 0; k < vis.count && !nonZero; k++) if (vis.uLambda[k] !== 0 || vis.vLambda[k] !== 0) nonZero = true;
  if (!nonZero) throw new InputError(`${name}: every usable visibility has u = v = 0; the uv coordinates are missing`);
}

/**
 * Write visibilities, choosing the format from the extension (.uvfits/.fits/.uvf, .h5/.hdf5,
 * .csv). Atomic: written to a temporary file beside the target, then renamed.
 */
export async function writeVisibilities(path: string, vis: Visibilities, opts: { format?: VisFormat } = {}): Promise<void> {
  const format = opts.format ?? formatFromExtension(path);
  if (!format) {
    throw new InputError(`${path}: cannot tell the output format from the extension; use .uvfits, .h5 or .csv`);
  }
  const dir = dirname(path);
  if (!existsSync(dir)) throw new InputError(`${path}: folder ${dir} does not exist; create it first`);
  const tmp = join(dir, `.${basename(path)}.tmp-${process.pid}-${Date.now().toString(36)}`);
  try {
    if (format === "uvfits") writeUvfits(tmp, vis);
    else if (format === "hdf5") await writeHdf5(tmp, vis);
    else writeCsv(tmp, vis);
    renameSync(tmp, path);
  } catch (e) {
    try {
      unlinkSync(tmp);
    } catch {
      // never created
    }
    if (e instanceof InputError) throw new InputError(e.message.replace(basename(tmp), basename(path)));
    throw e;
  }
}
