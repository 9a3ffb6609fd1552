/**
 * HDF5 visibility files in arcfringe's own layout (docs/hdf5-layout.md), read and written with
 * h5wasm. One 1-D dataset per column of `Visibilities`, attributes for the metadata, data in
 * the INTERNAL sign convention (no conjugation).
 *
 * h5wasm works on an in-memory file system: the bytes are copied in, the file is opened, the
 * datasets are copied out to typed arrays, and the file is closed and unlinked. Because the
 * compiled HDF5 library can abort on corrupt input, the signature, the superblock and the
 * end-of-file address are checked first, and every dataset's declared size is checked against
 * the file size before it is read. Any exception from h5wasm becomes an InputError naming the
 * file.
 *
 * re_jy and im_jy stay float64 in the file (layout version 1 unchanged); in memory they are
 * float32 (types.ts), so writing widens exactly and reading rounds once.
 *
 * The HDF5 library runs in a worker thread (hdf5Guard.ts) with a time limit, so a file that
 * makes it loop or abort becomes an InputError instead of a hung or crashed program.
 *
 * Reference: HDF5 File Format Specification version 3.0 (The HDF Group), §II.A superblock.
 */
import { closeSync, fstatSync, openSync, readSync, writeFileSync } from "node:fs";
import { basename } from "node:path";
import type H5wasmLib from "h5wasm";
import { InputError } from "../errors.js";
import { allocate } from "./uvfits.js";
import { readHdf5 } from "./hdf5Guard.js";
import type { ReadReport, Visibilities } from "./types.js";

/** Layout name and version written to the root attributes `format` and `format_version`. */
export const HDF5_FORMAT = "arcfringe-visibilities";
export { readHdf5 };
export const HDF5_FORMAT_VERSION = 1;
export const HDF5_SIGN_CONVENTION =
  "internal: V = sum I exp(-2 pi i (u x + v y)), x East, y North, u v w in wavelengths of each entry's channel";

const SIGNATURE = [0x89, 0x48, 0x44, 0x46, 0x0d, 0x0a, 0x1a, 0x0a];
/** Largest file read [bytes]: the wasm heap holds the file and one copy of each dataset. */
const MAX_HDF5_BYTES = 1.5 * 1024 * 1024 * 1024;

type Column = "uLambda" | "vLambda" | "wLambda" | "reJy" | "imJy" | "weight" | "channel" | "antenna1" | "antenna2" | "timeS" | "correlation";
/** Dataset name ↔ Visibilities field, with the stored type (h5wasm dtype string). */
const COLUMNS: [string, Column, string][] = [
  ["u_lambda", "uLambda", "<d"],
  ["v_lambda", "vLambda", "<d"],
  ["w_lambda", "wLambda", "<f"],
  ["re_jy", "reJy", "<d"],
  ["im_jy", "imJy", "<d"],
  ["weight", "weight", "<d"],
  ["channel", "channel", "<H"],
  ["antenna1", "antenna1", "<H"],
  ["antenna2", "antenna2", "<H"],
  ["time_s", "timeS", "<d"],
  ["correlation", "correlation", "<b"],
];
const REQUIRED = new Set(["u_lambda", "v_lambda", "re_jy", "im_jy", "weight"]);

type H5Lib = typeof H5wasmLib;
type H5Module = Awaited<H5Lib["ready"]>;
let modulePromise: Promise<H5Module> | undefined;
/** The h5wasm library, loaded on first use (it instantiates a large wasm module). */
let h5wasm: H5Lib;
let tempCounter = 0;

/** The h5wasm module, ready, with errors thrown as exceptions rather than printed. */
async function h5(): Promise<H5Module> {
  modulePromise ??= import("h5wasm").then(async (mod) => {
    h5wasm = mod.default;
    const m = await h5wasm.ready;
    m.activate_throwing_error_handler();
    return m;
  });
  return modulePromise;
}

