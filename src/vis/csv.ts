/**
 * CSV visibility table (DESIGN.md): a header row, then one visibility per line, in the
 * INTERNAL sign convention V = Σ I exp(−2πi(u x + v y)) (no conjugation on read or write).
 *
 * Columns: required `u_lambda, v_lambda, re_jy, im_jy, weight`; optional `w_lambda, freq_hz,
 * antenna1, antenna2, time_s, channel`, and `correlation` (an arcfringe addition: the AIPS
 * Stokes code of the entry, 1 = I, −1..−4 = RR LL RL LR, −5..−8 = XX YY XY YX; default 1), so
 * that `convert` keeps polarisations. Column order is free; names are case-insensitive.
 *
 * Lines starting with `#` are comments. The writer puts metadata in comments of the form
 * `# key: value` (time_ref_jd, phase_centre_deg, pointing_centre_deg, channel_freq_hz,
 * channel_width_hz, dish_diameter_m, circular_feeds, antenna_names as `1=BR, 2=FD`, telescope,
 * object), before the header row; the reader uses them
 * when present and ignores other comments.
 *
 * Rows with weight ≤ 0 (including −0) are flags: dropped and counted. Every cell must be a
 * finite number; anything else is an InputError naming the line and column.
 *
 * re_jy and im_jy are held in single precision (types.ts), as w_lambda is: the reader rounds
 * them to float32, the writer prints the shortest decimal that reads back to the same float32.
 *
 * Reference: DESIGN.md "CSV visibility table"; CONVENTIONS.md "Visibilities".
 */
import { closeSync, fstatSync, openSync, readFileSync, writeSync } from "node:fs";
import { basename } from "node:path";
import { InputError } from "../errors.js";
import { float32Text } from "./float32Text.js";
import { allocate } from "./uvfits.js";
import { CORRELATION_NAMES, type ReadReport, type Visibilities } from "./types.js";

const REQUIRED = ["u_lambda", "v_lambda", "re_jy", "im_jy", "weight"] as const;
const OPTIONAL = ["w_lambda", "freq_hz", "antenna1", "antenna2", "time_s", "channel", "correlation"] as const;
const INTEGER_COLUMNS = new Set(["antenna1", "antenna2", "channel", "correlation"]);
/** CSV beyond this size is refused [bytes]: a JS string cannot hold much more, and HDF5 suits such data. */
const MAX_CSV_BYTES = 400 * 1024 * 1024;
const NUMBER_RE = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

const SIGN_LINE = "# sign convention: internal, V = sum I exp(-2 pi i (u x + v y)), x East, y North; u, v, w in wavelengths";

/**
 * Read a CSV visibility table.
 * @param path file path
 * @returns visibilities (u, v [λ], data [Jy], weights [Jy⁻²]) and what was kept or dropped.
 */
