/**
 * Type-2 interpolation and type-1 spreading as generated WebAssembly with 128-bit SIMD,
 * specialised to one fitted kernel: the same algorithm and the same order of operations as
 * `makeInterpolateFused` (interpGen.ts) and `spread` (spreadInterp.ts), two lanes at a time.
 * - Kernel weights: the x and y fractions of a point share one vector (s_x, s_y); each of the
 *   w pieces is one Horner chain on that vector (kernelPoly.ts polynomials, coefficients as
 *   constants), so both axes' weights cost what one axis costs in scalar code.
 * - Patch: the fine grid holds interleaved complex doubles, so one vector load is one cell
 *   (re, im); interpolation sums Σ_dx kx_dx·g per row (w vector multiply-adds), then
 *   Σ_dy ky_dy·row; spreading adds kx_dx·(ky_dy·c) to each cell.
 * Multiplications and additions are separate IEEE operations per lane (no fused multiply-add),
 * in the scalar code's order, so the results equal the scalar path's to the last bit.
 * All arrays live in one WebAssembly memory; the function takes their byte offsets.
 *
 * Reference: Barnett, Magland & af Klinteberg 2019 §5 (kernel evaluation by Horner's rule and
 * interpolation specialised per width, vectorised); spreadInterp.ts (grid, cell and fraction layout).
 */
import type { EsKernelPoly } from "./kernelPoly.js";
import { FunctionBody, I32, OP, SIMD, V128 } from "./wasmAsm.js";

/**
 * A generated loop over sorted points kStart … kEnd − 1 (interpolate or spread of
 * spreadInterp.ts): every argument except nfx, nfy, shiftX (= log2 nfx) and the point range is
 * a byte offset into the memory: grid (nfx·nfy interleaved complex doubles), cell (Int32 start
 * cells), fracX and fracY (Float64 fractions), re and im (Float64, sorted order: written by
 * interpolation, read by spreading).
 */
export type PointLoopWasm = (
  grid: number,
  nfx: number,
  nfy: number,
  shiftX: number,
  cell: number,
  fracX: number,
  fracY: number,
  re: number,
  im: number,
  kStart: number,
  kEnd: number,
) => void;

/** Lane selectors of i8x16.shuffle: both lanes = lane 0, both lanes = lane 1 of a f64x2. */
const DUP_LANE0 = [0, 1, 2, 3, 4, 5, 6, 7, 0, 1, 2, 3, 4, 5, 6, 7];
const DUP_LANE1 = [8, 9, 10, 11, 12, 13, 14, 15, 8, 9, 10, 11, 12, 13, 14, 15];

/** Emit the Horner chain of one piece on vector local `y`, coefficients highest first. */
function horner(f: FunctionBody, c: Float64Array, off: number, degree: number, y: number): void {
  f.f64x2(c[off], c[off]);
  for (let j = 1; j <= degree; j++) {
    f.get(y).simd(SIMD.f64x2Mul);
    f.f64x2(c[off + j], c[off + j]).simd(SIMD.f64x2Add);
  }
}

/** Which loop to generate: type-2 interpolation from the grid or type-1 spreading onto it. */
export type PointLoopKind = "interpolate" | "spread";

/**
 * The generated function body (parameters as in InterpolateWasm; for "spread" the last two
 * arrays are the sorted point values read, and the grid is added to).
 */