/** Check signature, superblock and end-of-file address; returns the file bytes. */
export function validateHdf5Bytes(bytes: Uint8Array, name: string): void {
  const n = bytes.length;
  let sig = -1;
  // The superblock sits at 0, 512, 1024, 2048, ... (after an optional user block).
  for (let off = 0; off + 8 <= n; off = off === 0 ? 512 : off * 2) {
    if (SIGNATURE.every((b, i) => bytes[off + i] === b)) {
      sig = off;
      break;
    }
  }
  if (sig < 0) throw new InputError(`${name}: no HDF5 signature found; the file is not HDF5 or is corrupt`);
  const need = (k: number): void => {
    if (sig + k > n) throw new InputError(`${name}: the HDF5 superblock is cut off (file ${n} bytes); the file is truncated`);
  };
  need(9);
  const version = bytes[sig + 8];
  let sizeOffsets: number;
  let eofPos: number;
  if (version === 0 || version === 1) {
    need(16);
    sizeOffsets = bytes[sig + 13];
    eofPos = sig + (version === 0 ? 24 : 28);
  } else if (version === 2 || version === 3) {
    need(12);
    sizeOffsets = bytes[sig + 9];
    eofPos = sig + 12;
  } else {
    throw new InputError(`${name}: HDF5 superblock version ${version} is unknown (0..3 expected); the file is corrupt or too new`);
  }
  if (sizeOffsets !== 4 && sizeOffsets !== 8) throw new InputError(`${name}: HDF5 superblock gives ${sizeOffsets}-byte offsets (4 or 8 expected); the file is corrupt`);
  // base address, then (v0/1: free-space address; v2/3: extension address), then end-of-file address
  const baseAt = eofPos;
  const eofAt = eofPos + 2 * sizeOffsets;
  need(eofAt + sizeOffsets - sig);
  const base = readUint(bytes, baseAt, sizeOffsets);
  const eof = readUint(bytes, eofAt, sizeOffsets);
  if (base + eof > n) {
    throw new InputError(`${name}: the HDF5 superblock says the file ends at byte ${base + eof} but it has ${n} bytes; the file is truncated`);
  }
}

function readUint(b: Uint8Array, at: number, size: number): number {
  let x = 0;
  for (let i = size - 1; i >= 0; i--) x = x * 256 + b[at + i];
  return x;
}

/**
 * Read an arcfringe HDF5 visibility file in this thread. A corrupt file can make the HDF5
 * library loop or abort, so prefer `readHdf5`, which runs this in a worker with a time limit.
 * @returns visibilities (internal sign convention) and what was kept or dropped.
 */
export async function readHdf5InThread(path: string): Promise<{ vis: Visibilities; report: ReadReport }> {
  const name = basename(path);
  const fd = openSync(path, "r");
  let bytes: Uint8Array;
  try {
    const size = fstatSync(fd).size;
    if (size > MAX_HDF5_BYTES) throw new InputError(`${name}: ${size} bytes exceeds the ${MAX_HDF5_BYTES}-byte limit of the HDF5 reader`);
    bytes = new Uint8Array(size);
    if (size > 0 && readSync(fd, bytes, 0, size, 0) !== size) throw new InputError(`${name}: could not read the whole file`);
  } finally {
    closeSync(fd);
  }
  validateHdf5Bytes(bytes, name);
  const M = await h5();
  const tmp = `/arcfringe-read-${process.pid}-${tempCounter++}.h5`;
  M.FS.writeFile(tmp, bytes);
  const fileSize = bytes.length;
  bytes = new Uint8Array(0); // let the JS copy go before the datasets are read
  let file: H5File | undefined;
  try {
    file = new h5wasm.File(tmp, "r");
    return readOpened(file, name, fileSize);
  } catch (e) {
    if (e instanceof InputError) throw e;
    const msg = e instanceof Error ? e.message : String(e);
    throw new InputError(`${name}: HDF5 library could not read the file (${firstLine(msg)}); the file is corrupt or not in the arcfringe layout`);
  } finally {
    try {
      file?.close();
    } catch {
      // a file that failed to open fully may not close; the unlink below still frees its bytes
    }
    try {
      M.FS.unlink(tmp);
    } catch {
      // already gone
    }
  }
}