export function readCsv(path: string): { vis: Visibilities; report: ReadReport } {
  const name = basename(path);
  const fd = openSync(path, "r");
  let text: string;
  try {
    const size = fstatSync(fd).size;
    if (size > MAX_CSV_BYTES) {
      throw new InputError(`${name}: ${size} bytes is too large for a CSV table (limit ${MAX_CSV_BYTES}); convert it to HDF5`);
    }
    text = readFileSync(fd, "latin1");
  } finally {
    closeSync(fd);
  }
  const lines = text.split("\n");
  const meta = new Map<string, string>();
  const notes: string[] = [];
  let headerLine = -1;
  let columns: string[] = [];
  let dataLines = 0;
  for (let i = 0; i < lines.length; i++) {
    const line = lines[i].trim();
    if (line === "") continue;
    if (line.startsWith("#")) {
      const m = /^#\s*([a-z_]+)\s*:\s*(.*)$/.exec(line);
      if (m && headerLine < 0) meta.set(m[1], m[2].trim());
      continue;
    }
    if (headerLine < 0) {
      headerLine = i;
      columns = line.split(",").map((c) => c.trim().toLowerCase());
    } else dataLines++;
  }
  if (headerLine < 0) throw new InputError(`${name}: no header row found; the first non-comment line must name the columns (${REQUIRED.join(", ")})`);
  const col = new Map<string, number>();
  columns.forEach((c, j) => {
    if (col.has(c)) throw new InputError(`${name} line ${headerLine + 1}: column ${c} appears twice`);
    col.set(c, j);
  });
  for (const r of REQUIRED) {
    if (!col.has(r)) {
      throw new InputError(`${name} line ${headerLine + 1}: missing required column ${r}; the header must name ${REQUIRED.join(", ")} (found ${columns.join(", ")})`);
    }
  }
  const known = new Set<string>([...REQUIRED, ...OPTIONAL]);
  const unknown = columns.filter((c) => !known.has(c));
  if (unknown.length > 0) notes.push(`${name}: columns ignored: ${unknown.join(", ")}`);

  const idx = (c: string): number => col.get(c) ?? -1;
  const iU = idx("u_lambda"), iV = idx("v_lambda"), iRe = idx("re_jy"), iIm = idx("im_jy"), iW = idx("weight");
  const iWl = idx("w_lambda"), iF = idx("freq_hz"), iA1 = idx("antenna1"), iA2 = idx("antenna2");
  const iT = idx("time_s"), iCh = idx("channel"), iCorr = idx("correlation");

  const metaFreqs = meta.has("channel_freq_hz") ? parseList(meta.get("channel_freq_hz")!, name, "channel_freq_hz") : undefined;
  const tmp = allocate(dataLines, new Float64Array(0), 0, 0);
  const rowFreq = new Float64Array(dataLines);
  const cells = new Float64Array(columns.length);
  let flagged = 0;
  let auto = 0;
  let k = 0;
  let entries = 0;
  for (let i = headerLine + 1; i < lines.length; i++) {
    const line = lines[i].trim();
    if (line === "" || line.startsWith("#")) continue;
    entries++;
    const parts = line.split(",");
    if (parts.length !== columns.length) {
      throw new InputError(`${name} line ${i + 1}: ${parts.length} cells but the header has ${columns.length} columns`);
    }
    for (let j = 0; j < parts.length; j++) {
      const cell = parts[j].trim();
      if (!known.has(columns[j])) continue;
      if (!NUMBER_RE.test(cell)) {
        throw new InputError(`${name} line ${i + 1}: ${columns[j]} is ${JSON.stringify(cell.slice(0, 40))}; every cell must be a finite number`);
      }
      const x = Number(cell);
      if (!Number.isFinite(x)) {
        throw new InputError(`${name} line ${i + 1}: ${columns[j]} is ${JSON.stringify(cell.slice(0, 40))}; every cell must be a finite number`);
      }
      if (INTEGER_COLUMNS.has(columns[j])) checkInteger(x, columns[j], cell, name, i + 1);
      cells[j] = x;
    }
    const wt = cells[iW];
    if (wt <= 0) {
      flagged++;
      continue;
    }
    const a1 = iA1 >= 0 ? cells[iA1] : 0;
    const a2 = iA2 >= 0 ? cells[iA2] : 0;
    if (a1 === a2 && a1 !== 0) {
      auto++;
      continue;
    }
    tmp.uLambda[k] = cells[iU];
    tmp.vLambda[k] = cells[iV];
    tmp.wLambda[k] = iWl >= 0 ? cells[iWl] : 0;
    tmp.reJy[k] = cells[iRe];
    tmp.imJy[k] = cells[iIm];
    tmp.weight[k] = wt;
    tmp.antenna1[k] = a1;
    tmp.antenna2[k] = a2;
    tmp.timeS[k] = iT >= 0 ? cells[iT] : 0;
    tmp.channel[k] = iCh >= 0 ? cells[iCh] : 0;
    tmp.correlation[k] = iCorr >= 0 ? cells[iCorr] : 1;
    rowFreq[k] = iF >= 0 ? cells[iF] : NaN;
    k++;
  }
  const vis = k === dataLines ? tmp : shrink(tmp, k);
  vis.channelFreqHz = channelFrequencies(vis, rowFreq, iCh >= 0, iF >= 0, metaFreqs, name, notes);
  applyMeta(vis, meta, name);
  const report: ReadReport = {
    format: "csv",
    entriesInFile: entries,
    kept: k,
    droppedFlagged: flagged,
    droppedNonFinite: 0,
    droppedAuto: auto,
    notes,
  };
  return { vis, report };
}

