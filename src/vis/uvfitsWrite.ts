/**
 * UVFITS writer: `Visibilities` to a random-groups FITS file (AIPS Memo 117 layout) that this
 * reader and astropy.io.fits read back.
 *
 * Layout: BITPIX −32; random parameters UU, VV, WW [s] (at the frequency of the channel the
 * row's first entry came from, i.e. u_λ/ν), BASELINE, DATE, DATE (PZERO of the first = the
 * reference JD; the days since then are split into a float32 and its float32 remainder, so
 * the sum keeps ~1e-12 day); data axes COMPLEX (re,
 * im, weight), STOKES, FREQ, IF, RA, DEC. Evenly spaced channels go on the FREQ axis of one
 * IF; otherwise each channel becomes an IF of one channel, its frequency in the `AIPS FQ`
 * table. Entries with the same time and baseline are grouped into one row; cells absent
 * from `vis` get weight 0 (flagged). An `AIPS AN` table lists the antennas.
 *
 * Sign: the data are conjugated back to the stored convention, DATA = Σ I exp(+2πi(U x + V y)).
 * Precision: Float32 for u, v, w [s], the data and the weights (relative 6e-8); times ≈ 1 µs.
 *
 * Reference: AIPS Memo 117; FITS Standard 4.0 §6 (random groups), §7.3 (binary tables);
 * CONVENTIONS.md "Stored files use the opposite sign".
 */
import { closeSync, openSync, writeSync } from "node:fs";
import { basename } from "node:path";
import { InputError } from "../errors.js";
import { FITS_BLOCK, formatCard, headerBytes } from "./fitsHeader.js";
import { binaryTableBytes } from "./fitsTable.js";
import { CORRELATION_NAMES, type Visibilities } from "./types.js";

const PARAMS = ["UU", "VV", "WW", "BASELINE", "DATE", "DATE"] as const;
const ROWS_PER_CHUNK = 65536;

/** How the channels map onto FREQ and IF axes. */
interface FreqLayout {
  nIf: number;
  nChan: number;
  refHz: number;
  cdeltHz: number;
  ifOffsetHz: Float64Array;
}

/** Decide whether the channels fit one evenly spaced FREQ axis; otherwise one IF per channel. */
export function freqLayout(freqHz: Float64Array, widthHz: number): FreqLayout {
  const n = freqHz.length;
  const ref = freqHz[0];
  const step = n > 1 ? freqHz[1] - freqHz[0] : widthHz > 0 ? widthHz : 1;
  let even = step !== 0;
  for (let k = 0; k < n && even; k++) {
    // 1 mHz: far below any channel width, above double rounding of GHz frequencies.
    if (Math.abs(freqHz[k] - (ref + k * step)) > 1e-3) even = false;
  }
  if (even) return { nIf: 1, nChan: n, refHz: ref, cdeltHz: step, ifOffsetHz: new Float64Array(1) };
  const off = new Float64Array(n);
  for (let k = 0; k < n; k++) off[k] = freqHz[k] - ref;
  return { nIf: n, nChan: 1, refHz: ref, cdeltHz: widthHz > 0 ? widthHz : 1, ifOffsetHz: off };
}

/** STOKES axis covering every code present (gaps filled with flagged cells). */
function stokesLayout(vis: Visibilities, name: string): { crval: number; cdelt: number; n: number } {
  let seen = 0; // bit mask of codes + 8
  for (let k = 0; k < vis.count; k++) seen |= 1 << (vis.correlation[k] + 8);
  const codes: number[] = [];
  for (let c = -8; c <= 4; c++) if (c !== 0 && seen & (1 << (c + 8))) codes.push(c);
  if (codes.length === 0) return { crval: 1, cdelt: 1, n: 1 };
  for (const c of codes) {
    if (!(c in CORRELATION_NAMES)) throw new InputError(`${name}: correlation code ${c} is not an AIPS Stokes code; cannot write UVFITS`);
  }
  const lo = codes[0];
  const hi = codes[codes.length - 1];
  if (lo < 0 && hi > 0) {
    throw new InputError(`${name}: correlations ${codes.map((c) => CORRELATION_NAMES[c]).join(", ")} mix Stokes and feed products; UVFITS holds one kind per file — form Stokes I first`);
  }
  return hi < 0 ? { crval: hi, cdelt: -1, n: hi - lo + 1 } : { crval: lo, cdelt: 1, n: hi - lo + 1 };
}