function firstLine(s: string): string {
  const lines = s.split("\n").map((l) => l.trim()).filter((l) => l !== "" && !l.startsWith("HDF5-DIAG"));
  return (lines[0] ?? "unknown error").slice(0, 160);
}

type H5File = InstanceType<H5Lib["File"]>;
type H5Dataset = InstanceType<H5Lib["Dataset"]>;

function dataset(file: H5File, key: string, name: string, fileSize: number, expectLength?: number): H5Dataset | undefined {
  if (!file.keys().includes(key)) return undefined;
  const d = file.get(key);
  if (!(d instanceof h5wasm.Dataset)) throw new InputError(`${name}: /${key} is not a dataset; see docs/hdf5-layout.md`);
  const meta = d.metadata;
  const shape = meta.shape ?? [];
  if (shape.length !== 1) throw new InputError(`${name}: /${key} has shape [${shape.join(", ")}]; expected a 1-D dataset`);
  if (meta.vlen || (meta.type !== 0 && meta.type !== 1 && key !== "antenna_name")) {
    throw new InputError(`${name}: /${key} is not a numeric dataset; see docs/hdf5-layout.md`);
  }
  const bytes = shape[0] * meta.size;
  const filtered = d.filters.length > 0;
  // Uncompressed data cannot exceed the file; deflate cannot beat ~1032:1.
  if (!(bytes <= (filtered ? 1100 * fileSize : fileSize))) {
    throw new InputError(`${name}: /${key} declares ${shape[0]} values (${bytes} bytes) but the file has ${fileSize} bytes; the file is corrupt`);
  }
  if (expectLength !== undefined && shape[0] !== expectLength) {
    throw new InputError(`${name}: /${key} has ${shape[0]} values but /u_lambda has ${expectLength}; every column must have one value per visibility`);
  }
  return d;
}

