/**
 * Small FITS binary tables (`XTENSION = 'BINTABLE'`, or the older AIPS name `'A3DTABLE'`):
 * read the columns of a table extension into plain arrays, and write one. Used for the
 * `AIPS AN` (antennas) and `AIPS FQ` (frequency set-up) tables of UVFITS files, which have a
 * few rows, so the whole table is read at once (after checking its size against the file).
 *
 * Reference: FITS Standard 4.0 (Pence et al. 2010, A&A 524, A42, §7.3: binary tables, TFORMn
 * codes L X B I J K A E D C M, big-endian storage).
 */
import { readSync } from "node:fs";
import { InputError } from "../errors.js";
import { FITS_BLOCK, FitsHeader, formatCard, headerBytes, type CardValue } from "./fitsHeader.js";

/** One column: numbers (all elements of every row, row-major) or strings (one per row). */
export type ColumnData = { kind: "number"; repeat: number; values: Float64Array } | { kind: "string"; values: string[] };

export interface FitsTable {
  name: string;
  header: FitsHeader;
  rows: number;
  columns: Map<string, ColumnData>;
}

const TYPE_BYTES: Record<string, number> = { L: 1, X: 0, B: 1, I: 2, J: 4, K: 8, A: 1, E: 4, D: 8, C: 8, M: 16, P: 8, Q: 16 };
/** Refuse tables larger than this [bytes]: AN and FQ tables are a few kB; anything bigger is corrupt or not ours. */
const MAX_TABLE_BYTES = 64 * 1024 * 1024;

/** Parse a TFORMn value like "8A", "3D", "1J", "E" into repeat count and type letter. */
export function parseTform(tform: string): { repeat: number; code: string } | undefined {
  const m = /^\s*(\d*)\s*([LXBIJKAEDCMPQ])/.exec(tform.toUpperCase());
  if (!m) return undefined;
  return { repeat: m[1] === "" ? 1 : Number(m[1]), code: m[2] };
}

/**
 * Read the binary table whose header is `header` and whose data start at `dataOffset`.
 * Sizes are checked against `fileSize` before anything is allocated.
 */
export function readBinaryTable(fd: number, header: FitsHeader, dataOffset: number, fileSize: number): FitsTable {
  const f = header.fileName;
  const rowBytes = header.int("NAXIS1");
  const rows = header.int("NAXIS2");
  const nFields = header.int("TFIELDS", 0);
  const bytes = rowBytes * rows;
  if (bytes > MAX_TABLE_BYTES || dataOffset + bytes > fileSize) {
    throw new InputError(
      `${f}: table ${header.str("EXTNAME") || "(unnamed)"} declares ${rowBytes}×${rows} bytes but the file ` +
        `has ${Math.max(0, fileSize - dataOffset)} bytes left; the file is truncated or corrupt`,
    );
  }
  const buf = Buffer.allocUnsafe(bytes);
  if (bytes > 0 && readSync(fd, buf, 0, bytes, dataOffset) !== bytes) {
    throw new InputError(`${f}: could not read table data at byte ${dataOffset}; the file is truncated`);
  }
  const columns = new Map<string, ColumnData>();
  let colOffset = 0;
  for (let c = 1; c <= nFields; c++) {
    const tform = header.get(`TFORM${c}`);
    const parsed = typeof tform === "string" ? parseTform(tform) : undefined;
    if (!parsed) {
      throw new InputError(`${f}: table column ${c} has TFORM${c} = ${JSON.stringify(tform)}; expected a FITS binary-table format like 1J or 3D`);
    }
    const width = parsed.code === "X" ? Math.ceil(parsed.repeat / 8) : parsed.repeat * TYPE_BYTES[parsed.code];
    if (colOffset + width > rowBytes) {
      throw new InputError(`${f}: table column ${c} (${String(tform)}) runs past the row length NAXIS1 = ${rowBytes}`);
    }
    const name = (typeof header.get(`TTYPE${c}`) === "string" ? String(header.get(`TTYPE${c}`)) : `COL${c}`).trim().toUpperCase();
    columns.set(name, decodeColumn(buf, rows, rowBytes, colOffset, parsed.repeat, parsed.code));
    colOffset += width;
  }
  return { name: header.str("EXTNAME"), header, rows, columns };
}

