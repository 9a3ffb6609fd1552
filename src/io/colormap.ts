/**
 * Colour maps for figures: a perceptually uniform sequential map (viridis) for images and a
 * diverging map (cool–warm) for residuals, plus the value → RGBA mapping used by image panels.
 *
 * viridis: the 256-entry table of matplotlib (van der Walt & Smith 2015, released CC0), rounded to
 * 8 bits, read from matplotlib 3.6.3's `_viridis_data`.
 * cool–warm: Moreland 2009, "Diverging Color Maps for Scientific Visualization", ISVC 2009, LNCS
 * 5876, 92–103; 33 samples of matplotlib 3.6.3's `coolwarm` (Moreland's map), linearly interpolated.
 */

const VIRIDIS_HEX =
  "44015444025645045745055946075a46085c460a5d460b5e470d60470e61471063471164471365481467481668481769" +
  "48186a481a6c481b6d481c6e481d6f481f70482071482173482374482475482576482677482878482979472a7a472c7a" +
  "472d7b472e7c472f7d46307e46327e46337f463480453581453781453882443983443a83443b84433d84433e85423f85" +
  "4240864241864142874144874045884046883f47883f48893e49893e4a893e4c8a3d4d8a3d4e8a3c4f8a3c508b3b518b" +
  "3b528b3a538b3a548c39558c39568c38588c38598c375a8c375b8d365c8d365d8d355e8d355f8d34608d34618d33628d" +
  "33638d32648e32658e31668e31678e31688e30698e306a8e2f6b8e2f6c8e2e6d8e2e6e8e2e6f8e2d708e2d718e2c718e" +
  "2c728e2c738e2b748e2b758e2a768e2a778e2a788e29798e297a8e297b8e287c8e287d8e277e8e277f8e27808e26818e" +
  "26828e26828e25838e25848e25858e24868e24878e23888e23898e238a8d228b8d228c8d228d8d218e8d218f8d21908d" +
  "21918c20928c20928c20938c1f948c1f958b1f968b1f978b1f988b1f998a1f9a8a1e9b8a1e9c891e9d891f9e891f9f88" +
  "1fa0881fa1881fa1871fa28720a38620a48621a58521a68522a78522a88423a98324aa8325ab8225ac8226ad8127ad81" +
  "28ae8029af7f2ab07f2cb17e2db27d2eb37c2fb47c31b57b32b67a34b67935b77937b87838b9773aba763bbb753dbc74" +
  "3fbc7340bd7242be7144bf7046c06f48c16e4ac16d4cc26c4ec36b50c46a52c56954c56856c66758c7655ac8645cc863" +
  "5ec96260ca6063cb5f65cb5e67cc5c69cd5b6ccd5a6ece5870cf5773d05675d05477d1537ad1517cd2507fd34e81d34d" +
  "84d44b86d54989d5488bd6468ed64590d74393d74195d84098d83e9bd93c9dd93ba0da39a2da37a5db36a8db34aadc32" +
  "addc30b0dd2fb2dd2db5de2bb8de29bade28bddf26c0df25c2df23c5e021c8e020cae11fcde11dd0e11cd2e21bd5e21a" +
  "d8e219dae319dde318dfe318e2e418e5e419e7e419eae51aece51befe51cf1e51df4e61ef6e620f8e621fbe723fde725";

const COOLWARM_HEX =
  "3b4cc0445acc4e68d85875e16282ea6c8ff1779af782a6fb8db0fe98b9ffa3c2feaec9fcb9d0f9c3d5f4ccd9edd5dbe5dddcdc" +
  "e5d8d1ecd3c5f1ccb8f5c4acf7ba9ff7b093f6a586f4987af08b6eeb7d62e46e56dd5f4bd44e41ca3b37be242eb40426";

function parseTable(hex: string): Uint8Array {
  const out = new Uint8Array(hex.length / 2);
  for (let k = 0; k < out.length; k++) out[k] = parseInt(hex.slice(2 * k, 2 * k + 2), 16);
  return out;
}

/** A colour map: RGB triplets (0–255) sampled evenly on [0, 1], linearly interpolated. */
export interface ColourMap {
  name: string;
  table: Uint8Array;
}

export const VIRIDIS: ColourMap = { name: "viridis", table: parseTable(VIRIDIS_HEX) };
export const COOLWARM: ColourMap = { name: "coolwarm", table: parseTable(COOLWARM_HEX) };
/** Plain grey ramp, black to white. */
export const GREY: ColourMap = { name: "grey", table: Uint8Array.from([0, 0, 0, 255, 255, 255]) };
/** White to dark blue, for 2-D histograms (density 0 stays white). */
export const BLUES: ColourMap = { name: "blues", table: Uint8Array.from([255, 255, 255, 158, 202, 225, 49, 130, 189, 8, 48, 107]) };

export type ColourMapName = "viridis" | "coolwarm" | "grey" | "blues";

export function colourMap(name: ColourMapName): ColourMap {
  switch (name) {
    case "viridis": return VIRIDIS;
    case "coolwarm": return COOLWARM;
    case "grey": return GREY;
    case "blues": return BLUES;
  }
}

/**
 * Colour at t ∈ [0, 1] (clamped) into out[offset..offset+2] (RGB bytes).
 */
export function colourAt(map: ColourMap, t: number, out: Uint8Array, offset: number): void {
  const n = map.table.length / 3;
  const s = Math.min(1, Math.max(0, t)) * (n - 1);
  const k = Math.min(n - 2, Math.floor(s));
  const f = s - k;
  const tb = map.table;
  for (let c = 0; c < 3; c++) out[offset + c] = Math.round(tb[3 * k + c] * (1 - f) + tb[3 * (k + 1) + c] * f);
}

/** CSS hex colour at t ∈ [0, 1]. */
export function colourHex(map: ColourMap, t: number): string {
  const rgb = new Uint8Array(3);
  colourAt(map, t, rgb, 0);
  return "#" + Array.from(rgb, (b) => b.toString(16).padStart(2, "0")).join("");
}

/**
 * Map an image to RGBA pixels, top row first, for PNG encoding. Data row 0 is the BOTTOM of the
 * displayed image (the model grid's South edge), so rows are flipped. NaN → transparent.
 * @param data nx·ny values, column fastest, row 0 at the bottom
 * @param vmin, vmax the values mapped to the ends of the colour map (vmax > vmin)
 */
export function imageToRgba(data: ArrayLike<number>, nx: number, ny: number, vmin: number, vmax: number, map: ColourMap): Uint8Array {
  const out = new Uint8Array(nx * ny * 4);
  const inv = 1 / (vmax - vmin);
  for (let j = 0; j < ny; j++) {
    const dst = (ny - 1 - j) * nx * 4;
    for (let i = 0; i < nx; i++) {
      const v = data[j * nx + i];
      const o = dst + 4 * i;
      if (Number.isFinite(v)) {
        colourAt(map, (v - vmin) * inv, out, o);
        out[o + 3] = 255;
      }
    }
  }
  return out;
}

/** Finite minimum and maximum of the values ([NaN, NaN] when none is finite). */
export function finiteRange(data: ArrayLike<number>): [number, number] {
  let lo = Infinity, hi = -Infinity;
  for (let k = 0; k < data.length; k++) {
    const v = data[k];
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  return lo <= hi ? [lo, hi] : [NaN, NaN];
}
