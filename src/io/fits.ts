/**
 * FITS images and cubes (primary HDU only) with a celestial WCS, written and read.
 *
 * Layout: the data array is stored as in memory on the model grid of CONVENTIONS.md — column i
 * (x, fastest) then row j (y) then channel. FITS axis 1 is the column, axis 2 the row, axis 3 the
 * spectral channel. With CRPIX = N/2 + 1 and CDELT1 = −Δ, FITS pixel p1 = i + 1 sits at
 * x = (p1 − CRPIX1)·CDELT1 = (N/2 − i)·Δ, the model-grid x: column 0 (East) is the first FITS
 * pixel, drawn at the left by FITS viewers. Rows: y = (j − N/2)·Δ with CDELT2 = +Δ, row 0 South.
 *
 * Sky images use `RA---SIN` / `DEC--SIN` (the SIN projection's plane coordinates are the direction
 * cosines l, m, which is what the measurement equation's x, y are), CUNIT 'deg'.
 * Source-plane images are not on the sky: they use the linear axes `XOFFSET` / `YOFFSET` in
 * arcsec from the source-plane origin (CRVAL 0), with the same orientation (x East, CDELT1 < 0),
 * so a source-plane map is displayed like a sky map. Names without a 4-3 projection code are
 * linear axes to WCS readers.
 *
 * Reference: FITS Standard 4.0 (2016); Greisen & Calabretta 2002, A&A 395, 1061 (WCS paper I);
 * Calabretta & Greisen 2002, A&A 395, 1077 (paper II, SIN); Greisen et al. 2006, A&A 446, 747
 * (paper III, spectral axes FREQ/VRAD, SPECSYS, RESTFRQ).
 */
import { readFileSync } from "node:fs";
import { InputError } from "../errors.js";
import { RAD_TO_DEG } from "../units.js";
import { writeFileAtomic } from "./atomicWrite.js";
import {
  BLOCK_LENGTH, CARD_LENGTH, formatCard, formatTextCards, headerNumber, headerString, headerValue,
  parseHeader, type FitsCard, type FitsHeader,
} from "./fitsHeader.js";

/** Where the image lies: on the sky (SIN projection about a phase centre) or in the source plane. */
export type FitsCelestial =
  | { kind: "sky"; raDeg: number; decDeg: number; radesys?: "ICRS" | "FK5" }
  | { kind: "offset" };

/** Spectral third axis of a cube (WCS paper III). */
export interface FitsSpectralAxis {
  /** 'FREQ' (values in Hz) or 'VRAD' (radio velocity, values in m/s). */
  type: "FREQ" | "VRAD";
  /** Value at the reference channel [Hz or m/s]. */
  refValue: number;
  /** Increment per channel [Hz or m/s]. */
  delta: number;
  /** 1-based reference channel (default 1). */
  refChannel?: number;
  /** Spectral reference frame, e.g. 'LSRK', 'BARYCENT', 'TOPOCENT' (default 'LSRK'). */
  specsys?: string;
  /** Rest frequency of the line [Hz]; required for VRAD. */
  restFreqHz?: number;
}

/** Restoring or synthesised beam, FITS convention (position angle North through East). */
export interface FitsBeam {
  bmajArcsec: number;
  bminArcsec: number;
  bpaDeg: number;
}

/** Everything needed to write one image or cube. */
export interface FitsImageSpec {
  /** Pixel values, column fastest, then row, then channel; NaN allowed (blank pixels). */
  data: Float64Array | Float32Array;
  /** Columns (x) and rows (y). */
  nx: number;
  ny: number;
  /** Channels (cube) — omit or 1 with no `spectral` for a 2-D image. */
  nChannels?: number;
  /** Pixel size Δ [arcsec] (square pixels). */
  cellArcsec: number;
  celestial: FitsCelestial;
  /** Brightness unit, e.g. 'Jy/beam', 'Jy/pixel', 'Jy/arcsec2'. */
  bunit: string;
  beam?: FitsBeam;
  spectral?: FitsSpectralAxis;
  objectName?: string;
  /** −32 (float32, default) or −64 (float64). */
  bitpix?: -32 | -64;
  /** DATE card value (default: now). Fix it for byte-identical output. */
  date?: Date;
  history?: string[];
  comments?: string[];
  /** Further keyword cards, appended before HISTORY. */
  extraCards?: FitsCard[];
}

