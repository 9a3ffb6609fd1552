/**
 * UVFITS reader: random-groups FITS visibilities (AIPS Memo 117 layout) into `Visibilities`.
 *
 * - Random parameters are scaled by PSCALn/PZEROn. UU/VV/WW (also `UU---SIN`, `UU-L`, ...) are
 *   in seconds of light travel time and become wavelengths at EACH channel's frequency,
 *   ν = CRVAL + (k + 1 − CRPIX)·CDELT of the FREQ axis + the IF offset of the `AIPS FQ` table.
 * - DATE may be split over two parameters (each with its own PZERO); their sum is the JD.
 * - Baselines: BASELINE = 256·a1 + a2 + (subarray − 1)/100, or 65536 + 2048·a1 + a2 when an
 *   antenna number exceeds 255 (the convention of large-N arrays; from memory, no source at
 *   hand), or separate ANTENNA1/ANTENNA2 parameters.
 * - Data axes COMPLEX (re, im, weight), STOKES, FREQ, IF, RA, DEC in any order (axis 2 is
 *   normally COMPLEX); other axes must have length 1.
 * - Sign: u, v, w are kept as stored and the data are CONJUGATED, because stored files obey
 *   DATA = Σ I·exp(+2πi(U x + V y)) while the internal convention has −2πi (CONVENTIONS.md).
 * - Dropped and counted: weight ≤ 0 (flags, including −0.0), then non-finite weight or data
 *   (+inf weights included), then autocorrelations (a1 = a2 ≠ 0; 0 means "unknown").
 *
 * The file is read in chunks of whole groups into one reusable buffer, twice: the first pass
 * counts what is kept so the output arrays are sized exactly, the second fills them.
 * Peak memory is therefore the output table (51 bytes per visibility: re, im and w in float32,
 * as the file stores them) plus one 1 MB chunk — no growing arrays, no second copy.
 *
 * Reference: Greisen, AIPS Memo 117 "The FITS interferometry data interchange format"
 * (1990–2016); FITS Standard 4.0 (Pence et al. 2010, A&A 524, A42) §6 random groups.
 */
import { closeSync, fstatSync, openSync, readSync } from "node:fs";
import { basename } from "node:path";
import { InputError } from "../errors.js";
import { FITS_BLOCK, readFitsHeader, type FitsHeader } from "./fitsHeader.js";
import { readBinaryTable, type FitsTable } from "./fitsTable.js";
import { CORRELATION_NAMES, type ReadReport, type Visibilities } from "./types.js";

/** Target size of one read chunk [bytes]; whole groups only. */
const CHUNK_BYTES = 1024 * 1024;

interface Axis {
  index: number; // FITS axis number (2..NAXIS)
  type: string;
  length: number;
  stride: number; // in values, within a group's data array
  crval: number;
  cdelt: number;
  crpix: number;
}

interface Param {
  scale: number;
  zero: number;
  index: number; // 0-based position in the group
}

/** Everything the group loop needs, derived once from the primary header. */
interface GroupLayout {
  bitpix: number;
  bscale: number;
  bzero: number;
  pcount: number;
  gcount: number;
  groupValues: number; // PCOUNT + product of data axis lengths
  dataOffset: number;
  dataBytes: number;
  u: Param;
  v: Param;
  w?: Param;
  dates: Param[];
  baseline?: Param;
  ant1?: Param;
  ant2?: Param;
  hasWeight: boolean;
  complexStride: number;
  entriesPerGroup: number;
  /** Per entry in output order (IF, channel, correlation): offset of its real part in the data array. */
  entryOffset: Int32Array;
  entryChannel: Uint16Array;
  entryCorr: Int8Array;
  nIf: number;
  nChan: number;
  stokesCodes: number[];
  freqAxis: Axis;
  axes: Axis[];
}

/**
 * Read a UVFITS file.
 * @param path file path
 * @returns visibilities (u, v in wavelengths of each channel, data in Jy, internal sign) and
 *   what was kept or dropped.
 * Reference: AIPS Memo 117; CONVENTIONS.md "Stored files use the opposite sign".
 */
