/**
 * Image figures of a fit as SVG documents: the best-fit sky, the source plane with its caustics,
 * the dirty images of the data and the residual, and data / model / residual dirty images side by
 * side on one colour scale. Maps are shown with North up and East to the left (CONVENTIONS.md);
 * the grid of each GridImage may be centred away from the origin (source plane).
 * Reference: orientation per CONVENTIONS.md (Greisen & Calabretta 2002, A&A 395, 1061).
 */
import { composeFigure, sharedScaleImages } from "../../io/layout.js";
import { gridExtentArcsec, imagePanel, type ImageOverlayLine, type ImagePanelOptions } from "../../io/imagePanel.js";
import { panelDocument } from "../../io/svg.js";
import type { FitOutcome, GridImage, Polyline } from "../outcome.js";

/** Overlay colours: light on the dark end of viridis, dark on the pale middle of cool–warm. */
const CURVE_ON_DARK = "#ffffff";
const CURVE_ON_PALE = "#222222";

/** Pixel-edge extent [arcsec] of a GridImage, shifted to its centre: [left, right, bottom, top]. */
export function imageExtentArcsec(image: GridImage): [number, number, number, number] {
  const [xl, xr, yb, yt] = gridExtentArcsec(image.n, image.cellArcsec);
  return [xl + image.centreXArcsec, xr + image.centreXArcsec, yb + image.centreYArcsec, yt + image.centreYArcsec];
}

/**
 * Join polylines into one pair of coordinate arrays with NaN separators (the overlay format of
 * image panels, which breaks a line at a non-finite point).
 */
export function joinPolylines(curves: readonly Polyline[]): { xArcsec: Float64Array; yArcsec: Float64Array } {
  let total = 0;
  for (const c of curves) total += c.xArcsec.length + 1;
  const x = new Float64Array(total), y = new Float64Array(total);
  let k = 0;
  for (const c of curves) {
    x.set(c.xArcsec, k);
    y.set(c.yArcsec, k);
    k += c.xArcsec.length;
    x[k] = y[k] = NaN;
    k++;
  }
  return { xArcsec: x, yArcsec: y };
}

function curveOverlay(curves: readonly Polyline[], colour: string, label: string): ImageOverlayLine[] {
  if (curves.length === 0) return [];
  return [{ ...joinPolylines(curves), colour, widthPx: 1.2, label }];
}

function baseOptions(image: GridImage, title: string): ImagePanelOptions {
  return { data: image.data, nx: image.n, ny: image.n, extentArcsec: imageExtentArcsec(image), title, unit: image.unit, mapWidthPx: 340 };
}

/** Best-fit lensed sky (Jy/pixel) with the critical curves. */
export function modelSkySvg(o: FitOutcome): string {
  return panelDocument(imagePanel({
    ...baseOptions(o.images.modelSky, "Best-fit lensed sky"),
    colourMap: "viridis",
    lines: curveOverlay(o.criticalCurves, CURVE_ON_DARK, "critical curves"),
  }));
}

/** Source plane (Jy/arcsec²) with the caustics; axes are source-plane offsets. */
export function sourceSvg(o: FitOutcome): string {
  return panelDocument(imagePanel({
    ...baseOptions(o.images.source, "Reconstructed source"),
    colourMap: "viridis",
    xLabel: "source-plane Δx (East ←) [″]",
    yLabel: "source-plane Δy [″]",
    lines: curveOverlay(o.caustics, CURVE_ON_DARK, "caustics"),
  }));
}

/** Source-plane 1σ map, when the source is pixelised. */
export function sourceSigmaSvg(o: FitOutcome): string | undefined {
  const s = o.images.sourceSigma;
  if (!s) return undefined;
  return panelDocument(imagePanel({
    ...baseOptions(s, "Source 1σ uncertainty"),
    colourMap: "viridis",
    xLabel: "source-plane Δx (East ←) [″]",
    yLabel: "source-plane Δy [″]",
  }));
}

/** Dirty image of the data with the beam. */
export function dataDirtySvg(o: FitOutcome): string {
  return panelDocument(imagePanel({
    ...baseOptions(o.images.dataDirty, "Dirty image of the data"),
    colourMap: "viridis",
    beam: o.datasets[0]?.beam,
  }));
}

/** Residual dirty image on a symmetric diverging scale, with its rms in the title. */
export function residualDirtySvg(o: FitOutcome): string {
  const rms = o.images.residualRmsJyPerBeam;
  return panelDocument(imagePanel({
    ...baseOptions(o.images.residualDirty, `Residual dirty image (rms ${formatJy(rms)}/beam)`),
    colourMap: "coolwarm",
    symmetric: true,
    beam: o.datasets[0]?.beam,
    lines: curveOverlay(o.criticalCurves, CURVE_ON_PALE, "critical curves"),
  }));
}

/**
 * Data, model and residual dirty images side by side on ONE symmetric colour scale (so the
 * residual's size is judged against the data), critical curves on the model, beam on each.
 */
export function dirtyComparisonSvg(o: FitOutcome): string {
  const beam = o.datasets[0]?.beam;
  const im = o.images;
  const panels = sharedScaleImages(
    [
      { ...baseOptions(im.dataDirty, "Data"), colourMap: "coolwarm", beam, mapWidthPx: 300 },
      {
        ...baseOptions(im.modelDirty, "Model"), colourMap: "coolwarm", beam, mapWidthPx: 300,
        lines: curveOverlay(o.criticalCurves, CURVE_ON_PALE, "critical curves"),
      },
      { ...baseOptions(im.residualDirty, "Residual"), colourMap: "coolwarm", beam, mapWidthPx: 300 },
    ],
    { symmetric: true },
  );
  return composeFigure(panels, { columns: 3, title: "Dirty images on one colour scale (Jy/beam)" });
}

/** A flux density with an SI prefix: 1.2e-5 → "12 µJy". */
export function formatJy(valueJy: number): string {
  if (!Number.isFinite(valueJy)) return "n/a Jy";
  const a = Math.abs(valueJy);
  const [scale, unit] = a >= 1 || a === 0 ? [1, "Jy"] : a >= 1e-3 ? [1e3, "mJy"] : a >= 1e-6 ? [1e6, "µJy"] : [1e9, "nJy"];
  return `${Number((valueJy * scale).toPrecision(3))} ${unit}`;
}
