/**
 * Where a NufftPlan keeps its fine grid and per-point arrays (start cells, kernel fractions,
 * sorted results), and the SIMD code that works on them. When WebAssembly SIMD is available
 * they all live in one WebAssembly memory, as typed-array views, so the generated code
 * (interpWasm.ts: interpolation and spreading; fftWasm.ts: the fine-grid FFTs) and the
 * JavaScript loops read
 * the same bytes; otherwise they are ordinary typed arrays and the plan uses its JavaScript
 * paths. Either way, with threads the storage is shared memory that the workers see.
 *
 * Layout of the WebAssembly memory (byte offsets, each 16-byte aligned): FFT tables (forward
 * and backward twiddles and the bit-reversal table, for nfx then nfy), the grid (nfx·nfy
 * interleaved complex doubles), the worker threads' private spreading grids (when shared),
 * then cell (Int32 × m), fracX, fracY, sortedRe, sortedIm (Float64 × m each). The memory never
 * grows (views stay valid); setPoints with more points than it holds, or far fewer, makes a
 * new one. Where the engine cannot provide the memory (address space), the plan falls back to
 * ordinary arrays.
 *
 * Reference: WebAssembly JavaScript Interface (W3C, 2022), §4.4 (Memory objects and their buffers).
 */
import type { EsKernelPoly } from "./kernelPoly.js";
import { pointLoopWasmBody, type PointLoopWasm, type PointWasmOffsets } from "./interpWasm.js";
import { TWIDDLE_ENTRY_BYTES, bitReverseBody, bitReverseTable, fftBatchBody, fftTwiddleTable, type BitReverseWasm, type FftBatchWasm } from "./fftWasm.js";
import { encodeModule } from "./wasmAsm.js";
import { WASM_PAGE_BYTES, compileWasm, instantiateWasm, newWasmMemory, wasmValidates, type WasmMemory, type WasmModule } from "./wasmRuntime.js";

/** Largest WebAssembly memory a plan uses [bytes]; above it the arrays stay ordinary. */
const MAX_WASM_BYTES = 2 ** 31;

/** Adjacent columns transformed together: 16 complex doubles = 256 bytes per row (see fftColumns). */
const COLUMN_BLOCK = 16;

/** What a worker needs to run the SIMD loops on the plan's memory (byte offsets). */
export interface WasmPointLayout extends PointWasmOffsets {
  module: WasmModule;
  memory: WasmMemory;
  /** The fine grid. */
  grid: number;
}

/** Byte offsets of one axis's FFT tables. */
interface FftTables {
  forward: number;
  backward: number;
  rev: number;
}

/** Bytes of a module exporting `interpolate`, `spread`, `fft` and `bitReverse` (shared memory or not). */
function moduleBytes(kernel: EsKernelPoly, shared: boolean): Uint8Array {
  return encodeModule({ minPages: 1, maxPages: 65536, shared }, [
    { name: "interpolate", body: pointLoopWasmBody(kernel, "interpolate") },
    { name: "spread", body: pointLoopWasmBody(kernel, "spread") },
    { name: "fft", body: fftBatchBody() },
    { name: "bitReverse", body: bitReverseBody() },
  ]);
}

function align16(bytes: number): number {
  return Math.ceil(bytes / 16) * 16;
}

/** The plan's grid and per-point arrays, in WebAssembly memory when possible. */
export class PlanMemory {
  /** The fine grid, interleaved complex nfx × nfy (views change on `allocate`). */
  grid: Float64Array;
  /** Start cell of each sorted point (spreadInterp.ts layout). */
  cell: Int32Array = new Int32Array(0);
  /** Kernel fractions of the sorted points (empty unless stored). */
  fracX: Float64Array = new Float64Array(0);
  fracY: Float64Array = new Float64Array(0);
  /** Values in sorted order: interpolation results, or point values to spread. */
  sortedRe: Float64Array = new Float64Array(0);
  sortedIm: Float64Array = new Float64Array(0);
  /** Non-null while the arrays are in WebAssembly memory with the SIMD interpolation ready. */
  layout: WasmPointLayout | null = null;
  /** The generated interpolation and spreading on `layout` (null with it). */
  interpolate: PointLoopWasm | null = null;
  spread: PointLoopWasm | null = null;
  /** Worker threads' private spreading grids, inside the shared memory (see allocate). */
  privateGrids: Float64Array[] = [];
  private fftFn: FftBatchWasm | null = null;
  private bitReverseFn: BitReverseWasm | null = null;
  private readonly nfx: number;
  private readonly nfy: number;
  private readonly tablesX: FftTables;
  private readonly tablesY: FftTables;
  private readonly tableBytes: number;

