/**
 * A minimal PNG reader for the tests (8-bit RGB or RGBA, non-interlaced, all five filter types),
 * written from the PNG Specification (W3C, 2nd ed. 2003, §9.2 filters, §11.2.2 IHDR), so the
 * figures can be checked without trusting the encoder that wrote them.
 */
import { inflateSync } from "node:zlib";

export const PNG_SIGNATURE = [137, 80, 78, 71, 13, 10, 26, 10];

export interface DecodedPng {
  width: number;
  height: number;
  /** RGBA bytes, top row first. */
  rgba: Uint8Array;
}

export function decodePng(bytes: Uint8Array): DecodedPng {
  for (let k = 0; k < 8; k++) if (bytes[k] !== PNG_SIGNATURE[k]) throw new Error("not a PNG (bad signature)");
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  let pos = 8;
  let width = 0, height = 0, colourType = -1;
  const idat: Uint8Array[] = [];
  while (pos + 8 <= bytes.length) {
    const len = view.getUint32(pos);
    const type = String.fromCharCode(...bytes.subarray(pos + 4, pos + 8));
    const data = bytes.subarray(pos + 8, pos + 8 + len);
    if (type === "IHDR") {
      width = view.getUint32(pos + 8);
      height = view.getUint32(pos + 12);
      if (data[8] !== 8 || data[12] !== 0) throw new Error(`unsupported PNG: bit depth ${data[8]}, interlace ${data[12]}`);
      colourType = data[9];
    } else if (type === "IDAT") idat.push(data);
    else if (type === "IEND") break;
    pos += 12 + len;
  }
  const bpp = colourType === 6 ? 4 : colourType === 2 ? 3 : 0;
  if (bpp === 0) throw new Error(`unsupported PNG colour type ${colourType}`);
  const raw = inflateSync(Buffer.concat(idat));
  const stride = width * bpp;
  const px = new Uint8Array(height * stride);
  for (let y = 0; y < height; y++) {
    const f = raw[y * (stride + 1)];
    for (let x = 0; x < stride; x++) {
      const r = raw[y * (stride + 1) + 1 + x];
      const a = x >= bpp ? px[y * stride + x - bpp] : 0;
      const b = y > 0 ? px[(y - 1) * stride + x] : 0;
      const c = x >= bpp && y > 0 ? px[(y - 1) * stride + x - bpp] : 0;
      let pred = 0;
      if (f === 1) pred = a;
      else if (f === 2) pred = b;
      else if (f === 3) pred = (a + b) >> 1;
      else if (f === 4) {
        const p = a + b - c, pa = Math.abs(p - a), pb = Math.abs(p - b), pc = Math.abs(p - c);
        pred = pa <= pb && pa <= pc ? a : pb <= pc ? b : c;
      }
      px[y * stride + x] = (r + pred) & 0xff;
    }
  }
  if (bpp === 4) return { width, height, rgba: px };
  const rgba = new Uint8Array(width * height * 4);
  for (let k = 0; k < width * height; k++) {
    rgba[4 * k] = px[3 * k];
    rgba[4 * k + 1] = px[3 * k + 1];
    rgba[4 * k + 2] = px[3 * k + 2];
    rgba[4 * k + 3] = 255;
  }
  return { width, height, rgba };
}

/** Number of distinct RGB colours (capped at `cap`): a blank or uniform image has 1. */
export function distinctColours(img: DecodedPng, cap = 1000): number {
  const seen = new Set<number>();
  for (let k = 0; k < img.width * img.height && seen.size < cap; k++) {
    seen.add((img.rgba[4 * k] << 16) | (img.rgba[4 * k + 1] << 8) | img.rgba[4 * k + 2]);
  }
  return seen.size;
}
