import { describe, it, expect } from "vitest";
import { mkdtempSync, readFileSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { imagePanel, gridExtentArcsec } from "../../src/io/imagePanel.js";
import { xyPanel } from "../../src/io/xyPanel.js";
import { cornerPlot, massLevel } from "../../src/io/cornerPlot.js";
import { composeFigure, sharedScaleImages } from "../../src/io/layout.js";
import { panelDocument } from "../../src/io/svg.js";
import { renderRgba, writePng } from "../../src/io/render.js";
import { VIRIDIS, COOLWARM, colourHex } from "../../src/io/colormap.js";
import { niceTicks, logTicks } from "../../src/io/ticks.js";
import { Rng } from "../../src/random.js";
import { expectAbs } from "../helpers.js";

const N = 32, CELL = 0.1;

/** Image on the model grid (column i at x = (N/2 − i)Δ East, row j at y = (j − N/2)Δ North) with one bright pixel. */
function pointImage(xArcsec: number, yArcsec: number): Float64Array {
  const d = new Float64Array(N * N);
  d[(N / 2 + Math.round(yArcsec / CELL)) * N + (N / 2 - Math.round(xArcsec / CELL))] = 1;
  return d;
}

/** Mean brightness (R+G+B) of the rendered pixel at panel coordinates (x, y). */
function brightness(img: { width: number; pixels: Uint8Array }, x: number, y: number): number {
  const o = 4 * (Math.round(y) * img.width + Math.round(x));
  return img.pixels[o] + img.pixels[o + 1] + img.pixels[o + 2];
}

describe("figures", () => {
  it("viridis runs from #440154 to #fde725 and cool–warm is grey at the centre (matplotlib's published maps, from memory)", () => {
    expect(colourHex(VIRIDIS, 0)).toBe("#440154");
    expect(colourHex(VIRIDIS, 1)).toBe("#fde725");
    expect(colourHex(COOLWARM, 0)).toBe("#3b4cc0"); // Moreland 2009 cool end (59, 76, 192)
    expect(colourHex(COOLWARM, 1)).toBe("#b40426"); // warm end (180, 4, 38)
    expect(colourHex(COOLWARM, 0.5)).toBe("#dddcdc");
  });

  it("niceTicks and logTicks give steps of 1, 2, 5 × 10^k (Heckbert 1990)", () => {
    expect(niceTicks(0, 1, 5).map((v) => Number(v.toFixed(10)))).toEqual([0, 0.2, 0.4, 0.6, 0.8, 1]);
    // Range 3.2 over 8 ticks → raw step 0.4 → nice step 0.5; reversed bounds are accepted.
    expect(niceTicks(1.6, -1.6, 8)).toEqual([-1.5, -1, -0.5, 0, 0.5, 1, 1.5]);
    expect(logTicks(10, 1e4)).toEqual([10, 100, 1000, 10000]);
  });

  it("imagePanel draws East on the LEFT and North UP (CONVENTIONS.md)", async () => {
    // A bright pixel 1″ East, 0″ North, and another 0″ East, 1″ North, on a dark background.
    const d = pointImage(1, 0);
    const north = pointImage(0, 1);
    for (let k = 0; k < d.length; k++) d[k] += north[k];
    const p = imagePanel({ data: d, nx: N, ny: N, extentArcsec: gridExtentArcsec(N, CELL), colourBar: false, mapWidthPx: 320 });
    const img = await renderRgba(panelDocument(p));
    expect(img.width).toBe(Math.ceil(p.widthPx));
    const { x, y, width, height } = p.mapBoxPx;
    const scale = width / (N * CELL); // px per arcsec
    // Pixel (N/2, N/2) is at x = y = 0; the left edge of the map is x = (N/2 + 0.5)Δ and the top
    // edge y = (N/2 − 0.5)Δ, so the phase centre is that far (in px) from the map's top-left corner.
    const centreX = x + (N / 2 + 0.5) * CELL * scale;
    const centreY = y + (N / 2 - 0.5) * CELL * scale;
    expect(height).toBeCloseTo(width, 6);
    const eastX = centreX - 1 * scale, westX = centreX + 1 * scale;
    const northY = centreY - 1 * scale, southY = centreY + 1 * scale;
    // viridis(1) is bright yellow (sum ≈ 513), viridis(0) dark purple (sum ≈ 153): threshold 400.
    expect(brightness(img, eastX, centreY)).toBeGreaterThan(400);
    expect(brightness(img, westX, centreY)).toBeLessThan(400);
    expect(brightness(img, centreX, northY)).toBeGreaterThan(400);
    expect(brightness(img, centreX, southY)).toBeLessThan(400);
  });

  it("the beam ellipse at BPA 45° (North through East) is elongated toward the upper LEFT", async () => {
    const p = imagePanel({
      data: new Float64Array(N * N), nx: N, ny: N, extentArcsec: gridExtentArcsec(N, CELL), colourBar: false, mapWidthPx: 320,
      beam: { bmajArcsec: 1.2, bminArcsec: 0.3, bpaDeg: 45 },
    });
    const img = await renderRgba(panelDocument(p));
    const { x, y, height, width } = p.mapBoxPx;
    const scale = width / (N * CELL);
    const r = 0.6 * scale; // semi-major axis [px]; the ellipse centre sits r + 6 px from the corner
    const cx = x + 6 + r, cy = y + height - 6 - r;
    const d = 0.7 * r / Math.SQRT2; // a point 0.7 r along a diagonal
    const bg = brightness(img, x + width / 2, y + height / 2); // constant map colour
    // Along NE (screen up-left) the point is inside the lighter ellipse; along NW (up-right) outside.
    expect(brightness(img, cx - d, cy - d)).toBeGreaterThan(bg + 60);
    expect(Math.abs(brightness(img, cx + d, cy - d) - bg)).toBeLessThan(10);
  });

  it("NaN-only and constant images produce valid SVG without NaN coordinates", async () => {
    for (const fill of [NaN, 3.5, 0]) {
      const p = imagePanel({ data: new Float64Array(N * N).fill(fill), nx: N, ny: N, extentArcsec: gridExtentArcsec(N, CELL), unit: "Jy/beam" });
      expect(p.svg).not.toMatch(/NaN|Infinity/);
      const img = await renderRgba(panelDocument(p));
      expect(img.width).toBeGreaterThan(300);
    }
    const xy = xyPanel({ series: [{ x: [1, 2, NaN], y: [NaN, NaN, NaN] }], xLog: true });
    expect(xy.svg).not.toMatch(/NaN|Infinity/);
  });

  it("a multi-panel figure (three maps on one scale, an x–y panel, a corner plot) renders to a PNG of the composed size", async () => {
    const dir = mkdtempSync(join(tmpdir(), "arcfringe-fig-"));
    const ext = gridExtentArcsec(N, CELL);
    const a = pointImage(0.5, 0.2), b = pointImage(-0.3, 0.1);
    const resid = a.map((v, k) => v - b[k]);
    const maps = sharedScaleImages([
      { data: a, nx: N, ny: N, extentArcsec: ext, title: "data", unit: "Jy/beam", mapWidthPx: 160 },
      { data: b, nx: N, ny: N, extentArcsec: ext, title: "model", unit: "Jy/beam", mapWidthPx: 160 },
      { data: resid, nx: N, ny: N, extentArcsec: ext, title: "residual", unit: "Jy/beam", mapWidthPx: 160, colourMap: "coolwarm" },
    ], { symmetric: true });
    const rng = new Rng(2);
    const s1 = new Float64Array(2000).map(() => rng.normal()), s2 = new Float64Array(2000).map(() => 2 + 0.5 * rng.normal());
    const corner = cornerPlot({ samples: [s1, s2], names: ["a", "b"], truths: [0, 2], cellPx: 100 });
    const xy = xyPanel({ series: [{ x: [1, 10, 100], y: [3, 2, 1], yErr: [0.1, 0.2, 0.3], label: "amp" }], xLog: true, xLabel: "uv [kλ]", yLabel: "Jy" });
    const svg = composeFigure([...maps, xy, corner], { columns: 3, title: "figure test" });
    const path = join(dir, "fig.png");
    await writePng(path, svg);
    const png = readFileSync(path);
    const w = Number(/width="(\d+)"/.exec(svg)![1]), h = Number(/height="(\d+)"/.exec(svg)![1]);
    // IHDR width/height at bytes 16–23 (PNG Specification §11.2.2).
    expect([png.readUInt32BE(16), png.readUInt32BE(20)]).toEqual([w, h]);
    expect(png.length).toBeGreaterThan(5000);
    rmSync(dir, { recursive: true, force: true });
  });

  it("massLevel: the bins above the level hold the requested fraction (brute force)", () => {
    const h = Float64Array.from([5, 1, 3, 0, 2, 4]);
    // Sorted 5, 4, 3, 2, 1, 0 (total 15): 39.3% = 5.9 → reached at 5 + 4 = 9 → level 4.
    expect(massLevel(h, 1 - Math.exp(-0.5))).toBe(4);
    expectAbs(1 - Math.exp(-0.5), 0.393469, 1e-6, "1σ mass of a 2-D Gaussian (analytic)");
  });
});