export function pointLoopWasmBody(k: EsKernelPoly, kind: PointLoopKind): FunctionBody {
  if (!k.polynomial) throw new Error("pointLoopWasmBody: the kernel of this width is not polynomial");
  const w = k.width;
  const f = new FunctionBody([I32, I32, I32, I32, I32, I32, I32, I32, I32, I32, I32]);
  const [pGrid, pNfx, pNfy, pShift, pCell, pFx, pFy, pRe, pIm, pStart, pEnd] = [0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10];
  const kk = f.local(I32);
  const k8 = f.local(I32);
  const c = f.local(I32);
  const i0 = f.local(I32);
  const j0 = f.local(I32);
  const g = f.local(I32);
  const maskX = f.local(I32);
  const maskY = f.local(I32);
  const s = f.local(V128);
  const y0 = f.local(V128);
  const y1 = f.local(V128);
  const y = f.local(V128);
  const acc = f.local(V128);
  const val = f.local(V128);
  const wt: number[] = [];
  const kx: number[] = [];
  for (let m = 0; m < w; m++) wt.push(f.local(V128));
  for (let m = 0; m < w; m++) kx.push(f.local(V128));

  f.get(pNfx).i32(1).op(OP.i32Sub).set(maskX);
  f.get(pNfy).i32(1).op(OP.i32Sub).set(maskY);
  f.get(pStart).set(kk);
  f.begin(OP.block);
  f.get(kk).get(pEnd).op(OP.i32GeU).branch(OP.brIf, 0);
  f.begin(OP.loop);

  // s = (fracX[k], fracY[k])
  f.get(kk).i32(3).op(OP.i32Shl).set(k8);
  f.get(pFx).get(k8).op(OP.i32Add).simdMem(SIMD.v128Load64Splat, 3, 0);
  f.get(pFy).get(k8).op(OP.i32Add).mem(OP.f64Load, 3, 0);
  f.lane(SIMD.f64x2ReplaceLane, 1).set(s);
  // y0 = 2√s − 1, y1 = 2√(1 − s) − 1, y = 2s − 1 (as in kernelPoly.ts)
  f.f64x2(2, 2).get(s).simd(SIMD.f64x2Sqrt).simd(SIMD.f64x2Mul).f64x2(1, 1).simd(SIMD.f64x2Sub).set(y0);
  f.f64x2(2, 2).f64x2(1, 1).get(s).simd(SIMD.f64x2Sub).simd(SIMD.f64x2Sqrt).simd(SIMD.f64x2Mul);
  f.f64x2(1, 1).simd(SIMD.f64x2Sub).set(y1);
  f.f64x2(2, 2).get(s).simd(SIMD.f64x2Mul).f64x2(1, 1).simd(SIMD.f64x2Sub).set(y);
  horner(f, k.edge, 0, k.degreeEdge, y0);
  f.set(wt[0]);
  for (let m = 1; m < w - 1; m++) {
    horner(f, k.inner, (m - 1) * (k.degreeInner + 1), k.degreeInner, y);
    f.set(wt[m]);
  }
  horner(f, k.edge, k.degreeEdge + 1, k.degreeEdge, y1);
  f.set(wt[w - 1]);
  for (let m = 0; m < w; m++) f.get(wt[m]).get(wt[m]).shuffle(DUP_LANE0).set(kx[m]);

  // Start cell → column i0, row j0.
  f.get(pCell).get(kk).i32(2).op(OP.i32Shl).op(OP.i32Add).mem(OP.i32Load, 2, 0).set(c);
  f.get(c).get(maskX).op(OP.i32And).set(i0);
  f.get(c).get(pShift).op(OP.i32ShrU).set(j0);
  if (kind === "interpolate") {
    f.f64x2(0, 0).set(acc);
  } else {
    // val = (re[k], im[k])
    f.get(pRe).get(k8).op(OP.i32Add).simdMem(SIMD.v128Load64Splat, 3, 0);
    f.get(pIm).get(k8).op(OP.i32Add).mem(OP.f64Load, 3, 0);
    f.lane(SIMD.f64x2ReplaceLane, 1).set(val);
  }

  /**
   * One patch row. Interpolate: acc += ky_dy · Σ_dx kx_dx · cell(dx). Spread: with
   * a = ky_dy · val, cell(dx) += kx_dx · a (spreadInterp.ts order). `address` pushes the byte
   * address of cell dx; `offset` is added by the access itself.
   */
  const patchRow = (dy: number, address: (dx: number) => void, offset: (dx: number) => number): void => {
    if (kind === "interpolate") {
      for (let dx = 0; dx < w; dx++) {
        f.get(kx[dx]);
        address(dx);
        f.simdMem(SIMD.v128Load, 4, offset(dx));
        f.simd(SIMD.f64x2Mul);
        if (dx > 0) f.simd(SIMD.f64x2Add);
      }
      f.get(wt[dy]).get(wt[dy]).shuffle(DUP_LANE1).simd(SIMD.f64x2Mul);
      f.get(acc).simd(SIMD.f64x2Add).set(acc);
      return;
    }
    f.get(wt[dy]).get(wt[dy]).shuffle(DUP_LANE1).get(val).simd(SIMD.f64x2Mul).set(acc);
    for (let dx = 0; dx < w; dx++) {
      address(dx);
      address(dx);
      f.simdMem(SIMD.v128Load, 4, offset(dx));
      f.get(kx[dx]).get(acc).simd(SIMD.f64x2Mul).simd(SIMD.f64x2Add);
      f.simdMem(SIMD.v128Store, 4, offset(dx));
    }
  };

  // if (i0 + w <= nfx): contiguous row segments, addresses as constant offsets from g.
  f.get(i0).i32(w).op(OP.i32Add).get(pNfx).op(OP.i32LeU).begin(OP.if);
  for (let dy = 0; dy < w; dy++) {
    // g = grid + ((((j0 + dy) & maskY) << shiftX) + i0) · 16
    f.get(pGrid).get(j0).i32(dy).op(OP.i32Add).get(maskY).op(OP.i32And).get(pShift).op(OP.i32Shl);
    f.get(i0).op(OP.i32Add).i32(4).op(OP.i32Shl).op(OP.i32Add).set(g);
    patchRow(dy, () => f.get(g), (dx) => 16 * dx);
  }
  f.op(OP.else);
  // The patch wraps across the grid's x edge: mask every column.
  for (let dy = 0; dy < w; dy++) {
    f.get(pGrid).get(j0).i32(dy).op(OP.i32Add).get(maskY).op(OP.i32And).get(pShift).op(OP.i32Shl);
    f.i32(4).op(OP.i32Shl).op(OP.i32Add).set(g);
    patchRow(
      dy,
      (dx) => f.get(g).get(i0).i32(dx).op(OP.i32Add).get(maskX).op(OP.i32And).i32(4).op(OP.i32Shl).op(OP.i32Add),
      () => 0,
    );
  }
  f.op(OP.end);

  if (kind === "interpolate") {
    f.get(pRe).get(k8).op(OP.i32Add).get(acc).lane(SIMD.f64x2ExtractLane, 0).mem(OP.f64Store, 3, 0);
    f.get(pIm).get(k8).op(OP.i32Add).get(acc).lane(SIMD.f64x2ExtractLane, 1).mem(OP.f64Store, 3, 0);
  }
  f.get(kk).i32(1).op(OP.i32Add).tee(kk).get(pEnd).op(OP.i32LtU).branch(OP.brIf, 0);
  f.op(OP.end); // loop
  f.op(OP.end); // block
  return f;
}