function readOpened(file: H5File, name: string, fileSize: number): { vis: Visibilities; report: ReadReport } {
  const fmt = attr(file, "format");
  const notes: string[] = [];
  if (fmt !== HDF5_FORMAT) notes.push(`${name}: root attribute format is ${JSON.stringify(fmt)}, not ${HDF5_FORMAT}; reading the columns anyway`);
  const version = attr(file, "format_version");
  if (typeof version === "number" && version > HDF5_FORMAT_VERSION) {
    throw new InputError(`${name}: format_version ${version} is newer than this program reads (${HDF5_FORMAT_VERSION}); upgrade arcfringe`);
  }
  const uSet = dataset(file, "u_lambda", name, fileSize);
  if (!uSet) throw new InputError(`${name}: no /u_lambda dataset; not an arcfringe HDF5 visibility file (see docs/hdf5-layout.md)`);
  const n = uSet.shape![0];
  const raw = new Map<string, ArrayLike<number>>();
  for (const [key] of COLUMNS) {
    const d = key === "u_lambda" ? uSet : dataset(file, key, name, fileSize, n);
    if (!d) {
      if (REQUIRED.has(key)) throw new InputError(`${name}: required dataset /${key} is missing (see docs/hdf5-layout.md)`);
      continue;
    }
    const v = d.value;
    if (!ArrayBuffer.isView(v) || v instanceof BigInt64Array || v instanceof BigUint64Array) {
      throw new InputError(`${name}: /${key} could not be read as numbers`);
    }
    raw.set(key, v as unknown as ArrayLike<number>);
  }
  const fSet = dataset(file, "channel_freq_hz", name, fileSize);
  const freqs = fSet ? Float64Array.from(fSet.value as unknown as ArrayLike<number>) : new Float64Array([NaN]);
  if (!fSet) notes.push(`${name}: no /channel_freq_hz; the observing frequency is unknown`);
  if (freqs.length === 0 || freqs.length > 65535) throw new InputError(`${name}: /channel_freq_hz has ${freqs.length} values; expected 1..65535`);

  // Keep only usable entries, as the other readers do.
  const w = raw.get("weight")!;
  const re = raw.get("re_jy")!;
  const im = raw.get("im_jy")!;
  const a1 = raw.get("antenna1");
  const a2 = raw.get("antenna2");
  const ch = raw.get("channel");
  const corr = raw.get("correlation");
  let flagged = 0;
  let nonFinite = 0;
  let auto = 0;
  const keep = new Uint8Array(n);
  let kept = 0;
  for (let k = 0; k < n; k++) {
    if (w[k] <= 0) flagged++;
    else if (!(w[k] < Infinity) || !Number.isFinite(re[k]) || !Number.isFinite(im[k])) nonFinite++;
    else if (a1 && a2 && a1[k] === a2[k] && a1[k] !== 0) auto++;
    else {
      keep[k] = 1;
      kept++;
    }
  }
  if (ch) {
    for (let k = 0; k < n; k++) {
      if (keep[k] && ch[k] >= freqs.length) {
        throw new InputError(`${name}: /channel[${k}] = ${ch[k]} but /channel_freq_hz has ${freqs.length} channels`);
      }
    }
  }
  if (corr) {
    for (let k = 0; k < n; k++) {
      const c = corr[k];
      if (keep[k] && (c === 0 || c < -8 || c > 4)) throw new InputError(`${name}: /correlation[${k}] = ${c} is not an AIPS Stokes code (1..4, -1..-8)`);
    }
  }
  const vis = allocate(kept, freqs, 0, 0);
  for (const [key, field] of COLUMNS) {
    const src = raw.get(key);
    const dst = vis[field];
    if (!src) {
      if (field === "correlation") dst.fill(1);
      continue;
    }
    let j = 0;
    for (let k = 0; k < n; k++) if (keep[k]) dst[j++] = src[k];
  }
  for (let k = 0; k < kept; k++) {
    if (!Number.isFinite(vis.uLambda[k]) || !Number.isFinite(vis.vLambda[k]) || !Number.isFinite(vis.timeS[k])) {
      throw new InputError(`${name}: u_lambda, v_lambda or time_s of a kept entry is not finite; the file is corrupt`);
    }
  }
  vis.timeRefJd = numAttr(file, "time_ref_jd") ?? 0;
  vis.channelWidthHz = numAttr(file, "channel_width_hz") ?? 0;
  const pc = pairAttr(file, "phase_centre_deg");
  if (pc) vis.phaseCentreDeg = pc;
  const pp = pairAttr(file, "pointing_centre_deg");
  if (pp) vis.pointingCentreDeg = pp;
  const dish = numAttr(file, "dish_diameter_m");
  if (dish !== undefined && dish > 0) vis.dishDiameterM = dish;
  const cf = numAttr(file, "circular_feeds");
  if (cf !== undefined) vis.circularFeeds = cf !== 0;
  const tel = attr(file, "telescope");
  if (typeof tel === "string" && tel) vis.telescope = tel;
  const obj = attr(file, "object");
  if (typeof obj === "string" && obj) vis.objectName = obj;
  const ids = dataset(file, "antenna_id", name, fileSize);
  if (ids && file.keys().includes("antenna_name")) {
    const idv = ids.value as unknown as ArrayLike<number>;
    const names = file.get("antenna_name");
    // Only fixed-length strings (this layout); variable-length ones are skipped with a note.
    const fixed = names instanceof h5wasm.Dataset && names.metadata.type === 3 && !names.metadata.vlen && (names.shape?.length ?? 0) === 1;
    if (names instanceof h5wasm.Dataset && !fixed) notes.push(`${name}: /antenna_name is not a 1-D fixed-length string dataset; antenna names skipped`);
    const nv = fixed ? (names as H5Dataset).value : null;
    if (Array.isArray(nv) && nv.length === idv.length) {
      vis.antennaNames = new Map(Array.from(idv, (id, i) => [id, String(nv[i])]));
    }
  }
  return {
    vis,
    report: { format: "hdf5", entriesInFile: n, kept, droppedFlagged: flagged, droppedNonFinite: nonFinite, droppedAuto: auto, notes },
  };
}

