/** Public surface of src/io: FITS images and cubes, PNG encoding, SVG figures and their rendering. */
export { writeFileAtomic } from "./atomicWrite.js";
export {
  encodeFitsImage, writeFitsImage, decodeFitsImage, readFitsImage, axisWcs, headerBeam, sinOffsetToSkyDeg,
  gridPixelOffsetArcsec,
  type FitsImageSpec, type FitsImage, type FitsCelestial, type FitsSpectralAxis, type FitsBeam, type FitsAxisWcs,
} from "./fits.js";
export { headerValue, headerNumber, headerString, type FitsHeader, type FitsCard, type FitsValue } from "./fitsHeader.js";
export { encodePng, crc32 } from "./png.js";
export { VIRIDIS, COOLWARM, GREY, BLUES, colourMap, colourAt, colourHex, imageToRgba, finiteRange, type ColourMap, type ColourMapName } from "./colormap.js";
export { svgDocument, panelDocument, place, text, line, rect, polylines, marker, escapeXml, FONT_FAMILY, type Panel, type MarkerShape } from "./svg.js";
export { niceTicks, logTicks, formatTick, type AxisScale } from "./ticks.js";
export { imagePanel, gridExtentArcsec, colourRange, type ImagePanel, type ImagePanelOptions, type ImageOverlayLine, type ImageMarker } from "./imagePanel.js";
export { xyPanel, scatterPanel, linePanel, PALETTE, type Series, type XYPanelOptions } from "./xyPanel.js";
export { cornerPlot, histogram1d, histogram2d, massLevel, type CornerPlotOptions } from "./cornerPlot.js";
export { composeFigure, sharedScaleImages, type FigureOptions } from "./layout.js";
export { renderPng, renderRgba, writePng, writeSvg } from "./render.js";
