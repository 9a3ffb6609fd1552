/**
 * A small PNG encoder: 8-bit RGB or RGBA, no interlace, filter type 0 on every row, one zlib
 * IDAT chunk (node:zlib deflate). Used for raster maps embedded in SVG figures and for direct
 * PNG output of images.
 * Reference: PNG Specification, 2nd ed. (W3C Recommendation 2003; ISO/IEC 15948), §5 (chunks),
 * §11.2.2 (IHDR), Annex D (CRC-32, polynomial 0xEDB88320).
 */
import { deflateSync } from "node:zlib";
import { InputError } from "../errors.js";

const CRC_TABLE = (() => {
  const t = new Uint32Array(256);
  for (let n = 0; n < 256; n++) {
    let c = n;
    for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
    t[n] = c >>> 0;
  }
  return t;
})();

/**
 * CRC-32 of `bytes` (the PNG/zlib polynomial), optionally continuing from a previous value.
 * Reference: PNG Specification Annex D.
 */
export function crc32(bytes: Uint8Array, previous = 0): number {
  let c = (previous ^ 0xffffffff) >>> 0;
  for (let i = 0; i < bytes.length; i++) c = CRC_TABLE[(c ^ bytes[i]) & 0xff] ^ (c >>> 8);
  return (c ^ 0xffffffff) >>> 0;
}

const SIGNATURE = Uint8Array.from([137, 80, 78, 71, 13, 10, 26, 10]);

function chunk(type: string, data: Uint8Array): Uint8Array {
  const out = new Uint8Array(12 + data.length);
  const view = new DataView(out.buffer);
  view.setUint32(0, data.length);
  for (let k = 0; k < 4; k++) out[4 + k] = type.charCodeAt(k);
  out.set(data, 8);
  // The CRC covers the chunk type and data, not the length (§5.3).
  view.setUint32(8 + data.length, crc32(out.subarray(4, 8 + data.length)));
  return out;
}

/**
 * Encode pixels as a PNG file.
 * @param pixels row-major from the TOP row, `channels` bytes per pixel (R, G, B[, A])
 * @param width, height in pixels
 * @param channels 3 (RGB) or 4 (RGBA)
 * @returns the PNG file bytes
 * Reference: PNG Specification, 2nd ed., §11.2.2 (IHDR: colour type 2 = RGB, 6 = RGBA).
 */
export function encodePng(pixels: Uint8Array, width: number, height: number, channels: 3 | 4 = 4): Buffer {
  if (!Number.isInteger(width) || !Number.isInteger(height) || width < 1 || height < 1) {
    throw new InputError(`PNG: size ${width}×${height} must be positive integers`);
  }
  if (pixels.length !== width * height * channels) {
    throw new InputError(`PNG: ${pixels.length} bytes given; expected width·height·channels = ${width * height * channels}`);
  }
  const ihdr = new Uint8Array(13);
  const hv = new DataView(ihdr.buffer);
  hv.setUint32(0, width);
  hv.setUint32(4, height);
  ihdr[8] = 8; // bit depth
  ihdr[9] = channels === 4 ? 6 : 2; // colour type
  ihdr[10] = 0; // compression: deflate
  ihdr[11] = 0; // filter method 0
  ihdr[12] = 0; // no interlace
  const stride = width * channels;
  const raw = new Uint8Array((stride + 1) * height);
  for (let y = 0; y < height; y++) {
    raw[y * (stride + 1)] = 0; // filter type None
    raw.set(pixels.subarray(y * stride, (y + 1) * stride), y * (stride + 1) + 1);
  }
  const idat = deflateSync(raw, { level: 6 });
  return Buffer.concat([SIGNATURE, chunk("IHDR", ihdr), chunk("IDAT", idat), chunk("IEND", new Uint8Array(0))]);
}
