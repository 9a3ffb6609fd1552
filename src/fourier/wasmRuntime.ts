/**
 * Typed access to the engine's WebAssembly API (the project compiles against lib ES2022 without
 * DOM typings, so the few calls used here are typed locally): memories, synchronous compilation
 * and instantiation, and a check that 128-bit SIMD is supported.
 *
 * Reference: WebAssembly JavaScript Interface (W3C, 2022), §4 (Module, Instance, Memory).
 */

/** A WebAssembly.Memory: its buffer is a SharedArrayBuffer when created shared. */
export interface WasmMemory {
  readonly buffer: ArrayBuffer | SharedArrayBuffer;
}

/** A compiled module (can be posted to worker threads). */
export type WasmModule = object;

interface WasmApi {
  Memory: new (d: { initial: number; maximum?: number; shared?: boolean }) => WasmMemory;
  Module: new (bytes: Uint8Array) => WasmModule;
  Instance: new (m: WasmModule, imports: object) => { exports: Record<string, unknown> };
  validate(bytes: Uint8Array): boolean;
}

/** Bytes per WebAssembly page. */
export const WASM_PAGE_BYTES = 65536;

function api(): WasmApi | null {
  const wa = (globalThis as { WebAssembly?: WasmApi }).WebAssembly;
  return wa ?? null;
}

/**
 * A memory of `pages` 64 KiB pages that cannot grow (so typed-array views over it stay valid);
 * shared memories have a SharedArrayBuffer that worker threads can see.
 */
export function newWasmMemory(pages: number, shared: boolean): WasmMemory {
  const wa = api();
  if (!wa) throw new Error("WebAssembly is not available in this JavaScript engine");
  return new wa.Memory(shared ? { initial: pages, maximum: pages, shared: true } : { initial: pages, maximum: pages });
}

/** Compile module bytes synchronously (small generated modules only). */
export function compileWasm(bytes: Uint8Array): WasmModule {
  const wa = api();
  if (!wa) throw new Error("WebAssembly is not available in this JavaScript engine");
  return new wa.Module(bytes);
}

/** Instantiate a module whose only import is `env.memory`; returns its exports. */
export function instantiateWasm(module: WasmModule, memory: WasmMemory): Record<string, unknown> {
  const wa = api();
  if (!wa) throw new Error("WebAssembly is not available in this JavaScript engine");
  return new wa.Instance(module, { env: { memory } }).exports;
}

/** True when the engine validates `bytes` (used to detect 128-bit SIMD support). */
export function wasmValidates(bytes: Uint8Array): boolean {
  const wa = api();
  if (!wa) return false;
  try {
    return wa.validate(bytes);
  } catch {
    return false;
  }
}