function checkInteger(x: number, column: string, cell: string, name: string, line: number): void {
  const ok = column === "correlation" ? x in CORRELATION_NAMES : Number.isInteger(x) && x >= 0 && x <= 65535;
  if (!ok || !Number.isInteger(x)) {
    const allowed = column === "correlation" ? "an AIPS Stokes code (1..4, -1..-8)" : "an integer in 0..65535";
    throw new InputError(`${name} line ${line}: ${column} is ${JSON.stringify(cell)}; expected ${allowed}`);
  }
}

function parseList(s: string, name: string, key: string): number[] {
  const out = s.split(",").map((x) => x.trim()).filter((x) => x !== "").map(Number);
  if (out.some((x) => !Number.isFinite(x))) throw new InputError(`${name}: comment "# ${key}: ${s.slice(0, 60)}" must be a comma-separated list of numbers`);
  return out;
}

/** Build channelFreqHz and, without a channel column, the channel index from freq_hz. */
function channelFrequencies(
  vis: Visibilities,
  rowFreq: Float64Array,
  hasChannel: boolean,
  hasFreq: boolean,
  metaFreqs: number[] | undefined,
  name: string,
  notes: string[],
): Float64Array {
  const n = vis.count;
  if (hasChannel) {
    let nCh = metaFreqs?.length ?? 0;
    for (let k = 0; k < n; k++) nCh = Math.max(nCh, vis.channel[k] + 1);
    const f = new Float64Array(Math.max(nCh, 1)).fill(NaN);
    if (metaFreqs) f.set(metaFreqs);
    if (hasFreq) {
      for (let k = 0; k < n; k++) {
        const c = vis.channel[k];
        if (Number.isNaN(f[c])) f[c] = rowFreq[k];
        // 1e-9 relative: a channel has one frequency; rows differing more disagree about it.
        else if (Math.abs(f[c] - rowFreq[k]) > 1e-9 * Math.abs(f[c])) {
          throw new InputError(`${name}: freq_hz ${rowFreq[k]} for channel ${c} differs from ${f[c]} given for it elsewhere; one channel has one frequency`);
        }
      }
    }
    if (f.some((x) => Number.isNaN(x))) notes.push(`${name}: some channels have no frequency (no freq_hz); baseline lengths in metres unknown for them`);
    return f;
  }
  if (hasFreq) {
    const unique = [...new Set(Array.from(rowFreq.subarray(0, n)))].sort((a, b) => a - b);
    if (unique.length > 65535) throw new InputError(`${name}: ${unique.length} distinct freq_hz values; at most 65535 channels`);
    const index = new Map(unique.map((f, i) => [f, i]));
    for (let k = 0; k < n; k++) vis.channel[k] = index.get(rowFreq[k])!;
    return Float64Array.from(unique.length > 0 ? unique : [NaN]);
  }
  if (metaFreqs && metaFreqs.length > 0) return Float64Array.from(metaFreqs);
  notes.push(`${name}: no freq_hz column; the observing frequency is unknown`);
  return new Float64Array([NaN]);
}

function applyMeta(vis: Visibilities, meta: Map<string, string>, name: string): void {
  const num = (key: string): number | undefined => {
    const s = meta.get(key);
    if (s === undefined) return undefined;
    const x = Number(s);
    if (!Number.isFinite(x) || s === "") throw new InputError(`${name}: comment "# ${key}: ${s.slice(0, 40)}" must be a number`);
    return x;
  };
  const pair = (key: string): [number, number] | undefined => {
    const s = meta.get(key);
    if (s === undefined) return undefined;
    const v = parseList(s, name, key);
    if (v.length !== 2) throw new InputError(`${name}: comment "# ${key}: ${s.slice(0, 40)}" must be two numbers (RA, Dec in degrees)`);
    return [v[0], v[1]];
  };
  vis.timeRefJd = num("time_ref_jd") ?? 0;
  vis.channelWidthHz = num("channel_width_hz") ?? 0;
  const pc = pair("phase_centre_deg");
  if (pc) vis.phaseCentreDeg = pc;
  const pp = pair("pointing_centre_deg");
  if (pp) vis.pointingCentreDeg = pp;
  const d = num("dish_diameter_m");
  if (d !== undefined && d > 0) vis.dishDiameterM = d;
  const cf = meta.get("circular_feeds");
  if (cf === "true") vis.circularFeeds = true;
  if (cf === "false") vis.circularFeeds = false;
  const names = meta.get("antenna_names");
  if (names) {
    const map = new Map<number, string>();
    for (const item of names.split(",")) {
      const m = /^\s*(\d+)\s*=\s*(.*?)\s*$/.exec(item);
      if (!m) throw new InputError(`${name}: comment "# antenna_names" must list id=name pairs separated by commas; found ${JSON.stringify(item.slice(0, 40))}`);
      map.set(Number(m[1]), m[2]);
    }
    vis.antennaNames = map;
  }
  if (meta.get("telescope")) vis.telescope = meta.get("telescope");
  if (meta.get("object")) vis.objectName = meta.get("object");
}