/** ISO date (YYYY-MM-DD) of a Julian date. Reference: JD 2440587.5 = 1970-01-01T00:00Z (Unix epoch). */
function jdToIsoDate(jd: number): string {
  const ms = (jd - 2440587.5) * 86400e3;
  const d = new Date(ms);
  return Number.isFinite(ms) && !Number.isNaN(d.getTime()) ? d.toISOString().slice(0, 10) : "2000-01-01";
}

/**
 * Write `vis` as UVFITS to `path` (overwritten). Use `writeVisibilities` for an atomic write.
 * @param path output file
 * @param vis visibilities in the internal convention (conjugated on the way out)
 */
export function writeUvfits(path: string, vis: Visibilities): void {
  const name = basename(path);
  const n = vis.count;
  if (n === 0) throw new InputError(`${name}: no visibilities to write`);
  for (let c = 0; c < vis.channelFreqHz.length; c++) {
    const f = vis.channelFreqHz[c];
    if (!(f > 0) || !Number.isFinite(f)) {
      throw new InputError(`${name}: channel ${c} has frequency ${f} Hz; UVFITS needs positive channel frequencies (give a freq_hz column in CSV input)`);
    }
  }
  const fl = freqLayout(vis.channelFreqHz, vis.channelWidthHz);
  const st = stokesLayout(vis, name);
  const nCells = fl.nIf * fl.nChan * st.n;

  // Group entries into rows of equal (time, antenna1, antenna2); a repeated cell starts a new row.
  const rowOf = new Int32Array(n);
  const cellOf = new Int32Array(n);
  const rowFirst: number[] = [];
  const rowIndex = new Map<string, number>();
  const filled: Uint8Array[] = [];
  let lastKey = "";
  let lastRow = -1;
  for (let k = 0; k < n; k++) {
    const ch = vis.channel[k];
    if (ch >= vis.channelFreqHz.length) throw new InputError(`${name}: entry ${k} has channel ${ch} but there are ${vis.channelFreqHz.length} channels`);
    // Channel ch = IF i × nChan + chan: same flattening as the reader.
    const corrPos = st.cdelt === -1 ? st.crval - vis.correlation[k] : vis.correlation[k] - st.crval;
    const cell = ch * st.n + corrPos;
    const t = vis.timeS[k];
    const key = `${t}|${vis.antenna1[k]}|${vis.antenna2[k]}`;
    let r = key === lastKey ? lastRow : rowIndex.get(key) ?? -1;
    if (r >= 0 && filled[r][cell]) r = -1;
    if (r < 0) {
      r = rowFirst.length;
      rowFirst.push(k);
      filled.push(new Uint8Array(nCells));
      rowIndex.set(key, r);
    }
    filled[r][cell] = 1;
    rowOf[k] = r;
    cellOf[k] = cell;
    lastKey = key;
    lastRow = r;
  }
  const nRows = rowFirst.length;
  filled.length = 0;
  // Entry index per (row, cell), −1 when absent.
  const cellEntry = new Int32Array(nRows * nCells).fill(-1);
  for (let k = 0; k < n; k++) cellEntry[rowOf[k] * nCells + cellOf[k]] = k;

  const refFreq = fl.refHz;
  const ra = vis.phaseCentreDeg?.[0] ?? 0;
  const dec = vis.phaseCentreDeg?.[1] ?? 0;
  const pointing = vis.pointingCentreDeg ?? vis.phaseCentreDeg;
  const timeRefJd = vis.timeRefJd;
  const cards = [
    formatCard("SIMPLE", true, "conforms to FITS standard"),
    formatCard("BITPIX", -32, "IEEE single precision"),
    formatCard("NAXIS", 7),
    formatCard("NAXIS1", 0, "random groups"),
    formatCard("NAXIS2", 3, "COMPLEX: re, im, weight"),
    formatCard("NAXIS3", st.n, "STOKES"),
    formatCard("NAXIS4", fl.nChan, "FREQ"),
    formatCard("NAXIS5", fl.nIf, "IF"),
    formatCard("NAXIS6", 1, "RA"),
    formatCard("NAXIS7", 1, "DEC"),
    formatCard("EXTEND", true),
    formatCard("GROUPS", true, "random-groups visibilities"),
    formatCard("PCOUNT", PARAMS.length),
    formatCard("GCOUNT", nRows),
    formatCard("OBJECT", vis.objectName ?? "UNKNOWN"),
    formatCard("TELESCOP", vis.telescope ?? "UNKNOWN"),
    formatCard("INSTRUME", vis.telescope ?? "UNKNOWN"),
    formatCard("DATE-OBS", jdToIsoDate(timeRefJd)),
    formatCard("BSCALE", 1.0),
    formatCard("BZERO", 0.0),
    formatCard("BUNIT", "JY"),
    formatCard("EQUINOX", 2000.0),
    formatCard("OBSRA", pointing?.[0] ?? ra, "pointing centre RA [deg]"),
    formatCard("OBSDEC", pointing?.[1] ?? dec, "pointing centre Dec [deg]"),
  ];
  const axis = (i: number, type: string, crval: number, cdelt: number): void => {
    cards.push(formatCard(`CTYPE${i}`, type), formatCard(`CRVAL${i}`, crval), formatCard(`CDELT${i}`, cdelt), formatCard(`CRPIX${i}`, 1.0), formatCard(`CROTA${i}`, 0.0));
  };
  axis(2, "COMPLEX", 1, 1);
  axis(3, "STOKES", st.crval, st.cdelt);
  axis(4, "FREQ", refFreq, fl.cdeltHz);
  axis(5, "IF", 1, 1);
  axis(6, "RA", ra, 1);
  axis(7, "DEC", dec, 1);
  PARAMS.forEach((p, i) => {
    cards.push(formatCard(`PTYPE${i + 1}`, p), formatCard(`PSCAL${i + 1}`, 1.0), formatCard(`PZERO${i + 1}`, i === 4 ? timeRefJd : 0.0));
  });
  cards.push(formatCard("HISTORY", undefined, "arcfringe: DATA = sum I exp(+2 pi i (u x + v y)), x East; u,v,w = UU,VV,WW"));
  cards.push(formatCard("HISTORY", undefined, "arcfringe: UU,VV,WW in seconds; DATE + DATE = Julian date"));

  const fd = openSync(path, "w");
  try {
    writeSync(fd, headerBytes(cards));
    const groupFloats = PARAMS.length + 3 * nCells;
    const chunk = Buffer.alloc(Math.min(nRows, ROWS_PER_CHUNK) * groupFloats * 4);
    let written = 0;
    for (let r0 = 0; r0 < nRows; r0 += ROWS_PER_CHUNK) {
      const nr = Math.min(ROWS_PER_CHUNK, nRows - r0);
      let p = 0;
      for (let r = r0; r < r0 + nr; r++) {
        const k0 = rowFirst[r];
        const nu = vis.channelFreqHz[vis.channel[k0]];
        const a1 = vis.antenna1[k0];
        const a2 = vis.antenna2[k0];
        const baseline = a1 <= 255 && a2 <= 255 ? 256 * a1 + a2 : 65536 + 2048 * a1 + a2;
        if (a1 > 2047 || a2 > 2047) throw new InputError(`${name}: antenna number ${Math.max(a1, a2)} exceeds 2047; UVFITS baselines cannot encode it`);
        // Time as a float32 pair: hi + lo keeps ~1e-12 day although each value is single precision.
        const t = vis.timeS[k0] / 86400;
        const hi = Math.fround(t);
        chunk.writeFloatBE(vis.uLambda[k0] / nu, p);
        chunk.writeFloatBE(vis.vLambda[k0] / nu, p + 4);
        chunk.writeFloatBE(vis.wLambda[k0] / nu, p + 8);
        chunk.writeFloatBE(baseline, p + 12);
        chunk.writeFloatBE(hi, p + 16);
        chunk.writeFloatBE(t - hi, p + 20);
        p += 24;
        const base = r * nCells;
        for (let c = 0; c < nCells; c++) {
          const k = cellEntry[base + c];
          if (k < 0) {
            chunk.writeFloatBE(0, p);
            chunk.writeFloatBE(0, p + 4);
            chunk.writeFloatBE(0, p + 8);
          } else {
            chunk.writeFloatBE(vis.reJy[k], p);
            chunk.writeFloatBE(-vis.imJy[k], p + 4); // conjugate back to the stored sign
            chunk.writeFloatBE(vis.weight[k], p + 8);
          }
          p += 12;
        }
      }
      writeSync(fd, chunk, 0, p);
      written += p;
    }
    const pad = (FITS_BLOCK - (written % FITS_BLOCK)) % FITS_BLOCK;
    if (pad > 0) writeSync(fd, Buffer.alloc(pad));
    writeSync(fd, antennaTable(vis, refFreq));
    writeSync(fd, frequencyTable(fl, vis.channelWidthHz));
  } finally {
    closeSync(fd);
  }
}

