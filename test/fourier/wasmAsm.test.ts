import { describe, expect, it } from "vitest";
import { FunctionBody, I32, OP, SIMD, V128, encodeModule } from "../../src/fourier/wasmAsm.js";
import { compileWasm, instantiateWasm, newWasmMemory, wasmValidates } from "../../src/fourier/wasmRuntime.js";

describe("wasmAsm (WebAssembly binary writer)", () => {
  it("emits a module the engine validates and runs: constants with multi-byte LEB128, memory offsets, SIMD", () => {
    // Reference: WebAssembly Core Specification 2.0 §5 (binary format). The function stores
    // i32 constants whose signed LEB128 takes 1 to 5 bytes (63, −65, 300, −70000, 2³¹ − 1),
    // a double, and a f64x2 sum at an offset > 127 (2-byte unsigned LEB128); the values read
    // back must be exactly those (analytic).
    const f = new FunctionBody([I32]);
    const tmp = f.local(V128);
    const ints = [63, -65, 300, -70000, 2147483647];
    ints.forEach((v, i) => f.get(0).i32(v).mem(OP.i32Store, 2, 4 * i));
    f.get(0).f64(-1.25e-300).mem(OP.f64Store, 3, 24);
    f.f64x2(1.5, -2).f64x2(0.25, 8).simd(SIMD.f64x2Add).set(tmp);
    f.get(0).get(tmp).simdMem(SIMD.v128Store, 4, 144);
    const bytes = encodeModule({ minPages: 1, maxPages: 65536, shared: false }, [{ name: "run", body: f }]);
    expect(wasmValidates(bytes)).toBe(true);
    const memory = newWasmMemory(1, false);
    const run = instantiateWasm(compileWasm(bytes), memory).run as (base: number) => void;
    run(16);
    expect(Array.from(new Int32Array(memory.buffer, 16, 5))).toEqual(ints);
    expect(new Float64Array(memory.buffer, 40, 1)[0]).toBe(-1.25e-300);
    expect(Array.from(new Float64Array(memory.buffer, 160, 2))).toEqual([1.75, 6]);
  });

  it("emits loops and branches that run the intended number of times", () => {
    // Σ_{i=0}^{n−1} i = n(n − 1)/2 (analytic), with n = 1000 → 499500.
    const f = new FunctionBody([I32, I32]);
    const i = f.local(I32);
    const acc = f.local(I32);
    f.begin(OP.block).begin(OP.loop);
    f.get(i).get(1).op(OP.i32GeU).branch(OP.brIf, 1);
    f.get(acc).get(i).op(OP.i32Add).set(acc);
    f.get(i).i32(1).op(OP.i32Add).set(i);
    f.branch(OP.br, 0);
    f.op(OP.end).op(OP.end);
    f.get(0).get(acc).mem(OP.i32Store, 2, 0);
    const memory = newWasmMemory(1, false);
    const bytes = encodeModule({ minPages: 1, maxPages: 65536, shared: false }, [{ name: "sum", body: f }]);
    const sum = instantiateWasm(compileWasm(bytes), memory).sum as (out: number, n: number) => void;
    sum(0, 1000);
    expect(new Int32Array(memory.buffer, 0, 1)[0]).toBe(499500);
  });
});