  private readonly gridLength: number;
  private readonly shared: boolean;
  private readonly module: WasmModule | null;
  private memory: WasmMemory | null = null;

  /**
   * @param nfx, nfy fine-grid size (powers of two).
   * @param shared allocate shared memory (the plan uses worker threads).
   * @param kernel the fitted kernel for the SIMD path, or null for ordinary arrays only.
   */
  constructor(nfx: number, nfy: number, shared: boolean, kernel: EsKernelPoly | null) {
    this.nfx = nfx;
    this.nfy = nfy;
    this.gridLength = 2 * nfx * nfy;
    this.shared = shared;
    const axis = (n: number, at: number): FftTables => ({
      forward: at,
      backward: at + (n / 2) * TWIDDLE_ENTRY_BYTES,
      rev: at + n * TWIDDLE_ENTRY_BYTES,
    });
    this.tablesX = axis(nfx, 0);
    const yAt = align16(nfx * TWIDDLE_ENTRY_BYTES + 4 * nfx);
    this.tablesY = axis(nfy, yAt);
    this.tableBytes = yAt + align16(nfy * TWIDDLE_ENTRY_BYTES + 4 * nfy);
    let module: WasmModule | null = null;
    if (kernel && kernel.polynomial) {
      const bytes = moduleBytes(kernel, shared);
      // Engines without 128-bit SIMD (or shared memories) reject the module: keep the JS path.
      if (wasmValidates(bytes)) module = compileWasm(bytes);
    }
    this.module = module;
    this.grid = new Float64Array(0);
    this.allocate(0, shared, true);
  }

  /** True when the grid is in WebAssembly memory and fftRows/fftColumns may be used. */
  get simd(): boolean {
    return this.fftFn !== null;
  }

  /**
   * In-place complex FFT of fine-grid rows rowStart … rowEnd − 1 (length nfx each):
   * Σ_l x_l e^{∓2πi lk/nfx}, − forward, + backward (unscaled). Only when `simd`.
   */
  fftRows(rowStart: number, rowEnd: number, inverse: boolean): void {
    const fft = this.fftFn as FftBatchWasm;
    const rev = this.bitReverseFn as BitReverseWasm;
    const t = this.tablesX;
    const rowBytes = 16 * this.nfx;
    const g = (this.layout as WasmPointLayout).grid;
    for (let r = rowStart; r < rowEnd; r++) {
      fft(g + r * rowBytes, 16, this.nfx, 1, inverse ? t.backward : t.forward);
      rev(g + r * rowBytes, 16, this.nfx, 1, t.rev);
    }
  }

  /**
   * In-place complex FFT of fine-grid columns colStart … colEnd − 1 (length nfy each), in
   * blocks of adjacent columns (contiguous 256-byte runs per row: a narrower block would
   * touch one 64-byte line per row at a power-of-two stride, which defeats the cache's sets).
   * Sign as fftRows. Only when `simd`.
   */
  fftColumns(colStart: number, colEnd: number, inverse: boolean): void {
    const fft = this.fftFn as FftBatchWasm;
    const rev = this.bitReverseFn as BitReverseWasm;
    const t = this.tablesY;
    const rowBytes = 16 * this.nfx;
    const g = (this.layout as WasmPointLayout).grid;
    for (let c0 = colStart; c0 < colEnd; c0 += COLUMN_BLOCK) {
      const nb = Math.min(COLUMN_BLOCK, colEnd - c0);
      fft(g + 16 * c0, rowBytes, this.nfy, nb, inverse ? t.backward : t.forward);
      rev(g + 16 * c0, rowBytes, this.nfy, nb, t.rev);
    }
  }

  /** Bytes held: the WebAssembly memory, or the ordinary arrays. */
  get bytes(): number {
    if (this.memory) return this.memory.buffer.byteLength;
    return this.grid.byteLength + this.cell.byteLength + this.fracX.byteLength + this.fracY.byteLength + this.sortedRe.byteLength + this.sortedIm.byteLength;
  }