/** A FITS primary image as read back. */
export interface FitsImage {
  header: FitsHeader;
  /** NAXIS1, NAXIS2, ... */
  shape: number[];
  /** Physical values (BSCALE/BZERO applied, BLANK → NaN), axis 1 fastest. */
  data: Float64Array;
  bitpix: number;
}

/** Linear WCS of one axis as read from the header. */
export interface FitsAxisWcs {
  ctype: string;
  cunit: string;
  crval: number;
  cdelt: number;
  crpix: number;
}

/**
 * Encode an image or cube as FITS bytes (header and data padded to 2880-byte blocks).
 * @returns the file contents
 * Reference: FITS Standard 4.0, §3–5; WCS papers I–III.
 */
export function encodeFitsImage(spec: FitsImageSpec): Uint8Array {
  const nz = spec.nChannels ?? 1;
  const isCube = spec.spectral !== undefined;
  if (!isCube && nz !== 1) {
    throw new InputError(`FITS image: ${nz} channels given without a spectral axis; pass spec.spectral for a cube`);
  }
  for (const [name, n] of [["nx", spec.nx], ["ny", spec.ny], ["nChannels", nz]] as const) {
    if (!Number.isInteger(n) || n < 1) throw new InputError(`FITS image: ${name} = ${n}; must be a positive integer`);
  }
  const count = spec.nx * spec.ny * nz;
  if (spec.data.length !== count) {
    throw new InputError(`FITS image: data has ${spec.data.length} values; expected nx·ny·nChannels = ${count}`);
  }
  if (!(spec.cellArcsec > 0)) throw new InputError(`FITS image: cellArcsec = ${spec.cellArcsec}; must be > 0`);
  const bitpix = spec.bitpix ?? -32;

  const cards: FitsCard[] = [
    { keyword: "SIMPLE", value: true, comment: "conforms to FITS standard" },
    { keyword: "BITPIX", value: bitpix, integer: true, comment: bitpix === -32 ? "IEEE single precision" : "IEEE double precision" },
    { keyword: "NAXIS", value: isCube ? 3 : 2, integer: true },
    { keyword: "NAXIS1", value: spec.nx, integer: true },
    { keyword: "NAXIS2", value: spec.ny, integer: true },
  ];
  if (isCube) cards.push({ keyword: "NAXIS3", value: nz, integer: true });
  cards.push({ keyword: "EXTEND", value: true });
  cards.push({ keyword: "BUNIT", value: spec.bunit, comment: "brightness unit" });
  if (spec.beam) {
    cards.push({ keyword: "BMAJ", value: spec.beam.bmajArcsec / 3600, comment: "beam major axis FWHM [deg]" });
    cards.push({ keyword: "BMIN", value: spec.beam.bminArcsec / 3600, comment: "beam minor axis FWHM [deg]" });
    cards.push({ keyword: "BPA", value: spec.beam.bpaDeg, comment: "beam position angle, N through E [deg]" });
  }
  const cellDeg = spec.cellArcsec / 3600;
  const crpix1 = Math.floor(spec.nx / 2) + 1;
  const crpix2 = Math.floor(spec.ny / 2) + 1;
  if (spec.celestial.kind === "sky") {
    const { raDeg, decDeg } = spec.celestial;
    if (!Number.isFinite(raDeg) || !(Math.abs(decDeg) <= 90)) {
      throw new InputError(`FITS image: phase centre (${raDeg}, ${decDeg}) deg is not a valid RA/Dec`);
    }
    cards.push(
      { keyword: "CTYPE1", value: "RA---SIN", comment: "x toward East, SIN projection" },
      { keyword: "CRVAL1", value: ((raDeg % 360) + 360) % 360, comment: "phase centre RA [deg]" },
      { keyword: "CDELT1", value: -cellDeg, comment: "negative: East to the left [deg]" },
      { keyword: "CRPIX1", value: crpix1 },
      { keyword: "CUNIT1", value: "deg" },
      { keyword: "CTYPE2", value: "DEC--SIN" },
      { keyword: "CRVAL2", value: decDeg, comment: "phase centre Dec [deg]" },
      { keyword: "CDELT2", value: cellDeg },
      { keyword: "CRPIX2", value: crpix2 },
      { keyword: "CUNIT2", value: "deg" },
    );
  } else {
    cards.push(
      { keyword: "CTYPE1", value: "XOFFSET", comment: "source-plane x (East) offset" },
      { keyword: "CRVAL1", value: 0 },
      { keyword: "CDELT1", value: -spec.cellArcsec, comment: "negative: East to the left [arcsec]" },
      { keyword: "CRPIX1", value: crpix1 },
      { keyword: "CUNIT1", value: "arcsec" },
      { keyword: "CTYPE2", value: "YOFFSET", comment: "source-plane y (North) offset" },
      { keyword: "CRVAL2", value: 0 },
      { keyword: "CDELT2", value: spec.cellArcsec },
      { keyword: "CRPIX2", value: crpix2 },
      { keyword: "CUNIT2", value: "arcsec" },
    );
  }
  if (spec.spectral) {
    const s = spec.spectral;
    if (!Number.isFinite(s.refValue) || !Number.isFinite(s.delta) || s.delta === 0) {
      throw new InputError(`FITS cube: spectral axis refValue ${s.refValue}, delta ${s.delta}; both must be finite, delta non-zero`);
    }
    if (s.type === "VRAD" && !(s.restFreqHz && s.restFreqHz > 0)) {
      throw new InputError("FITS cube: a VRAD axis needs restFreqHz > 0 (the rest frequency of the line)");
    }
    cards.push(
      { keyword: "CTYPE3", value: s.type },
      { keyword: "CRVAL3", value: s.refValue },
      { keyword: "CDELT3", value: s.delta },
      { keyword: "CRPIX3", value: s.refChannel ?? 1 },
      { keyword: "CUNIT3", value: s.type === "FREQ" ? "Hz" : "m/s" },
      { keyword: "SPECSYS", value: s.specsys ?? "LSRK", comment: "spectral reference frame" },
    );
    if (s.restFreqHz) cards.push({ keyword: "RESTFRQ", value: s.restFreqHz, comment: "rest frequency [Hz]" });
  }
  if (spec.celestial.kind === "sky") {
    const radesys = spec.celestial.radesys ?? "ICRS";
    cards.push({ keyword: "RADESYS", value: radesys });
    // Equinox of the mean equator; meaningful for FK5, conventional (J2000) for ICRS.
    cards.push({ keyword: "EQUINOX", value: 2000 });
  }
  if (spec.objectName) cards.push({ keyword: "OBJECT", value: spec.objectName });
  cards.push({ keyword: "ORIGIN", value: "arcfringe" });
  cards.push({ keyword: "DATE", value: (spec.date ?? new Date()).toISOString().slice(0, 19), comment: "UTC date of writing" });
  for (const c of spec.extraCards ?? []) cards.push(c);

  const lines: string[] = cards.map(formatCard);
  for (const h of spec.history ?? []) lines.push(...formatTextCards("HISTORY", h));
  for (const c of spec.comments ?? []) lines.push(...formatTextCards("COMMENT", c));
  lines.push("END".padEnd(CARD_LENGTH));

  const headerBytes = Math.ceil((lines.length * CARD_LENGTH) / BLOCK_LENGTH) * BLOCK_LENGTH;
  const bytesPer = bitpix === -32 ? 4 : 8;
  const dataBytes = Math.ceil((count * bytesPer) / BLOCK_LENGTH) * BLOCK_LENGTH;
  const out = new Uint8Array(headerBytes + dataBytes);
  out.fill(32, 0, headerBytes); // header padding is ASCII blanks; data padding stays zero
  let pos = 0;
  for (const line of lines) {
    for (let k = 0; k < CARD_LENGTH; k++) out[pos + k] = line.charCodeAt(k);
    pos += CARD_LENGTH;
  }
  const view = new DataView(out.buffer, headerBytes, count * bytesPer);
  const d = spec.data;
  // FITS data are big-endian (Standard §5.3); DataView writes big-endian by default.
  if (bitpix === -32) for (let k = 0; k < count; k++) view.setFloat32(4 * k, d[k]);
  else for (let k = 0; k < count; k++) view.setFloat64(8 * k, d[k]);
  return out;
}