export function readUvfits(path: string): { vis: Visibilities; report: ReadReport } {
  const name = basename(path);
  const fd = openSync(path, "r");
  try {
    const fileSize = fstatSync(fd).size;
    if (fileSize < FITS_BLOCK) {
      throw new InputError(`${name}: ${fileSize} bytes is shorter than one FITS header block (2880 bytes); the file is truncated or not FITS`);
    }
    const { header, dataOffset } = readFitsHeader(fd, 0, fileSize, name);
    const layout = parseLayout(header, dataOffset, fileSize);
    const tables = readTables(fd, header, layout, fileSize);
    const freqs = channelFrequencies(layout, tables.fq, header);
    const notes = header.allNotes();
    notes.push(...tables.notes, ...freqs.notes);
    return readGroups(fd, name, layout, header, tables, freqs, notes);
  } finally {
    closeSync(fd);
  }
}

function parseLayout(h: FitsHeader, dataOffset: number, fileSize: number): GroupLayout {
  const f = h.fileName;
  if (h.get("SIMPLE") !== true) {
    throw new InputError(`${f}: the first card is not SIMPLE = T; this is not a FITS file`);
  }
  const naxis = h.int("NAXIS");
  if (h.get("GROUPS") !== true || naxis < 2 || h.num("NAXIS1") !== 0) {
    throw new InputError(
      `${f}: FITS file without random-groups visibilities (needs GROUPS = T and NAXIS1 = 0); ` +
        `it may be an image or a FITS-IDI file, which arcfringe does not read — export UVFITS instead`,
    );
  }
  if (naxis > 20) throw new InputError(`${f}: NAXIS = ${naxis}; a UVFITS file has at most 7 axes`);
  const bitpix = h.num("BITPIX");
  if (![-64, -32, 16, 32].includes(bitpix)) {
    throw new InputError(`${f}: BITPIX = ${bitpix}; UVFITS data must be -32, -64, 16 or 32`);
  }
  const pcount = h.int("PCOUNT");
  const gcount = h.int("GCOUNT");
  const axes: Axis[] = [];
  let stride = 1;
  for (let n = 2; n <= naxis; n++) {
    const length = h.int(`NAXIS${n}`);
    const type = h.str(`CTYPE${n}`).replace(/-+$/, "");
    axes.push({
      index: n, type, length, stride,
      crval: h.num(`CRVAL${n}`, 0), cdelt: h.num(`CDELT${n}`, 1), crpix: h.num(`CRPIX${n}`, 1),
    });
    stride *= length;
  }
  const groupValues = pcount + stride;
  const bytesPer = Math.abs(bitpix) / 8;
  const dataBytes = gcount * groupValues * bytesPer;
  // Refuse before allocating anything: declared sizes must fit in the file.
  if (dataOffset + dataBytes > fileSize) {
    throw new InputError(
      `${f}: the header declares ${gcount} groups of ${groupValues * bytesPer} bytes ` +
        `(${dataBytes} bytes of data) but only ${fileSize - dataOffset} bytes follow the header; the file is truncated or corrupt`,
    );
  }
  if (gcount === 0 || stride === 0) {
    throw new InputError(`${f}: the file holds no visibilities (GCOUNT = ${gcount}, data axes ${axes.map((a) => a.length).join("×")})`);
  }
  const find = (t: string): Axis | undefined => axes.find((a) => a.type === t);
  const complex = find("COMPLEX");
  if (!complex || (complex.length !== 3 && complex.length !== 2)) {
    throw new InputError(`${f}: no COMPLEX axis of length 3 (real, imaginary, weight) or 2; found ${complex ? `length ${complex.length}` : "none"}`);
  }
  const freqAxis = find("FREQ");
  if (!freqAxis) throw new InputError(`${f}: no FREQ axis; UVFITS needs one to convert UU, VV from seconds to wavelengths`);
  const stokesAxis = find("STOKES");
  const ifAxis = find("IF");
  for (const a of axes) {
    if (a === complex || a === freqAxis || a === stokesAxis || a === ifAxis || a.length === 1) continue;
    throw new InputError(`${f}: axis ${a.index} (${a.type || "unnamed"}) has length ${a.length}; only COMPLEX, STOKES, FREQ and IF may be longer than 1`);
  }
  for (const a of axes) {
    if (a.type === "" && a.length === 1) h.note(`axis ${a.index} has no CTYPE${a.index} and length 1; ignored`);
  }
  const nStokes = stokesAxis?.length ?? 1;
  const stokesCodes: number[] = [];
  for (let s = 0; s < nStokes; s++) {
    const code = stokesAxis ? Math.round(stokesAxis.crval + (s + 1 - stokesAxis.crpix) * stokesAxis.cdelt) : 1;
    if (!(code in CORRELATION_NAMES)) {
      throw new InputError(`${f}: STOKES axis entry ${s + 1} has code ${code}; AIPS codes are 1..4 (I Q U V), -1..-4 (RR LL RL LR), -5..-8 (XX YY XY YX)`);
    }
    stokesCodes.push(code);
  }
  if (!stokesAxis) h.note("no STOKES axis; data taken as Stokes I");
  const nChan = freqAxis.length;
  const nIf = ifAxis?.length ?? 1;
  if (nChan * nIf > 65535) throw new InputError(`${f}: ${nIf} IFs × ${nChan} channels exceeds 65535 channels`);

  const params = readParams(h, pcount);
  const u = params.get("UU")?.[0];
  const v = params.get("VV")?.[0];
  if (!u || !v) {
    throw new InputError(`${f}: random parameters UU and VV not found (PTYPEs: ${[...params.keys()].join(", ") || "none"}); not a UVFITS visibility file`);
  }
  const w = params.get("WW")?.[0];
  if (!w) h.note("no WW parameter; w set to 0");
  const dates = params.get("DATE") ?? [];
  if (dates.length === 0) h.note("no DATE parameter; times set to 0");
  const baseline = params.get("BASELINE")?.[0];
  const ant1 = params.get("ANTENNA1")?.[0];
  const ant2 = params.get("ANTENNA2")?.[0];
  if (!baseline && !(ant1 && ant2)) h.note("no BASELINE or ANTENNA1/ANTENNA2 parameters; antennas unknown (0)");
  if (complex.length === 2) h.note("COMPLEX axis has no weight element; every weight set to 1");

  const entriesPerGroup = nIf * nChan * nStokes;
  const entryOffset = new Int32Array(entriesPerGroup);
  const entryChannel = new Uint16Array(entriesPerGroup);
  const entryCorr = new Int8Array(entriesPerGroup);
  let e = 0;
  for (let i = 0; i < nIf; i++) {
    for (let k = 0; k < nChan; k++) {
      for (let s = 0; s < nStokes; s++) {
        entryOffset[e] = pcount + i * (ifAxis?.stride ?? 0) + k * freqAxis.stride + s * (stokesAxis?.stride ?? 0);
        entryChannel[e] = i * nChan + k;
        entryCorr[e] = stokesCodes[s];
        e++;
      }
    }
  }
  return {
    bitpix, bscale: h.num("BSCALE", 1), bzero: h.num("BZERO", 0), pcount, gcount, groupValues, dataOffset, dataBytes,
    u, v, w, dates, baseline, ant1, ant2, hasWeight: complex.length === 3, complexStride: complex.stride,
    entriesPerGroup, entryOffset, entryChannel, entryCorr, nIf, nChan, stokesCodes, freqAxis, axes,
  };
}

