/**
 * SVG → PNG rasterisation with resvg (WebAssembly build). The wasm module is initialised once per
 * process from the installed package; the only font is DejaVu Sans from the `dejavu-fonts-ttf`
 * package, passed as a buffer with system fonts disabled, so a figure renders to the same pixels on
 * every machine.
 * Reference: resvg (https://github.com/RazrFalcon/resvg), @resvg/resvg-wasm 2.6 API.
 */
import { readFileSync } from "node:fs";
import { createRequire } from "node:module";
import { initWasm, Resvg } from "@resvg/resvg-wasm";
import { writeFileAtomic } from "./atomicWrite.js";
import { FONT_FAMILY } from "./svg.js";

let ready: Promise<Uint8Array> | undefined;

/** Initialise the wasm module and load the font, once; returns the font bytes. */
function init(): Promise<Uint8Array> {
  if (!ready) {
    ready = (async () => {
      const require = createRequire(import.meta.url);
      const wasmPath = require.resolve("@resvg/resvg-wasm/index_bg.wasm");
      const fontPath = require.resolve("dejavu-fonts-ttf/ttf/DejaVuSans.ttf");
      await initWasm(readFileSync(wasmPath));
      return new Uint8Array(readFileSync(fontPath));
    })();
    // A failed initialisation may be retried by a later call.
    ready.catch(() => {
      ready = undefined;
    });
  }
  return ready;
}

function rasterise<T>(svg: string, font: Uint8Array, scale: number, take: (img: { asPng(): Uint8Array; pixels: Uint8Array; width: number; height: number }) => T): T {
  const opts = {
    font: { fontBuffers: [font], loadSystemFonts: false, defaultFontFamily: FONT_FAMILY, sansSerifFamily: FONT_FAMILY },
    fitTo: scale === 1 ? ({ mode: "original" } as const) : ({ mode: "zoom", value: scale } as const),
    background: "#ffffff",
  };
  const resvg = new Resvg(svg, opts as ConstructorParameters<typeof Resvg>[1]);
  try {
    const img = resvg.render();
    try {
      return take(img);
    } finally {
      img.free();
    }
  } finally {
    resvg.free();
  }
}

/**
 * Rasterise an SVG document to PNG bytes at its own size (1 SVG px = 1 PNG pixel) times `scale`.
 * @param svg complete SVG document
 * @param scale zoom factor (default 1)
 * @returns PNG file bytes
 */
export async function renderPng(svg: string, scale = 1): Promise<Buffer> {
  const font = await init();
  return rasterise(svg, font, scale, (img) => Buffer.from(img.asPng()));
}

/** Rasterise to raw RGBA pixels (top row first), for checks on what a figure shows. */
export async function renderRgba(svg: string, scale = 1): Promise<{ width: number; height: number; pixels: Uint8Array }> {
  const font = await init();
  return rasterise(svg, font, scale, (img) => ({ width: img.width, height: img.height, pixels: new Uint8Array(img.pixels) }));
}

/** Render `svg` and write it to `path` atomically. */
export async function writePng(path: string, svg: string, scale = 1): Promise<void> {
  writeFileAtomic(path, await renderPng(svg, scale));
}

/** Write an SVG document to `path` atomically. */
export function writeSvg(path: string, svg: string): void {
  writeFileAtomic(path, svg);
}