  /**
   * Size the per-point arrays for m points (the grid keeps its contents only when nothing had
   * to be reallocated; plans refill it on every execute anyway).
   * @param sharedPoints per-point arrays in shared memory (threads will read them).
   * @param perPoint false: start cells only (kernel fractions computed per block, no sorted results).
   * @param workerGrids private spreading grids to reserve for worker threads (SIMD path only;
   *   otherwise the pool allocates its own).
   */
  allocate(m: number, sharedPoints: boolean, perPoint: boolean, workerGrids = 0): void {
    const cellBytes = align16(4 * m);
    const vecBytes = perPoint ? align16(8 * m) : 0;
    const gridAt = this.tableBytes;
    const privateAt = gridAt + 8 * this.gridLength;
    const pointsAt = privateAt + workerGrids * 8 * this.gridLength;
    const total = pointsAt + cellBytes + 4 * vecBytes;
    if (this.module && perPoint && total <= MAX_WASM_BYTES && this.ensureMemory(total)) {
      const memory = this.memory as WasmMemory;
      const buf = memory.buffer;
      const o = {
        grid: gridAt,
        cell: pointsAt,
        fracX: pointsAt + cellBytes,
        fracY: pointsAt + cellBytes + vecBytes,
        sortedRe: pointsAt + cellBytes + 2 * vecBytes,
        sortedIm: pointsAt + cellBytes + 3 * vecBytes,
      };
      this.grid = new Float64Array(buf, gridAt, this.gridLength);
      this.privateGrids = [];
      for (let t = 0; t < workerGrids; t++) this.privateGrids.push(new Float64Array(buf, privateAt + t * 8 * this.gridLength, this.gridLength));
      this.cell = new Int32Array(buf, o.cell, m);
      this.fracX = new Float64Array(buf, o.fracX, m);
      this.fracY = new Float64Array(buf, o.fracY, m);
      this.sortedRe = new Float64Array(buf, o.sortedRe, m);
      this.sortedIm = new Float64Array(buf, o.sortedIm, m);
      this.layout = { module: this.module, memory, ...o };
      return;
    }
    // Ordinary arrays (no SIMD path, kernel recomputed per block, or too many points).
    const gridInWasm = this.memory !== null;
    this.memory = null;
    this.layout = null;
    this.interpolate = null;
    this.spread = null;
    this.privateGrids = [];
    this.fftFn = null;
    this.bitReverseFn = null;
    if (gridInWasm || this.grid.length !== this.gridLength || this.grid.buffer instanceof SharedArrayBuffer !== this.shared) {
      this.grid = this.shared ? new Float64Array(new SharedArrayBuffer(8 * this.gridLength)) : new Float64Array(this.gridLength);
    }
    const f64 = (n: number) => (sharedPoints ? new Float64Array(new SharedArrayBuffer(8 * n)) : new Float64Array(n));
    this.cell = sharedPoints ? new Int32Array(new SharedArrayBuffer(4 * m)) : new Int32Array(m);
    const n = perPoint ? m : 0;
    this.fracX = f64(n);
    this.fracY = f64(n);
    this.sortedRe = f64(n);
    this.sortedIm = f64(n);
  }

  /** Drop everything (the plan is disposed). */
  release(): void {
    this.memory = null;
    this.layout = null;
    this.interpolate = null;
    this.spread = null;
    this.privateGrids = [];
    this.fftFn = null;
    this.bitReverseFn = null;
    this.grid = new Float64Array(0);
    this.cell = new Int32Array(0);
    this.fracX = new Float64Array(0);
    this.fracY = new Float64Array(0);
    this.sortedRe = new Float64Array(0);
    this.sortedIm = new Float64Array(0);
  }

  /**
   * A WebAssembly memory of at least `total` bytes (a new one when the current is too small,
   * or more than twice too large); false when the engine cannot provide it.
   */
  private ensureMemory(total: number): boolean {
    const have = this.memory ? this.memory.buffer.byteLength : 0;
    if (have >= total && have <= 2 * total + (1 << 20)) return true;
    let memory: WasmMemory;
    try {
      memory = newWasmMemory(Math.max(1, Math.ceil(total / WASM_PAGE_BYTES)), this.shared);
    } catch {
      // Out of address space for one memory of this size: use ordinary arrays.
      return false;
    }
    this.memory = memory;
    const exports = instantiateWasm(this.module as WasmModule, memory);
    this.interpolate = exports.interpolate as PointLoopWasm;
    this.spread = exports.spread as PointLoopWasm;
    this.fftFn = exports.fft as FftBatchWasm;
    this.bitReverseFn = exports.bitReverse as BitReverseWasm;
    this.writeTables(memory.buffer);
    return true;
  }

  private writeTables(buf: ArrayBuffer | SharedArrayBuffer): void {
    for (const [n, t] of [[this.nfx, this.tablesX], [this.nfy, this.tablesY]] as const) {
      fftTwiddleTable(n, false, new Float64Array(buf, t.forward, 2 * n));
      fftTwiddleTable(n, true, new Float64Array(buf, t.backward, 2 * n));
      bitReverseTable(n, new Int32Array(buf, t.rev, n));
    }
  }
}
