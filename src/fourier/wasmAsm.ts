/**
 * A minimal WebAssembly binary writer: enough to emit, at plan time, one module that imports a
 * memory and exports a few functions whose bodies are straight-line code generated for one
 * kernel (interpWasm.ts). It knows the handful of scalar and 128-bit SIMD instructions those
 * bodies use, the LEB128 encodings, and the section layout; nothing else.
 *
 * Reference: WebAssembly Core Specification 2.0 (W3C, 2022), §5 "Binary Format" (module
 * sections §5.5, instructions §5.4 including the 0xFD-prefixed vector instructions).
 */

/** Value types (spec §5.3.1). */
export const I32 = 0x7f;
export const F64 = 0x7c;
export const V128 = 0x7b;
export type ValType = typeof I32 | typeof F64 | typeof V128;

/** Scalar opcodes used by the generated code (spec §5.4). */
export const OP = Object.freeze({
  block: 0x02,
  loop: 0x03,
  if: 0x04,
  else: 0x05,
  end: 0x0b,
  br: 0x0c,
  brIf: 0x0d,
  localGet: 0x20,
  localSet: 0x21,
  localTee: 0x22,
  i32Load: 0x28,
  f64Load: 0x2b,
  i32Store: 0x36,
  f64Store: 0x39,
  i32Const: 0x41,
  f64Const: 0x44,
  i32Eqz: 0x45,
  i32LtS: 0x48,
  i32LtU: 0x49,
  i32GtU: 0x4b,
  i32LeU: 0x4d,
  i32GeU: 0x4f,
  f64Sqrt: 0x9f,
  i32Add: 0x6a,
  i32Sub: 0x6b,
  i32Mul: 0x6c,
  i32And: 0x71,
  i32Shl: 0x74,
  i32ShrU: 0x76,
  f64Add: 0xa0,
  f64Sub: 0xa1,
  f64Mul: 0xa2,
});

/** Vector opcodes (after the 0xFD prefix; spec §5.4.8). */
export const SIMD = Object.freeze({
  v128Load: 0x00,
  v128Load64Splat: 0x0a,
  v128Store: 0x0b,
  v128Const: 0x0c,
  i8x16Shuffle: 0x0d,
  f64x2Splat: 0x14,
  f64x2ExtractLane: 0x21,
  f64x2ReplaceLane: 0x22,
  f64x2Sqrt: 0xef,
  f64x2Add: 0xf0,
  f64x2Sub: 0xf1,
  f64x2Mul: 0xf2,
});

/**
 * A growable byte buffer. Module encoding runs once per plan, i.e. as cold (unoptimised) code:
 * typed-array writes and bulk `set` copies keep it to a fraction of a millisecond, where
 * pushing tens of thousands of numbers through plain arrays cost tens of milliseconds.
 */
class ByteWriter {
  private bytes = new Uint8Array(1024);
  private readonly f64Scratch = new Float64Array(1);
  private readonly f64ScratchBytes = new Uint8Array(this.f64Scratch.buffer);
  length = 0;

  push(byte: number): void {
    if (this.length === this.bytes.length) this.grow(1);
    this.bytes[this.length++] = byte;
  }

  /** The 8 bytes of a double in the platform's (little-endian) order. */
  pushF64(x: number): void {
    this.f64Scratch[0] = x;
    for (let i = 0; i < 8; i++) this.push(this.f64ScratchBytes[i]);
  }

  append(other: ByteWriter): void {
    if (this.length + other.length > this.bytes.length) this.grow(other.length);
    this.bytes.set(other.bytes.subarray(0, other.length), this.length);
    this.length += other.length;
  }

  /** A copy of the bytes written. */
  toBytes(): Uint8Array {
    return this.bytes.slice(0, this.length);
  }

  private grow(extra: number): void {
    const next = new Uint8Array(Math.max(2 * this.bytes.length, this.length + extra));
    next.set(this.bytes.subarray(0, this.length));
    this.bytes = next;
  }
}

/** Unsigned LEB128 (spec §5.2.2). */
function uleb(out: ByteWriter, value: number): void {
  let v = value >>> 0;
  do {
    let byte = v & 0x7f;
    v >>>= 7;
    if (v !== 0) byte |= 0x80;
    out.push(byte);
  } while (v !== 0);
}

/** Signed LEB128 of a 32-bit integer (spec §5.2.2). */
function sleb(out: ByteWriter, value: number): void {
  let v = value | 0;
  for (;;) {
    const byte = v & 0x7f;
    v >>= 7;
    const done = (v === 0 && (byte & 0x40) === 0) || (v === -1 && (byte & 0x40) !== 0);
    out.push(done ? byte : byte | 0x80);
    if (done) return;
  }
}

/** Little-endian bytes of a double (the wasm encoding; every platform Node runs on is little-endian). */
function f64Bytes(out: ByteWriter, x: number): void {
  out.pushF64(x);
}

/** Body of one function: declared locals and the instruction bytes. */
export class FunctionBody {
  readonly params: ValType[];
  private readonly locals: ValType[] = [];
  private readonly code = new ByteWriter();

  constructor(params: ValType[]) {
    this.params = params;
  }