/** Random parameters by normalised name (UU---SIN → UU), each a list in file order. */
function readParams(h: FitsHeader, pcount: number): Map<string, Param[]> {
  const out = new Map<string, Param[]>();
  for (let i = 1; i <= pcount; i++) {
    const raw = h.str(`PTYPE${i}`);
    const m = /^(UU|VV|WW)(-|$)/.exec(raw);
    const key = m ? m[1] : raw.trim();
    const p: Param = { scale: h.num(`PSCAL${i}`, 1), zero: h.num(`PZERO${i}`, 0), index: i - 1 };
    const list = out.get(key);
    if (list) list.push(p);
    else out.set(key, [p]);
  }
  return out;
}

interface Tables {
  an?: FitsTable;
  fq?: FitsTable;
  notes: string[];
}

/** Walk the extensions after the groups; keep `AIPS AN` and `AIPS FQ`. */
function readTables(fd: number, h: FitsHeader, layout: GroupLayout, fileSize: number): Tables {
  const out: Tables = { notes: [] };
  let offset = layout.dataOffset + Math.ceil(layout.dataBytes / FITS_BLOCK) * FITS_BLOCK;
  for (let guard = 0; guard < 1000 && offset + FITS_BLOCK <= fileSize; guard++) {
    const { header: x, dataOffset } = readFitsHeader(fd, offset, fileSize, h.fileName);
    const xt = x.str("XTENSION");
    if (xt === "") {
      out.notes.push(`${h.fileName}: bytes after the data at ${offset} are not a FITS extension; ignored`);
      break;
    }
    const bitpix = Math.abs(x.num("BITPIX", 8));
    const nax = x.int("NAXIS", 0);
    let prod = nax > 0 ? 1 : 0;
    for (let n = 1; n <= nax; n++) prod *= x.int(`NAXIS${n}`);
    const bytes = (bitpix / 8) * x.int("GCOUNT", 1) * (x.int("PCOUNT", 0) + prod);
    if (dataOffset + bytes > fileSize) {
      throw new InputError(`${h.fileName}: extension ${x.str("EXTNAME") || xt} at byte ${offset} declares ${bytes} bytes but the file ends first; the file is truncated`);
    }
    const extName = x.str("EXTNAME");
    if ((xt === "BINTABLE" || xt === "A3DTABLE") && (extName === "AIPS AN" || extName === "AIPS FQ")) {
      const table = readBinaryTable(fd, x, dataOffset, fileSize);
      if (extName === "AIPS AN" && !out.an) out.an = table;
      if (extName === "AIPS FQ" && !out.fq) out.fq = table;
    }
    out.notes.push(...x.allNotes());
    offset = dataOffset + Math.ceil(bytes / FITS_BLOCK) * FITS_BLOCK;
  }
  return out;
}