function attr(file: H5File, key: string): unknown {
  if (!Object.prototype.hasOwnProperty.call(file.attrs, key)) return undefined;
  const v = file.get_attribute(key, false);
  if (ArrayBuffer.isView(v) && !(v instanceof DataView) && (v as ArrayLike<number>).length === 1) return (v as ArrayLike<number>)[0];
  return v;
}

function numAttr(file: H5File, key: string): number | undefined {
  const v = attr(file, key);
  const x = typeof v === "bigint" ? Number(v) : v;
  return typeof x === "number" && Number.isFinite(x) ? x : undefined;
}

function pairAttr(file: H5File, key: string): [number, number] | undefined {
  const v = attr(file, key);
  if (ArrayBuffer.isView(v) && (v as unknown as ArrayLike<number>).length === 2) {
    const a = v as unknown as ArrayLike<number>;
    if (Number.isFinite(a[0]) && Number.isFinite(a[1])) return [Number(a[0]), Number(a[1])];
  }
  return undefined;
}

/**
 * Write `vis` as an arcfringe HDF5 file (layout in docs/hdf5-layout.md) to `path` (overwritten).
 * Use `writeVisibilities` for an atomic write.
 */
export async function writeHdf5(path: string, vis: Visibilities): Promise<void> {
  const M = await h5();
  const tmp = `/arcfringe-write-${process.pid}-${tempCounter++}.h5`;
  const file = new h5wasm.File(tmp, "w");
  try {
    const scalar = (key: string, x: number): void => file.create_attribute(key, x, [], "<d");
    file.create_attribute("format", HDF5_FORMAT);
    file.create_attribute("format_version", HDF5_FORMAT_VERSION, [], "<i");
    file.create_attribute("sign_convention", HDF5_SIGN_CONVENTION);
    scalar("time_ref_jd", vis.timeRefJd);
    scalar("channel_width_hz", vis.channelWidthHz);
    if (vis.phaseCentreDeg) file.create_attribute("phase_centre_deg", Float64Array.from(vis.phaseCentreDeg));
    if (vis.pointingCentreDeg) file.create_attribute("pointing_centre_deg", Float64Array.from(vis.pointingCentreDeg));
    if (vis.dishDiameterM) scalar("dish_diameter_m", vis.dishDiameterM);
    if (vis.circularFeeds !== undefined) file.create_attribute("circular_feeds", vis.circularFeeds ? 1 : 0, [], "<i");
    if (vis.telescope) file.create_attribute("telescope", vis.telescope);
    if (vis.objectName) file.create_attribute("object", vis.objectName);
    for (const [key, field, dtype] of COLUMNS) {
      file.create_dataset({ name: key, data: vis[field], shape: [vis.count], dtype });
    }
    file.create_dataset({ name: "channel_freq_hz", data: vis.channelFreqHz, shape: [vis.channelFreqHz.length], dtype: "<d" });
    if (vis.antennaNames && vis.antennaNames.size > 0) {
      const ids = [...vis.antennaNames.keys()].sort((a, b) => a - b);
      file.create_dataset({ name: "antenna_id", data: Uint16Array.from(ids), shape: [ids.length], dtype: "<H" });
      // Fixed-length strings: no global heap, which is slow to fail on when corrupt.
      const names = ids.map((id) => vis.antennaNames!.get(id) ?? "");
      const width = Math.max(8, ...names.map((n) => Buffer.byteLength(n, "utf8")));
      file.create_dataset({ name: "antenna_name", data: names, dtype: `S${width}` });
    }
  } finally {
    file.close();
  }
  try {
    const bytes = M.FS.readFile(tmp);
    writeFileSync(path, bytes);
  } finally {
    M.FS.unlink(tmp);
  }
}
