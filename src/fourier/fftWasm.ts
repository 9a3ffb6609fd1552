/**
 * One-dimensional complex FFTs of length n (a power of two) in generated WebAssembly with
 * 128-bit SIMD, run on interleaved complex doubles in a WebAssembly memory: one vector is one
 * complex value (re, im), so a butterfly is two vector loads, an add, a subtract, a complex
 * multiply (d·(wr, wr) + swap(d)·(−wi, wi)) and two stores.
 *
 * `fftBatch` transforms `batch` adjacent sequences at once: element i of sequence b sits at
 * base + i·stride + 16·b, so the columns of a row-major grid are transformed in place, a block
 * of adjacent columns at a time, with each twiddle factor loaded once for the whole block and
 * every access a contiguous run (no transposes). A row is a batch of one with stride 16.
 * The algorithm is the radix-2 decimation in frequency (Gentleman–Sande): log2 n passes of
 * butterflies, then the bit-reversal permutation (`bitReverse`).
 *
 * Sign: with the forward table (w_j = e^{−2πij/n}) the transform is Σ_l x_l e^{−2πi lk/n};
 * with the backward table (w_j = e^{+2πij/n}) it is Σ_l x_l e^{+2πi lk/n}, unscaled.
 *
 * Reference: Gentleman & Sande 1966, AFIPS Fall Joint Computer Conference 29, 563 (decimation
 * in frequency); Cooley & Tukey 1965, Math. Comp. 19, 297; Van Loan 1992, Computational
 * Frameworks for the Fast Fourier Transform, §1.4 (Gentleman–Sande butterfly), §1.9 (bit reversal).
 */
import { FunctionBody, I32, OP, SIMD, V128 } from "./wasmAsm.js";

/**
 * In-place DIF passes (output in bit-reversed order) over `batch` sequences of length n.
 * @param base byte offset of element 0 of sequence 0; @param stride bytes between elements.
 * @param twiddles byte offset of the table for n (fftTwiddleTable layout).
 */
export type FftBatchWasm = (base: number, stride: number, n: number, batch: number, twiddles: number) => void;

/** Swap elements i ↔ rev(i) of `batch` sequences (rev: byte offset of an Int32 table of n entries). */
export type BitReverseWasm = (base: number, stride: number, n: number, batch: number, rev: number) => void;

/** Swap the two lanes of a f64x2. */
const SWAP_LANES = [8, 9, 10, 11, 12, 13, 14, 15, 0, 1, 2, 3, 4, 5, 6, 7];

/** Bytes of one twiddle-table entry: (wr, wr) then (−wi, wi). */
export const TWIDDLE_ENTRY_BYTES = 32;

/**
 * Twiddle table of length n (n/2 entries of 4 doubles: wr, wr, −wi, wi with w_j = e^{∓2πij/n},
 * − for forward), and the bit-reversal table (n Int32).
 * Reference: Van Loan 1992 §1.4 (twiddle factors computed directly, not by recurrence, for accuracy).
 */
export function fftTwiddleTable(n: number, inverse: boolean, out: Float64Array): void {
  const sign = inverse ? 1 : -1;
  for (let j = 0; j < n / 2; j++) {
    const a = (2 * Math.PI * j) / n;
    const wr = Math.cos(a);
    const wi = sign * Math.sin(a);
    out[4 * j] = wr;
    out[4 * j + 1] = wr;
    out[4 * j + 2] = -wi;
    out[4 * j + 3] = wi;
  }
}

/** rev[i] = i with its log2 n bits reversed. */
export function bitReverseTable(n: number, out: Int32Array): void {
  const bits = Math.log2(n) | 0;
  for (let i = 0; i < n; i++) {
    let r = 0;
    for (let b = 0, x = i; b < bits; b++, x >>= 1) r = (r << 1) | (x & 1);
    out[i] = r;
  }
}

/** Emit `for (i = <start>; i < <end>; i += <step>) body`, unsigned compare. */
function forLoop(f: FunctionBody, i: number, start: () => void, end: () => void, step: () => void, body: () => void): void {
  start();
  f.set(i);
  f.begin(OP.block).begin(OP.loop);
  f.get(i);
  end();
  f.op(OP.i32GeU).branch(OP.brIf, 1);
  body();
  f.get(i);
  step();
  f.op(OP.i32Add).set(i);
  f.branch(OP.br, 0);
  f.op(OP.end).op(OP.end);
}

