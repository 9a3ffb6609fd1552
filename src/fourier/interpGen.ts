/**
 * Type-2 interpolation specialised to one fitted kernel: a generated function that, per point,
 * evaluates the 2·w kernel weights by the Horner steps of kernelPoly.ts into local variables
 * and sums the w × w patch with every loop written out (separable: w x-weighted row sums, then
 * the y-weights). With w fixed at plan time, V8 keeps the weights in registers and emits no
 * loop control or table traffic. Plans use the SIMD version of the same loop (interpWasm.ts)
 * where WebAssembly allows it; this one serves when it does not (and as its reference).
 * The arithmetic (weights, order of additions) is that of `esKernelWeights` + `interpolate`
 * in spreadInterp.ts, so results agree with them to the last bit.
 * The source text holds only integers and coefficients printed with their shortest round-trip
 * representation (no outside strings).
 *
 * Reference: Barnett, Magland & af Klinteberg 2019 §5 (kernel evaluation and interpolation
 * specialised per width); spreadInterp.ts (layout of cells, fractions and grid).
 */
import type { EsKernelPoly } from "./kernelPoly.js";

/**
 * Interpolate the fine grid at sorted points kStart … kEnd − 1 from their stored fractions;
 * results go to outRe/outIm at perm[k] when `scatter`, else at k.
 */
export type InterpolateFused = (
  grid: Float64Array,
  nfx: number,
  nfy: number,
  cell: Int32Array,
  perm: Uint32Array,
  fracX: Float64Array,
  fracY: Float64Array,
  kStart: number,
  kEnd: number,
  outRe: Float64Array,
  outIm: Float64Array,
  scatter: boolean,
) => void;

/** Horner expression (highest coefficient first) as source text. */
function hornerText(c: Float64Array, off: number, d: number, v: string): string {
  let e = num(c[off]);
  for (let j = 1; j <= d; j++) e = `(${e}) * ${v} + ${num(c[off + j])}`;
  return e;
}

function num(x: number): string {
  if (!Number.isFinite(x)) throw new Error(`kernel polynomial: non-finite coefficient ${x}`);
  return `(${String(x)})`;
}

/** Statements assigning the w weights of fraction `s` to `${name}0 … ${name}{w−1}`. */
function weightText(k: EsKernelPoly, s: string, name: string): string[] {
  const w = k.width;
  const out = [
    `const ${name}y0 = 2 * Math.sqrt(${s}) - 1;`,
    `const ${name}y1 = 2 * Math.sqrt(1 - ${s}) - 1;`,
    `const ${name}y = 2 * ${s} - 1;`,
    `const ${name}0 = ${hornerText(k.edge, 0, k.degreeEdge, `${name}y0`)};`,
  ];
  for (let m = 1; m < w - 1; m++) {
    out.push(`const ${name}${m} = ${hornerText(k.inner, (m - 1) * (k.degreeInner + 1), k.degreeInner, `${name}y`)};`);
  }
  out.push(`const ${name}${w - 1} = ${hornerText(k.edge, k.degreeEdge + 1, k.degreeEdge, `${name}y1`)};`);
  return out;
}

/**
 * Generate the fused interpolation for a polynomial kernel (k.polynomial must be true).
 * Reference: module comment.
 */
export function makeInterpolateFused(k: EsKernelPoly): InterpolateFused {
  if (!k.polynomial) throw new Error("makeInterpolateFused: the kernel of this width is not polynomial");
  const w = k.width;
  const body: string[] = [
    '"use strict";',
    "const maskX = nfx - 1;",
    "const maskY = nfy - 1;",
    "const shiftX = Math.log2(nfx) | 0;",
    "const rowLen = 2 * nfx;",
    "for (let k = kStart; k < kEnd; k++) {",
    ...weightText(k, "fracX[k]", "kx"),
    ...weightText(k, "fracY[k]", "ky"),
    "const c = cell[k];",
    "const i0 = c & maskX;",
    "const j0 = c >>> shiftX;",
    "let sRe = 0;",
    "let sIm = 0;",
    "let g = 0;",
    "let rRe = 0;",
    "let rIm = 0;",
    `if (i0 + ${w} <= nfx) {`,
  ];
  // Same order of additions as spreadInterp.interpolate: row sums over dx, then Σ ky·row.
  for (let dy = 0; dy < w; dy++) {
    body.push(`g = ((j0 + ${dy}) & maskY) * rowLen + 2 * i0;`);
    const re: string[] = [];
    const im: string[] = [];
    for (let dx = 0; dx < w; dx++) {
      re.push(`kx${dx} * grid[g + ${2 * dx}]`);
      im.push(`kx${dx} * grid[g + ${2 * dx + 1}]`);
    }
    body.push(`rRe = 0 + ${re.join(" + ")};`, `rIm = 0 + ${im.join(" + ")};`);
    body.push(`sRe += ky${dy} * rRe;`, `sIm += ky${dy} * rIm;`);
  }
  body.push("} else {", "// The patch wraps across the grid's x edge: mask every column.");
  for (let dy = 0; dy < w; dy++) {
    body.push(`g = ((j0 + ${dy}) & maskY) * rowLen;`);
    const re: string[] = [];
    const im: string[] = [];
    for (let dx = 0; dx < w; dx++) {
      const col = `2 * ((i0 + ${dx}) & maskX)`;
      re.push(`kx${dx} * grid[g + ${col}]`);
      im.push(`kx${dx} * grid[g + ${col} + 1]`);
    }
    body.push(`rRe = 0 + ${re.join(" + ")};`, `rIm = 0 + ${im.join(" + ")};`);
    body.push(`sRe += ky${dy} * rRe;`, `sIm += ky${dy} * rIm;`);
  }
  body.push("}", "const o = scatter ? perm[k] : k;", "outRe[o] = sRe;", "outIm[o] = sIm;", "}");
  return new Function(
    "grid", "nfx", "nfy", "cell", "perm", "fracX", "fracY", "kStart", "kEnd", "outRe", "outIm", "scatter",
    body.join("\n"),
  ) as InterpolateFused;
}