/** Copy the first `n` entries into exactly sized arrays. */
function shrink(v: Visibilities, n: number): Visibilities {
  const out = allocate(n, v.channelFreqHz, v.channelWidthHz, v.timeRefJd);
  out.uLambda.set(v.uLambda.subarray(0, n));
  out.vLambda.set(v.vLambda.subarray(0, n));
  out.wLambda.set(v.wLambda.subarray(0, n));
  out.reJy.set(v.reJy.subarray(0, n));
  out.imJy.set(v.imJy.subarray(0, n));
  out.weight.set(v.weight.subarray(0, n));
  out.channel.set(v.channel.subarray(0, n));
  out.antenna1.set(v.antenna1.subarray(0, n));
  out.antenna2.set(v.antenna2.subarray(0, n));
  out.timeS.set(v.timeS.subarray(0, n));
  out.correlation.set(v.correlation.subarray(0, n));
  return out;
}

/**
 * Write `vis` as a CSV table (internal sign convention, full double precision: numbers are
 * printed with the shortest text that reads back to the same double).
 */
export function writeCsv(path: string, vis: Visibilities): void {
  const head: string[] = [
    "# arcfringe visibility table",
    SIGN_LINE,
    `# time_ref_jd: ${vis.timeRefJd}`,
    `# channel_width_hz: ${vis.channelWidthHz}`,
  ];
  const freqKnown = vis.channelFreqHz.every((f) => Number.isFinite(f));
  if (freqKnown) head.push(`# channel_freq_hz: ${Array.from(vis.channelFreqHz).join(", ")}`);
  if (vis.phaseCentreDeg) head.push(`# phase_centre_deg: ${vis.phaseCentreDeg[0]}, ${vis.phaseCentreDeg[1]}`);
  if (vis.pointingCentreDeg) head.push(`# pointing_centre_deg: ${vis.pointingCentreDeg[0]}, ${vis.pointingCentreDeg[1]}`);
  if (vis.dishDiameterM) head.push(`# dish_diameter_m: ${vis.dishDiameterM}`);
  if (vis.circularFeeds !== undefined) head.push(`# circular_feeds: ${vis.circularFeeds}`);
  if (vis.antennaNames && vis.antennaNames.size > 0) {
    const pairs = [...vis.antennaNames.entries()].sort((a, b) => a[0] - b[0]);
    head.push(`# antenna_names: ${pairs.map(([id, nm]) => `${id}=${nm.replace(/[,=\r\n]/g, "_")}`).join(", ")}`);
  }
  if (vis.telescope) head.push(`# telescope: ${vis.telescope.replace(/[\r\n]/g, " ")}`);
  if (vis.objectName) head.push(`# object: ${vis.objectName.replace(/[\r\n]/g, " ")}`);
  head.push(
    "u_lambda,v_lambda,w_lambda,re_jy,im_jy,weight," + (freqKnown ? "freq_hz," : "") + "channel,antenna1,antenna2,time_s,correlation",
  );
  const fd = openSync(path, "w");
  try {
    writeSync(fd, head.join("\n") + "\n");
    const lines: string[] = [];
    for (let k = 0; k < vis.count; k++) {
      const c = vis.channel[k];
      lines.push(
        `${vis.uLambda[k]},${vis.vLambda[k]},${float32Text(vis.wLambda[k])},${float32Text(vis.reJy[k])},${float32Text(vis.imJy[k])},${vis.weight[k]},` +
          (freqKnown ? `${vis.channelFreqHz[c]},` : "") +
          `${c},${vis.antenna1[k]},${vis.antenna2[k]},${vis.timeS[k]},${vis.correlation[k]}`,
      );
      if (lines.length === 8192 || k === vis.count - 1) {
        writeSync(fd, lines.join("\n") + "\n");
        lines.length = 0;
      }
    }
  } finally {
    closeSync(fd);
  }
}