/** Channel frequencies [Hz], flattened IF × channel (IF slowest). */
function channelFrequencies(layout: GroupLayout, fq: FitsTable | undefined, h: FitsHeader): { freqHz: Float64Array; widthHz: number; notes: string[] } {
  const notes: string[] = [];
  const { nIf, nChan, freqAxis } = layout;
  let ifOffsets = new Float64Array(nIf);
  let widthHz = Math.abs(freqAxis.cdelt);
  if (fq) {
    const col = fq.columns.get("IF FREQ");
    const sel = fq.columns.get("FRQSEL");
    let row = 0;
    if (sel && sel.kind === "number") {
      const r = Array.from(sel.values).indexOf(1);
      if (r > 0) row = r;
      if (fq.rows > 1) notes.push(`${h.fileName}: AIPS FQ table has ${fq.rows} frequency set-ups; FRQSEL ${sel.values[row]} used`);
    }
    if (col && col.kind === "number" && col.repeat >= nIf && fq.rows > 0) {
      ifOffsets = col.values.slice(row * col.repeat, row * col.repeat + nIf);
    } else if (nIf > 1) {
      throw new InputError(`${h.fileName}: ${nIf} IFs but the AIPS FQ table has no IF FREQ column with ${nIf} values; cannot place the IFs in frequency`);
    }
    const cw = fq.columns.get("CH WIDTH");
    if (cw && cw.kind === "number" && cw.values.length > row * cw.repeat && Number.isFinite(cw.values[row * cw.repeat])) {
      widthHz = Math.abs(cw.values[row * cw.repeat]);
    }
  } else if (nIf > 1) {
    throw new InputError(`${h.fileName}: ${nIf} IFs but no AIPS FQ table giving their frequencies; re-export the file with its FQ table`);
  }
  const freqHz = new Float64Array(nIf * nChan);
  for (let i = 0; i < nIf; i++) {
    for (let k = 0; k < nChan; k++) {
      freqHz[i * nChan + k] = freqAxis.crval + (k + 1 - freqAxis.crpix) * freqAxis.cdelt + ifOffsets[i];
    }
  }
  for (let c = 0; c < freqHz.length; c++) {
    if (!(freqHz[c] > 0) || !Number.isFinite(freqHz[c])) {
      throw new InputError(`${h.fileName}: channel ${c} has frequency ${freqHz[c]} Hz from the FREQ axis and FQ table; frequencies must be positive`);
    }
  }
  return { freqHz, widthHz, notes };
}