/** Points per call of the generated function (see pointLoopWasmRange). */
const WASM_CHUNK = 16384;

/** Byte offsets of the per-point arrays in the memory the generated loops run on. */
export interface PointWasmOffsets {
  cell: number;
  fracX: number;
  fracY: number;
  sortedRe: number;
  sortedIm: number;
}

/**
 * Run a generated point loop over sorted points kStart … kEnd − 1: interpolation writes the
 * sortedRe/sortedIm arrays (sorted order), spreading reads them and adds to the grid at byte
 * offset `grid`. Called in chunks: the engine swaps in its optimised compilation of a WebAssembly
 * function only between calls, so one call over 10⁶ points would run entirely in the baseline
 * code the first time.
 */
export function pointLoopWasmRange(
  fn: PointLoopWasm,
  o: PointWasmOffsets,
  grid: number,
  nfx: number,
  nfy: number,
  kStart: number,
  kEnd: number,
): void {
  const shiftX = Math.log2(nfx) | 0;
  for (let k0 = kStart; k0 < kEnd; k0 += WASM_CHUNK) {
    fn(grid, nfx, nfy, shiftX, o.cell, o.fracX, o.fracY, o.sortedRe, o.sortedIm, k0, Math.min(kEnd, k0 + WASM_CHUNK));
  }
}