/**
 * Write an image or cube to `path` atomically (temporary file + rename).
 * Reference: see {@link encodeFitsImage}.
 */
export function writeFitsImage(path: string, spec: FitsImageSpec): void {
  writeFileAtomic(path, encodeFitsImage(spec));
}

/**
 * Decode the primary HDU of FITS bytes: header and data (BITPIX 8, 16, 32, 64, −32, −64;
 * BSCALE/BZERO applied; integer BLANK → NaN).
 * @param where file name used in error messages
 * Reference: FITS Standard 4.0, §4.4 and §5.
 */
export function decodeFitsImage(bytes: Uint8Array, where: string): FitsImage {
  if (bytes.length < BLOCK_LENGTH || String.fromCharCode(...bytes.subarray(0, 6)) !== "SIMPLE") {
    throw new InputError(`${where}: not a FITS file (no SIMPLE card in the first 2880 bytes); give a FITS image`);
  }
  const { header, dataOffset } = parseHeader(bytes, 0, where);
  const bitpix = headerNumber(header, "BITPIX", where);
  const naxis = headerNumber(header, "NAXIS", where);
  if (![8, 16, 32, 64, -32, -64].includes(bitpix)) {
    throw new InputError(`${where}: BITPIX = ${bitpix}; FITS allows 8, 16, 32, 64, -32, -64`);
  }
  if (naxis < 1) throw new InputError(`${where}: NAXIS = ${naxis}; the primary HDU holds no image`);
  const shape: number[] = [];
  let count = 1;
  for (let k = 1; k <= naxis; k++) {
    const n = headerNumber(header, `NAXIS${k}`, where);
    shape.push(n);
    count *= n;
  }
  const bytesPer = Math.abs(bitpix) / 8;
  if (dataOffset + count * bytesPer > bytes.length) {
    throw new InputError(
      `${where}: header declares ${count * bytesPer} data bytes but the file holds ${bytes.length - dataOffset}; the file is truncated`,
    );
  }
  const bscale = headerNumber(header, "BSCALE", where, 1);
  const bzero = headerNumber(header, "BZERO", where, 0);
  const blankValue = headerValue(header, "BLANK");
  const blank = typeof blankValue === "number" ? blankValue : undefined;
  const view = new DataView(bytes.buffer, bytes.byteOffset + dataOffset, count * bytesPer);
  const data = new Float64Array(count);
  for (let k = 0; k < count; k++) {
    let raw: number;
    switch (bitpix) {
      case -32: raw = view.getFloat32(4 * k); break;
      case -64: raw = view.getFloat64(8 * k); break;
      case 8: raw = view.getUint8(k); break;
      case 16: raw = view.getInt16(2 * k); break;
      case 32: raw = view.getInt32(4 * k); break;
      default: raw = Number(view.getBigInt64(8 * k));
    }
    data[k] = bitpix > 0 && raw === blank ? NaN : bzero + bscale * raw;
  }
  return { header, shape, data, bitpix };
}