  /** Declare a new local of type t and return its index. */
  local(t: ValType): number {
    this.locals.push(t);
    return this.params.length + this.locals.length - 1;
  }

  op(opcode: number): this {
    this.code.push(opcode);
    return this;
  }

  get(i: number): this {
    this.code.push(OP.localGet);
    uleb(this.code, i);
    return this;
  }

  set(i: number): this {
    this.code.push(OP.localSet);
    uleb(this.code, i);
    return this;
  }

  tee(i: number): this {
    this.code.push(OP.localTee);
    uleb(this.code, i);
    return this;
  }

  i32(value: number): this {
    this.code.push(OP.i32Const);
    sleb(this.code, value);
    return this;
  }

  f64(value: number): this {
    this.code.push(OP.f64Const);
    f64Bytes(this.code, value);
    return this;
  }

  /** A scalar memory access: opcode, log2 alignment, byte offset (memarg, spec §5.4.6). */
  mem(opcode: number, alignLog2: number, offset: number): this {
    this.code.push(opcode);
    uleb(this.code, alignLog2);
    uleb(this.code, offset);
    return this;
  }

  /** A vector instruction without immediates. */
  simd(opcode: number): this {
    this.code.push(0xfd);
    uleb(this.code, opcode);
    return this;
  }

  /** A vector memory access (v128.load/store/load64_splat) with alignment and byte offset. */
  simdMem(opcode: number, alignLog2: number, offset: number): this {
    this.simd(opcode);
    uleb(this.code, alignLog2);
    uleb(this.code, offset);
    return this;
  }

  /** f64x2.extract_lane / replace_lane with its lane index. */
  lane(opcode: number, laneIndex: number): this {
    this.simd(opcode);
    this.code.push(laneIndex);
    return this;
  }

  /** v128.const holding (a, b) as two doubles. */
  f64x2(a: number, b: number): this {
    this.simd(SIMD.v128Const);
    f64Bytes(this.code, a);
    f64Bytes(this.code, b);
    return this;
  }

  /** i8x16.shuffle with its 16 lane indices. */
  shuffle(lanes: readonly number[]): this {
    this.simd(SIMD.i8x16Shuffle);
    for (let i = 0; i < lanes.length; i++) this.code.push(lanes[i]);
    return this;
  }

  /** Start a block, loop or if with no result (block type 0x40). */
  begin(opcode: number): this {
    this.code.push(opcode);
    this.code.push(0x40);
    return this;
  }

  /** br / br_if to the label `depth` levels out. */
  branch(opcode: number, depth: number): this {
    this.code.push(opcode);
    uleb(this.code, depth);
    return this;
  }

  /** Encoded body, size first: local declarations (one group per local), the code, `end`. */
  encodeInto(target: ByteWriter): void {
    const out = new ByteWriter();
    uleb(out, this.locals.length);
    for (let i = 0; i < this.locals.length; i++) {
      uleb(out, 1);
      out.push(this.locals[i]);
    }
    out.append(this.code);
    out.push(OP.end);
    uleb(target, out.length);
    target.append(out);
  }
}

/** Memory import of a module: pages of 64 KiB, shared (needs a maximum) or not. */
export interface MemoryImport {
  minPages: number;
  maxPages: number;
  shared: boolean;
}

function section(out: ByteWriter, id: number, content: ByteWriter): void {
  out.push(id);
  uleb(out, content.length);
  out.append(content);
}

function name(out: ByteWriter, s: string): void {
  uleb(out, s.length);
  for (let i = 0; i < s.length; i++) out.push(s.charCodeAt(i));
}

/**
 * Bytes of a module importing `env.memory` and exporting the given functions (no results;
 * every function returns nothing).
 * Reference: WebAssembly Core Specification 2.0 §5.5 (type, import, function, export, code sections).
 */
export function encodeModule(memory: MemoryImport, functions: { name: string; body: FunctionBody }[]): Uint8Array {
  const out = new ByteWriter();
  for (const b of [0x00, 0x61, 0x73, 0x6d, 0x01, 0x00, 0x00, 0x00]) out.push(b);
  const types = new ByteWriter();
  uleb(types, functions.length);
  for (const f of functions) {
    types.push(0x60);
    uleb(types, f.body.params.length);
    for (const p of f.body.params) types.push(p);
    uleb(types, 0);
  }
  section(out, 1, types);
  const imports = new ByteWriter();
  uleb(imports, 1);
  name(imports, "env");
  name(imports, "memory");
  imports.push(0x02);
  imports.push(memory.shared ? 0x03 : 0x01);
  uleb(imports, memory.minPages);
  uleb(imports, memory.maxPages);
  section(out, 2, imports);
  const funcs = new ByteWriter();
  uleb(funcs, functions.length);
  for (let i = 0; i < functions.length; i++) uleb(funcs, i);
  section(out, 3, funcs);
  const exports = new ByteWriter();
  uleb(exports, functions.length);
  for (let i = 0; i < functions.length; i++) {
    name(exports, functions[i].name);
    exports.push(0x00);
    uleb(exports, i);
  }
  section(out, 7, exports);
  const code = new ByteWriter();
  uleb(code, functions.length);
  for (const f of functions) f.body.encodeInto(code);
  section(out, 10, code);
  return out.toBytes();
}
