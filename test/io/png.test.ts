import { describe, it, expect } from "vitest";
import { crc32 as zlibCrc32, inflateSync } from "node:zlib";
import { encodePng, crc32 } from "../../src/io/png.js";
import { renderPng } from "../../src/io/render.js";
import { svgDocument, text } from "../../src/io/svg.js";
import { Rng } from "../../src/random.js";
import { decodePng } from "../pngDecode.js";

/** Split a PNG into chunks, checking each CRC with node:zlib's independent crc32 (Node ≥ 20.15). */
function chunks(png: Uint8Array): Array<{ type: string; data: Uint8Array }> {
  const view = new DataView(png.buffer, png.byteOffset, png.byteLength);
  const out: Array<{ type: string; data: Uint8Array }> = [];
  let pos = 8;
  while (pos < png.length) {
    const len = view.getUint32(pos);
    const type = String.fromCharCode(...png.subarray(pos + 4, pos + 8));
    const data = png.subarray(pos + 8, pos + 8 + len);
    const crc = view.getUint32(pos + 8 + len);
    expect(crc, `CRC of ${type}`).toBe(zlibCrc32(png.subarray(pos + 4, pos + 8 + len)));
    out.push({ type, data });
    pos += 12 + len;
  }
  return out;
}

describe("PNG encoder", () => {
  it("crc32 of '123456789' is 0xCBF43926 (the CRC-32 check value; PNG spec Annex D polynomial)", () => {
    expect(crc32(new TextEncoder().encode("123456789"))).toBe(0xcbf43926);
  });

  it("encodePng writes the signature, a correct IHDR, valid CRCs and IDAT that inflates to the pixels", () => {
    const w = 7, h = 5;
    const rng = new Rng(9);
    const px = new Uint8Array(w * h * 4).map(() => Math.floor(rng.uniform() * 256));
    const png = encodePng(px, w, h, 4);
    // PNG Specification §5.2: 137 80 78 71 13 10 26 10.
    expect(Array.from(png.subarray(0, 8))).toEqual([137, 80, 78, 71, 13, 10, 26, 10]);
    const cs = chunks(png);
    expect(cs.map((c) => c.type)).toEqual(["IHDR", "IDAT", "IEND"]);
    const ihdr = new DataView(cs[0].data.buffer, cs[0].data.byteOffset, 13);
    expect([ihdr.getUint32(0), ihdr.getUint32(4), cs[0].data[8], cs[0].data[9]]).toEqual([w, h, 8, 6]); // RGBA8 = colour type 6 (§11.2.2)
    const raw = inflateSync(cs[1].data);
    expect(raw.length).toBe(h * (1 + 4 * w));
    for (let y = 0; y < h; y++) {
      expect(raw[y * (1 + 4 * w)]).toBe(0); // filter type None on every row
      expect(Array.from(raw.subarray(y * (1 + 4 * w) + 1, (y + 1) * (1 + 4 * w)))).toEqual(Array.from(px.subarray(y * 4 * w, (y + 1) * 4 * w)));
    }
  });

  it("encodePng RGB (colour type 2) round-trips", () => {
    const px = Uint8Array.from([255, 0, 0, 0, 255, 0, 0, 0, 255]);
    const cs = chunks(encodePng(px, 3, 1, 3));
    expect(cs[0].data[9]).toBe(2);
    expect(Array.from(inflateSync(cs[1].data))).toEqual([0, ...px]);
  });

  it("rejects a pixel buffer of the wrong length", () => {
    expect(() => encodePng(new Uint8Array(10), 2, 2, 4)).toThrow(/PNG: 10 bytes given; expected width·height·channels = 16/);
  });

  it("renderPng rasterises an SVG with text to a PNG of the SVG's size, with dark text pixels", async () => {
    const svg = svgDocument(220, 60, text(10, 40, "ΔRA [″] Jy/beam", { sizePx: 20 }));
    const png = await renderPng(svg);
    const cs = chunks(png);
    const ihdr = new DataView(cs[0].data.buffer, cs[0].data.byteOffset, 13);
    expect([ihdr.getUint32(0), ihdr.getUint32(4)]).toEqual([220, 60]);
    // Decode the rasterised pixels ourselves (resvg writes filters other than None, so undo them).
    const pixels = decodePng(png).rgba;
    let dark = 0;
    for (let k = 0; k < pixels.length; k += 4) if (pixels[k] < 100 && pixels[k + 3] > 200) dark++;
    // 15 glyphs of 20 px: hundreds of dark pixels; a missing font would give none.
    expect(dark).toBeGreaterThan(200);
  });
});