/** Read the primary HDU of a FITS file (see {@link decodeFitsImage}). */
export function readFitsImage(path: string): FitsImage {
  let bytes: Uint8Array;
  try {
    bytes = readFileSync(path);
  } catch (err) {
    throw new InputError(`${path}: cannot read (${(err as NodeJS.ErrnoException).code ?? String(err)}); check the path`);
  }
  return decodeFitsImage(bytes, path);
}

/**
 * The linear WCS of axis `axis` (1-based): CTYPE, CUNIT, CRVAL, CDELT, CRPIX. A diagonal CD
 * matrix is accepted in place of CDELT; rotated axes (off-diagonal PC/CD terms) are refused.
 */
export function axisWcs(header: FitsHeader, axis: number, where: string): FitsAxisWcs {
  const n = headerNumber(header, "NAXIS", where);
  for (let k = 1; k <= n; k++) {
    if (k === axis) continue;
    for (const pre of ["PC", "CD"]) {
      const a = headerValue(header, `${pre}${axis}_${k}`);
      const b = headerValue(header, `${pre}${k}_${axis}`);
      if ((typeof a === "number" && a !== 0) || (typeof b === "number" && b !== 0)) {
        throw new InputError(`${where}: axis ${axis} is rotated (${pre} matrix off-diagonal terms); only unrotated images are read`);
      }
    }
  }
  const cd = headerValue(header, `CD${axis}_${axis}`);
  const pc = headerValue(header, `PC${axis}_${axis}`);
  let cdelt = headerNumber(header, `CDELT${axis}`, where, typeof cd === "number" ? cd : 1);
  if (typeof pc === "number") cdelt *= pc;
  return {
    ctype: headerString(header, `CTYPE${axis}`) ?? "",
    cunit: headerString(header, `CUNIT${axis}`) ?? "",
    crval: headerNumber(header, `CRVAL${axis}`, where, 0),
    cdelt,
    crpix: headerNumber(header, `CRPIX${axis}`, where, 0),
  };
}