/** Decode a chunk of big-endian values into a Float64Array of physical values (BSCALE/BZERO applied). */
class ChunkDecoder {
  readonly raw: Uint8Array;
  private readonly view: Float32Array | Float64Array | Int16Array | Int32Array;
  constructor(private readonly bitpix: number, bytes: number) {
    this.raw = new Uint8Array(new ArrayBuffer(bytes));
    const buf = this.raw.buffer;
    this.view =
      bitpix === -32 ? new Float32Array(buf) : bitpix === -64 ? new Float64Array(buf) : bitpix === 16 ? new Int16Array(buf) : new Int32Array(buf);
  }
  /** Swap `bytes` bytes in place to little-endian and return the typed view. */
  swap(bytes: number): Float32Array | Float64Array | Int16Array | Int32Array {
    const b = Buffer.from(this.raw.buffer, 0, bytes);
    if (this.bitpix === -64) b.swap64();
    else if (this.bitpix === 16) b.swap16();
    else b.swap32();
    return this.view;
  }
}

function readGroups(
  fd: number,
  name: string,
  L: GroupLayout,
  h: FitsHeader,
  tables: Tables,
  freqs: { freqHz: Float64Array; widthHz: number },
  notes: string[],
): { vis: Visibilities; report: ReadReport } {
  const bytesPer = Math.abs(L.bitpix) / 8;
  const groupBytes = L.groupValues * bytesPer;
  const groupsPerChunk = Math.max(1, Math.floor(CHUNK_BYTES / groupBytes));
  const decoder = new ChunkDecoder(L.bitpix, groupsPerChunk * groupBytes);
  const scaled = L.bscale !== 1 || L.bzero !== 0;
  const bscale = L.bscale;
  const bzero = L.bzero;
  const nEnt = L.entriesPerGroup;
  const cs = L.complexStride;
  const { entryOffset, entryChannel, entryCorr } = L;
  const freqHz = freqs.freqHz;

  let flagged = 0;
  let nonFinite = 0;
  let auto = 0;
  let badParams = 0;
  let subarrays = 0;
  let kept = 0;
  let minJd = Infinity;

  // Output arrays, allocated between the passes.
  let out: Visibilities | undefined;
  let timeRefJd = 0;
  let k = 0;

  for (let pass = 0; pass < 2; pass++) {
    for (let g0 = 0; g0 < L.gcount; g0 += groupsPerChunk) {
      const nG = Math.min(groupsPerChunk, L.gcount - g0);
      const bytes = nG * groupBytes;
      const pos = L.dataOffset + g0 * groupBytes;
      if (readSync(fd, decoder.raw, 0, bytes, pos) !== bytes) {
        throw new InputError(`${name}: could not read ${bytes} bytes at byte ${pos}; the file is truncated`);
      }
      const vals = decoder.swap(bytes);
      for (let g = 0; g < nG; g++) {
        const base = g * L.groupValues;
        const uS = vals[base + L.u.index] * L.u.scale + L.u.zero;
        const vS = vals[base + L.v.index] * L.v.scale + L.v.zero;
        const wS = L.w ? vals[base + L.w.index] * L.w.scale + L.w.zero : 0;
        // JD = Σ DATE parameters. The reference is taken off the PZEROs before adding the stored
        // values so that small stored fractions keep their digits (jdHi − timeRefJd + jdLo).
        let jdHi = 0;
        let jdLo = 0;
        for (let d = 0; d < L.dates.length; d++) {
          const p = L.dates[d];
          const raw = vals[base + p.index] * p.scale;
          if (d === 0) jdHi = p.zero - timeRefJd;
          else jdLo += p.zero;
          jdLo += raw;
        }
        let a1 = 0;
        let a2 = 0;
        let paramsOk = Number.isFinite(uS) && Number.isFinite(vS) && Number.isFinite(wS) && Number.isFinite(jdHi) && Number.isFinite(jdLo);
        if (L.ant1 && L.ant2) {
          a1 = vals[base + L.ant1.index] * L.ant1.scale + L.ant1.zero;
          a2 = vals[base + L.ant2.index] * L.ant2.scale + L.ant2.zero;
          a1 = Math.round(a1);
          a2 = Math.round(a2);
        } else if (L.baseline) {
          const bl = vals[base + L.baseline.index] * L.baseline.scale + L.baseline.zero;
          // Round before splitting: the subarray fraction (n−1)/100 is below 0.5 for n ≤ 50.
          const bi = Math.floor(bl + 1e-6);
          if (bl - bi > 0.005 && pass === 0) subarrays++;
          if (bi >= 65536) {
            a1 = Math.floor((bi - 65536) / 2048);
            a2 = (bi - 65536) % 2048;
          } else {
            a1 = Math.floor(bi / 256);
            a2 = bi % 256;
          }
        }
        if (!(a1 >= 0 && a1 <= 65535 && a2 >= 0 && a2 <= 65535)) paramsOk = false;
        const isAuto = a1 === a2 && a1 !== 0;
        for (let e = 0; e < nEnt; e++) {
          const off = base + entryOffset[e];
          let re = vals[off];
          let im = vals[off + cs];
          let wt = L.hasWeight ? vals[off + 2 * cs] : 1;
          if (scaled) {
            re = re * bscale + bzero;
            im = im * bscale + bzero;
            if (L.hasWeight) wt = wt * bscale + bzero;
          }
          // Order of the tests: the file's own flag first, then unusable numbers, then autocorrelations.
          if (wt <= 0) {
            if (pass === 0) flagged++;
            continue;
          }
          if (!(wt < Infinity) || !Number.isFinite(re) || !Number.isFinite(im) || !paramsOk) {
            if (pass === 0) {
              nonFinite++;
              if (!paramsOk) badParams++;
            }
            continue;
          }
          if (isAuto) {
            if (pass === 0) auto++;
            continue;
          }
          if (pass === 0) {
            kept++;
            const jd = jdHi + jdLo; // timeRefJd is 0 in the first pass
            if (jd < minJd) minJd = jd;
            continue;
          }
          const o = out!;
          const ch = entryChannel[e];
          const nu = freqHz[ch];
          o.uLambda[k] = uS * nu;
          o.vLambda[k] = vS * nu;
          o.wLambda[k] = wS * nu;
          o.reJy[k] = re;
          o.imJy[k] = -im; // conjugate: stored sign is +2πi, internal −2πi
          o.weight[k] = wt;
          o.channel[k] = ch;
          o.antenna1[k] = a1;
          o.antenna2[k] = a2;
          o.timeS[k] = (jdHi + jdLo) * 86400;
          o.correlation[k] = entryCorr[e];
          k++;
        }
      }
    }
    if (pass === 0) {
      timeRefJd = Number.isFinite(minJd) && L.dates.length > 0 ? Math.floor(minJd - 0.5) + 0.5 : 0;
      out = allocate(kept, freqs.freqHz, freqs.widthHz, timeRefJd);
    }
  }
  if (badParams > 0) notes.push(`${name}: ${badParams} entries with non-finite or invalid u, v, w, date or baseline dropped (counted as non-finite)`);
  if (subarrays > 0) notes.push(`${name}: ${subarrays} groups belong to subarrays > 1; their antenna numbers are kept as stored`);
  const vis = out!;
  addMetadata(vis, h, L, tables, notes);
  const report: ReadReport = {
    format: "uvfits",
    entriesInFile: L.gcount * nEnt,
    kept,
    droppedFlagged: flagged,
    droppedNonFinite: nonFinite,
    droppedAuto: auto,
    notes,
  };
  return { vis, report };
}