function antennaTable(vis: Visibilities, refFreqHz: number): Buffer {
  const ids = new Set<number>();
  for (let k = 0; k < vis.count; k++) {
    if (vis.antenna1[k] > 0) ids.add(vis.antenna1[k]);
    if (vis.antenna2[k] > 0) ids.add(vis.antenna2[k]);
  }
  for (const id of vis.antennaNames?.keys() ?? []) if (id > 0) ids.add(id);
  const list = [...ids].sort((a, b) => a - b);
  const rows = list.length;
  const feedA = vis.circularFeeds === false ? "X" : "R";
  const feedB = vis.circularFeeds === false ? "Y" : "L";
  const diam = vis.dishDiameterM ?? 0;
  return binaryTableBytes(
    "AIPS AN",
    rows,
    [
      { name: "ANNAME", code: "A", repeat: 8, values: list.map((id) => vis.antennaNames?.get(id) ?? `ANT${id}`) },
      { name: "STABXYZ", code: "D", repeat: 3, values: new Float64Array(3 * rows), unit: "METERS" },
      { name: "NOSTA", code: "J", repeat: 1, values: list },
      { name: "MNTSTA", code: "J", repeat: 1, values: new Float64Array(rows) },
      { name: "STAXOF", code: "E", repeat: 1, values: new Float64Array(rows), unit: "METERS" },
      { name: "POLTYA", code: "A", repeat: 1, values: list.map(() => feedA) },
      { name: "POLAA", code: "E", repeat: 1, values: new Float64Array(rows), unit: "DEGREES" },
      { name: "POLTYB", code: "A", repeat: 1, values: list.map(() => feedB) },
      { name: "POLAB", code: "E", repeat: 1, values: new Float64Array(rows).fill(90), unit: "DEGREES" },
      { name: "DIAMETER", code: "E", repeat: 1, values: new Float64Array(rows).fill(diam), unit: "METERS" },
    ],
    [
      ["ARRAYX", 0.0], ["ARRAYY", 0.0], ["ARRAYZ", 0.0], ["GSTIA0", 0.0], ["DEGPDY", 360.985644],
      ["FREQ", refFreqHz], ["RDATE", jdToIsoDate(vis.timeRefJd)], ["POLARX", 0.0], ["POLARY", 0.0],
      ["UT1UTC", 0.0], ["DATUTC", 0.0], ["TIMSYS", "UTC"], ["ARRNAM", vis.telescope ?? "UNKNOWN"],
      ["NUMORB", 0], ["NOPCAL", 0], ["FREQID", 1], ["IATUTC", 0.0],
    ],
  );
}

function frequencyTable(fl: FreqLayout, widthHz: number): Buffer {
  const w = widthHz > 0 ? widthHz : Math.abs(fl.cdeltHz);
  return binaryTableBytes(
    "AIPS FQ",
    1,
    [
      { name: "FRQSEL", code: "J", repeat: 1, values: [1] },
      { name: "IF FREQ", code: "D", repeat: fl.nIf, values: fl.ifOffsetHz, unit: "HZ" },
      { name: "CH WIDTH", code: "E", repeat: fl.nIf, values: new Float64Array(fl.nIf).fill(w), unit: "HZ" },
      { name: "TOTAL BANDWIDTH", code: "E", repeat: fl.nIf, values: new Float64Array(fl.nIf).fill(w * fl.nChan), unit: "HZ" },
      { name: "SIDEBAND", code: "J", repeat: fl.nIf, values: new Float64Array(fl.nIf).fill(1) },
    ],
    [["NO_IF", fl.nIf]],
  );
}