function decodeColumn(buf: Buffer, rows: number, rowBytes: number, offset: number, repeat: number, code: string): ColumnData {
  if (code === "A") {
    const values: string[] = [];
    for (let r = 0; r < rows; r++) {
      const start = r * rowBytes + offset;
      values.push(buf.toString("latin1", start, start + repeat).replace(/\0.*$/s, "").trim());
    }
    return { kind: "string", values };
  }
  // Complex types keep (re, im) pairs; descriptors and bits are not needed by any reader here.
  const per = code === "C" || code === "M" ? 2 * repeat : code === "X" || code === "P" || code === "Q" ? 0 : repeat;
  const values = new Float64Array(rows * per);
  const dv = new DataView(buf.buffer, buf.byteOffset, buf.byteLength);
  for (let r = 0; r < rows; r++) {
    let p = r * rowBytes + offset;
    for (let k = 0; k < per; k++) {
      let v: number;
      switch (code) {
        case "L": v = dv.getUint8(p) === 0x54 ? 1 : 0; p += 1; break;
        case "B": v = dv.getUint8(p); p += 1; break;
        case "I": v = dv.getInt16(p, false); p += 2; break;
        case "J": v = dv.getInt32(p, false); p += 4; break;
        case "K": v = Number(dv.getBigInt64(p, false)); p += 8; break;
        case "E": case "C": v = dv.getFloat32(p, false); p += 4; break;
        default: v = dv.getFloat64(p, false); p += 8; break; // D, M
      }
      values[r * per + k] = v;
    }
  }
  return { kind: "number", repeat: per, values };
}

/** A column to write: name, TFORM letter and repeat, values (row-major) or strings. */
export interface WriteColumn {
  name: string;
  code: "A" | "J" | "E" | "D";
  repeat: number;
  values: ArrayLike<number> | string[];
  unit?: string;
}

/** Bytes of one binary-table extension (header + padded data), big-endian. */
export function binaryTableBytes(extName: string, rows: number, columns: WriteColumn[], extraCards: [string, CardValue][]): Buffer {
  const widths = columns.map((c) => c.repeat * TYPE_BYTES[c.code]);
  const rowBytes = widths.reduce((a, b) => a + b, 0);
  const cards = [
    formatCard("XTENSION", "BINTABLE", "binary table extension"),
    formatCard("BITPIX", 8),
    formatCard("NAXIS", 2),
    formatCard("NAXIS1", rowBytes, "bytes per row"),
    formatCard("NAXIS2", rows, "rows"),
    formatCard("PCOUNT", 0),
    formatCard("GCOUNT", 1),
    formatCard("TFIELDS", columns.length),
    formatCard("EXTNAME", extName),
    formatCard("EXTVER", 1),
  ];
  columns.forEach((c, i) => {
    cards.push(formatCard(`TTYPE${i + 1}`, c.name));
    cards.push(formatCard(`TFORM${i + 1}`, `${c.repeat}${c.code}`));
    if (c.unit) cards.push(formatCard(`TUNIT${i + 1}`, c.unit));
  });
  for (const [k, v] of extraCards) cards.push(formatCard(k, v));
  const head = headerBytes(cards);
  const dataLen = Math.ceil((rowBytes * rows) / FITS_BLOCK) * FITS_BLOCK;
  const data = Buffer.alloc(dataLen, 0);
  let p = 0;
  for (let r = 0; r < rows; r++) {
    columns.forEach((c) => {
      if (c.code === "A") {
        const s = String((c.values as string[])[r] ?? "").slice(0, c.repeat).padEnd(c.repeat, " ");
        data.write(s, p, "latin1");
        p += c.repeat;
        return;
      }
      const vals = c.values as ArrayLike<number>;
      for (let k = 0; k < c.repeat; k++) {
        const v = vals[r * c.repeat + k];
        if (c.code === "J") data.writeInt32BE(v, p), (p += 4);
        else if (c.code === "E") data.writeFloatBE(v, p), (p += 4);
        else data.writeDoubleBE(v, p), (p += 8);
      }
    });
  }
  return Buffer.concat([head, data]);
}