/**
 * Allocate an empty Visibilities of `n` entries: u, v, weight, time in float64; w, re, im in
 * float32; channel and antennas uint16; correlation int8 (51 bytes per entry).
 * @param n entries
 * @param channelFreqHz frequency of each channel [Hz] (borrowed, not copied)
 * @param channelWidthHz channel width [Hz]
 * @param timeRefJd Julian date that `timeS` counts from [d]
 * Reference: types.ts (field units).
 */
export function allocate(n: number, channelFreqHz: Float64Array, channelWidthHz: number, timeRefJd: number): Visibilities {
  return {
    count: n,
    uLambda: new Float64Array(n),
    vLambda: new Float64Array(n),
    wLambda: new Float32Array(n),
    reJy: new Float32Array(n),
    imJy: new Float32Array(n),
    weight: new Float64Array(n),
    channel: new Uint16Array(n),
    antenna1: new Uint16Array(n),
    antenna2: new Uint16Array(n),
    timeS: new Float64Array(n),
    correlation: new Int8Array(n),
    channelFreqHz,
    channelWidthHz,
    timeRefJd,
  };
}

function addMetadata(vis: Visibilities, h: FitsHeader, L: GroupLayout, tables: Tables, notes: string[]): void {
  const ra = L.axes.find((a) => a.type === "RA");
  const dec = L.axes.find((a) => a.type === "DEC");
  const obsRa = h.get("OBSRA");
  const obsDec = h.get("OBSDEC");
  const haveObs = typeof obsRa === "number" && typeof obsDec === "number" && Number.isFinite(obsRa) && Number.isFinite(obsDec);
  // The RA/DEC axes give the phase centre; OBSRA/OBSDEC is the antenna pointing (AIPS usage).
  if (ra && dec) vis.phaseCentreDeg = [ra.crval, dec.crval];
  else if (haveObs) vis.phaseCentreDeg = [obsRa, obsDec];
  if (haveObs) vis.pointingCentreDeg = [obsRa, obsDec];
  else if (vis.phaseCentreDeg) vis.pointingCentreDeg = [vis.phaseCentreDeg[0], vis.phaseCentreDeg[1]];
  if (!vis.phaseCentreDeg) notes.push(`${h.fileName}: no RA/DEC axes or OBSRA/OBSDEC; phase centre unknown`);
  const tel = h.get("TELESCOP");
  if (typeof tel === "string" && tel.trim()) vis.telescope = tel.trim();
  const obj = h.get("OBJECT");
  if (typeof obj === "string" && obj.trim()) vis.objectName = obj.trim();
  const codes = L.stokesCodes;
  if (codes.some((c) => c <= -1 && c >= -4)) vis.circularFeeds = true;
  else if (codes.some((c) => c <= -5)) vis.circularFeeds = false;
  const an = tables.an;
  if (an) {
    const names = an.columns.get("ANNAME");
    const nosta = an.columns.get("NOSTA");
    const map = new Map<number, string>();
    for (let r = 0; r < an.rows; r++) {
      const id = nosta && nosta.kind === "number" ? nosta.values[r * nosta.repeat] : r + 1;
      const label = names && names.kind === "string" ? names.values[r] : `ANT${id}`;
      if (Number.isInteger(id)) map.set(id, label);
    }
    vis.antennaNames = map;
    // Feed type from the antenna table when the correlations (e.g. Stokes I only) do not tell.
    const polA = an.columns.get("POLTYA");
    if (vis.circularFeeds === undefined && polA && polA.kind === "string" && polA.values.length > 0) {
      const t = polA.values[0].toUpperCase();
      if (t === "R" || t === "L") vis.circularFeeds = true;
      else if (t === "X" || t === "Y") vis.circularFeeds = false;
    }
    const diam = an.columns.get("DIAMETER");
    if (diam && diam.kind === "number") {
      const d = Array.from(diam.values).filter((x) => x > 0 && Number.isFinite(x)).sort((a, b) => a - b);
      if (d.length > 0) {
        vis.dishDiameterM = d[Math.floor(d.length / 2)];
        if (d[0] !== d[d.length - 1]) notes.push(`${h.fileName}: antennas have different diameters (${d[0]}–${d[d.length - 1]} m); median ${vis.dishDiameterM} m used`);
      }
    }
  }
}
