/**
 * Worker-thread entry of the NUFFT pool: waits on the shared control block, takes one command
 * from its MessagePort, spreads or interpolates its range of sorted points, and signals done.
 * Spreading goes to the worker's private grid (zeroed first), so threads never race. When the
 * plan uses the SIMD engine, the worker instantiates the plan's compiled module on the plan's
 * shared WebAssembly memory (its private grid lives there too) and runs the same loops.
 *
 * Reference: see pool.ts (protocol), spreadInterp.ts and interpWasm.ts (the loops).
 */
import { receiveMessageOnPort, workerData, type MessagePort } from "node:worker_threads";
import { CTRL_DONE, CTRL_ERROR, CTRL_READY, CTRL_SEQ, type SharedPointState } from "./pool.js";
import { makeInterpolateFused, type InterpolateFused } from "./interpGen.js";
import { makeKernelEvaluator, type KernelEvaluator } from "./kernelPoly.js";
import { fillKernelBlock, interpolate, spread } from "./spreadInterp.js";
import { pointLoopWasmRange, type PointLoopWasm } from "./interpWasm.js";
import { instantiateWasm } from "./wasmRuntime.js";

/** Points per kernel block (as in nufft.ts). */
const KERNEL_BLOCK = 512;

const { ctrl, port } = workerData as { ctrl: Int32Array; port: MessagePort };

let state: SharedPointState | null = null;
let privateGrid: Float64Array = new Float64Array(0);
let evaluate: KernelEvaluator | null = null;
let interpolateFused: InterpolateFused | null = null;
let interpolateSimd: PointLoopWasm | null = null;
let spreadSimd: PointLoopWasm | null = null;
/** Byte offset of the private grid in the plan's WebAssembly memory (−1: a separate buffer). */
let privateOffset = -1;
let blockTab = new Float64Array(0);
let seen = 0;

Atomics.store(ctrl, CTRL_READY, 1);
Atomics.notify(ctrl, CTRL_READY);

for (;;) {
  Atomics.wait(ctrl, CTRL_SEQ, seen);
  const seq = Atomics.load(ctrl, CTRL_SEQ);
  if (seq === seen) continue;
  seen = seq;
  const received = receiveMessageOnPort(port);
  const msg = received ? (received.message as { op: string; [key: string]: unknown }) : { op: "none" };
  let exit = false;
  try {
    if (msg.op === "attach") {
      state = msg.state as SharedPointState;
      privateGrid = msg.privateGrid as Float64Array;
      evaluate = makeKernelEvaluator(state.kernel);
      interpolateFused = state.kernel.polynomial ? makeInterpolateFused(state.kernel) : null;
      privateOffset = msg.privateOffset as number;
      // The plan's compiled module on the plan's shared memory: same code, same bytes.
      const exports = state.wasm ? instantiateWasm(state.wasm.module, state.wasm.memory) : null;
      interpolateSimd = exports ? (exports.interpolate as PointLoopWasm) : null;
      spreadSimd = exports && privateOffset >= 0 ? (exports.spread as PointLoopWasm) : null;
      blockTab = new Float64Array(KERNEL_BLOCK * 2 * state.width);
    } else if ((msg.op === "interpolate" || msg.op === "spread") && state && evaluate) {
      const s = state;
      const kEnd = msg.kEnd as number;
      if (msg.op === "spread") privateGrid.fill(0);
      if (msg.op === "interpolate" && interpolateSimd && s.wasm) {
        pointLoopWasmRange(interpolateSimd, s.wasm, s.wasm.grid, s.nfx, s.nfy, msg.kStart as number, kEnd);
      } else if (msg.op === "spread" && spreadSimd && s.wasm) {
        pointLoopWasmRange(spreadSimd, s.wasm, privateOffset, s.nfx, s.nfy, msg.kStart as number, kEnd);
      } else if (msg.op === "interpolate" && interpolateFused) {
        interpolateFused(s.grid, s.nfx, s.nfy, s.cell, s.perm, s.fracX, s.fracY, msg.kStart as number, kEnd, s.sortedRe, s.sortedIm, false);
      } else for (let k0 = msg.kStart as number; k0 < kEnd; k0 += KERNEL_BLOCK) {
        const k1 = Math.min(kEnd, k0 + KERNEL_BLOCK);
        fillKernelBlock(evaluate, s.width, s.fracX, s.fracY, 0, k0, k1, blockTab);
        if (msg.op === "spread") {
          spread(privateGrid, s.nfx, s.nfy, s.width, s.cell, s.perm, blockTab, k0, k0, k1, s.sortedRe, s.sortedIm, false);
        } else {
          interpolate(s.grid, s.nfx, s.nfy, s.width, s.cell, s.perm, blockTab, k0, k0, k1, s.sortedRe, s.sortedIm, false);
        }
      }
    } else if (msg.op === "exit") {
      exit = true;
    } else {
      throw new Error(`unexpected command ${msg.op}`);
    }
  } catch (err) {
    Atomics.store(ctrl, CTRL_ERROR, 1);
    port.postMessage(err instanceof Error ? err.message : String(err));
  }
  Atomics.store(ctrl, CTRL_DONE, seen);
  Atomics.notify(ctrl, CTRL_DONE);
  if (exit) break;
}
port.close();