/** The beam from BMAJ/BMIN/BPA (degrees in the header), or undefined when absent. */
export function headerBeam(header: FitsHeader): FitsBeam | undefined {
  const bmaj = headerValue(header, "BMAJ");
  const bmin = headerValue(header, "BMIN");
  const bpa = headerValue(header, "BPA");
  if (typeof bmaj !== "number" || typeof bmin !== "number") return undefined;
  return { bmajArcsec: bmaj * 3600, bminArcsec: bmin * 3600, bpaDeg: typeof bpa === "number" ? bpa : 0 };
}

/**
 * Sky position [deg] of the direction with offsets (x East, y North) [rad] from the phase centre,
 * by the exact inverse of the SIN (orthographic) projection: x, y are direction cosines l, m.
 * @param xRad East offset l [rad], yRad North offset m [rad]; l² + m² ≤ 1
 * @returns [raDeg in [0, 360), decDeg]
 * Reference: Calabretta & Greisen 2002, A&A 395, 1077, §5.1.5 (SIN) with the spherical rotation
 * of §2.3; equivalently Thompson, Moran & Swenson 2017, eq. 3.3 (l, m direction cosines).
 */
export function sinOffsetToSkyDeg(xRad: number, yRad: number, raDeg: number, decDeg: number): [number, number] {
  const n = Math.sqrt(1 - xRad * xRad - yRad * yRad);
  const dec0 = decDeg / RAD_TO_DEG;
  const sd = Math.sin(dec0);
  const cd = Math.cos(dec0);
  const dec = Math.asin(yRad * cd + n * sd);
  const dra = Math.atan2(xRad, n * cd - yRad * sd);
  const ra = (((raDeg + dra * RAD_TO_DEG) % 360) + 360) % 360;
  return [ra, dec * RAD_TO_DEG];
}

/** Offsets (x East, y North) [arcsec] of model-grid pixel (i, j) on an N×N grid of cell Δ [arcsec]. */
export function gridPixelOffsetArcsec(i: number, j: number, n: number, cellArcsec: number): [number, number] {
  return [(n / 2 - i) * cellArcsec, (j - n / 2) * cellArcsec];
}