/** Body of FftBatchWasm. */
export function fftBatchBody(): FunctionBody {
  const f = new FunctionBody([I32, I32, I32, I32, I32]);
  const [pBase, pStride, pN, pBatch, pTw] = [0, 1, 2, 3, 4];
  const half = f.local(I32); // h: distance of butterfly partners (elements)
  const span = f.local(I32); // h·stride (bytes)
  const twStep = f.local(I32); // bytes between the twiddles of consecutive j
  const g = f.local(I32); // group start (bytes from base)
  const groupBytes = f.local(I32); // 2h·stride
  const end = f.local(I32); // n·stride
  const j = f.local(I32);
  const tw = f.local(I32);
  const pa = f.local(I32);
  const paEnd = f.local(I32);
  const batchBytes = f.local(I32);
  const wRe = f.local(V128);
  const wIm = f.local(V128);
  const a = f.local(V128);
  const b = f.local(V128);
  const d = f.local(V128);

  f.get(pN).get(pStride).op(OP.i32Mul).set(end);
  f.get(pBatch).i32(4).op(OP.i32Shl).set(batchBytes);
  f.get(pN).i32(1).op(OP.i32ShrU).set(half);
  f.i32(32).set(twStep);
  // while (half ≥ 1)
  f.begin(OP.block).begin(OP.loop);
  f.get(half).op(OP.i32Eqz).branch(OP.brIf, 1);
  f.get(half).get(pStride).op(OP.i32Mul).set(span);
  f.get(span).i32(1).op(OP.i32Shl).set(groupBytes);
  forLoop(
    f,
    g,
    () => f.i32(0),
    () => f.get(end),
    () => f.get(groupBytes),
    () => {
      f.get(pTw).set(tw);
      forLoop(
        f,
        j,
        () => f.i32(0),
        () => f.get(half),
        () => f.i32(1),
        () => {
          f.get(tw).simdMem(SIMD.v128Load, 4, 0).set(wRe);
          f.get(tw).simdMem(SIMD.v128Load, 4, 16).set(wIm);
          // pa = base + g + j·stride; the batch runs over pa … pa + 16·batch
          f.get(pBase).get(g).op(OP.i32Add).get(j).get(pStride).op(OP.i32Mul).op(OP.i32Add).set(pa);
          f.get(pa).get(batchBytes).op(OP.i32Add).set(paEnd);
          f.begin(OP.loop);
          f.get(pa).simdMem(SIMD.v128Load, 4, 0).set(a);
          f.get(pa).get(span).op(OP.i32Add).simdMem(SIMD.v128Load, 4, 0).set(b);
          f.get(pa).get(a).get(b).simd(SIMD.f64x2Add).simdMem(SIMD.v128Store, 4, 0);
          f.get(a).get(b).simd(SIMD.f64x2Sub).set(d);
          f.get(pa).get(span).op(OP.i32Add);
          f.get(d).get(wRe).simd(SIMD.f64x2Mul);
          f.get(d).get(d).shuffle(SWAP_LANES).get(wIm).simd(SIMD.f64x2Mul);
          f.simd(SIMD.f64x2Add).simdMem(SIMD.v128Store, 4, 0);
          f.get(pa).i32(16).op(OP.i32Add).tee(pa).get(paEnd).op(OP.i32LtU).branch(OP.brIf, 0);
          f.op(OP.end);
          f.get(tw).get(twStep).op(OP.i32Add).set(tw);
        },
      );
    },
  );
  f.get(half).i32(1).op(OP.i32ShrU).set(half);
  f.get(twStep).i32(1).op(OP.i32Shl).set(twStep);
  f.branch(OP.br, 0);
  f.op(OP.end).op(OP.end);
  return f;
}

/** Body of BitReverseWasm. */
export function bitReverseBody(): FunctionBody {
  const f = new FunctionBody([I32, I32, I32, I32, I32]);
  const [pBase, pStride, pN, pBatch, pRev] = [0, 1, 2, 3, 4];
  const i = f.local(I32);
  const r = f.local(I32);
  const pa = f.local(I32);
  const pb = f.local(I32);
  const paEnd = f.local(I32);
  const t = f.local(V128);
  forLoop(
    f,
    i,
    () => f.i32(0),
    () => f.get(pN),
    () => f.i32(1),
    () => {
      f.get(pRev).get(i).i32(2).op(OP.i32Shl).op(OP.i32Add).mem(OP.i32Load, 2, 0).set(r);
      f.get(i).get(r).op(OP.i32LtU).begin(OP.if);
      f.get(pBase).get(i).get(pStride).op(OP.i32Mul).op(OP.i32Add).set(pa);
      f.get(pBase).get(r).get(pStride).op(OP.i32Mul).op(OP.i32Add).set(pb);
      f.get(pa).get(pBatch).i32(4).op(OP.i32Shl).op(OP.i32Add).set(paEnd);
      f.begin(OP.loop);
      f.get(pa).simdMem(SIMD.v128Load, 4, 0).set(t);
      f.get(pa).get(pb).simdMem(SIMD.v128Load, 4, 0).simdMem(SIMD.v128Store, 4, 0);
      f.get(pb).get(t).simdMem(SIMD.v128Store, 4, 0);
      f.get(pb).i32(16).op(OP.i32Add).set(pb);
      f.get(pa).i32(16).op(OP.i32Add).tee(pa).get(paEnd).op(OP.i32LtU).branch(OP.brIf, 0);
      f.op(OP.end);
      f.op(OP.end);
    },
  );
  return f;
}
