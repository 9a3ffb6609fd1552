/**
 * A small pool of NUFFT worker threads driven synchronously: commands go through a
 * MessagePort and a shared Int32 control block (sequence / done counters with Atomics.wait and
 * Atomics.notify), so `execute` stays a plain synchronous call while the workers spread or
 * interpolate their share of the points. Workers load compiled JavaScript from
 * `<package root>/dist/src/fourier/nufftWorker.js` (the package root is found from this
 * module's URL, so this works both from the TypeScript sources and from dist/).
 *
 * Reference: Node.js worker_threads documentation (receiveMessageOnPort, Atomics.wait).
 */
import { existsSync, readFileSync } from "node:fs";
import { dirname, join } from "node:path";
import { fileURLToPath } from "node:url";
import { MessageChannel, Worker, receiveMessageOnPort, type MessagePort } from "node:worker_threads";
import type { EsKernelPoly } from "./kernelPoly.js";
import type { WasmPointLayout } from "./planMemory.js";

/** Control-block slots (Int32). */
export const CTRL_READY = 0;
export const CTRL_SEQ = 1;
export const CTRL_DONE = 2;
export const CTRL_ERROR = 3;
export const CTRL_SLOTS = 4;

/** How long a command may run before the pool gives up on a worker [ms]. */
const WORKER_TIMEOUT_MS = 600_000;

/** What the workers need to see of a plan (all arrays over SharedArrayBuffers). */
export interface SharedPointState {
  grid: Float64Array;
  nfx: number;
  nfy: number;
  width: number;
  cell: Int32Array;
  perm: Uint32Array;
  /** Kernel fractions of the sorted points (spreadInterp.pointFractions). */
  fracX: Float64Array;
  fracY: Float64Array;
  /** The fitted kernel; each worker builds its own evaluator from it. */
  kernel: EsKernelPoly;
  sortedRe: Float64Array;
  sortedIm: Float64Array;
  /** The plan's WebAssembly memory and SIMD module when it uses them (planMemory.ts), else null. */
  wasm: WasmPointLayout | null;
}

/** A command for one worker. */
export type WorkerCommand =
  | { op: "interpolate"; kStart: number; kEnd: number }
  | { op: "spread"; kStart: number; kEnd: number }
  | { op: "exit" };

/** Locate `<package root>/dist/src/fourier/nufftWorker.js`. */
export function workerScriptPath(): string {
  let dir = dirname(fileURLToPath(import.meta.url));
  for (let up = 0; up < 6; up++) {
    const pkg = join(dir, "package.json");
    if (existsSync(pkg)) {
      try {
        if ((JSON.parse(readFileSync(pkg, "utf8")) as { name?: string }).name === "arcfringe") {
          return join(dir, "dist", "src", "fourier", "nufftWorker.js");
        }
      } catch {
        // not our package.json; keep walking up
      }
    }
    dir = dirname(dir);
  }
  throw new Error("NUFFT worker: cannot find the arcfringe package root above " + fileURLToPath(import.meta.url));
}

interface Slot {
  worker: Worker;
  port: MessagePort;
  ctrl: Int32Array;
  privateGrid: Float64Array;
  seq: number;
}

/** Worker threads for one NufftPlan. */
export class WorkerPool {
  private readonly slots: Slot[] = [];

  constructor(workers: number) {
    const script = workerScriptPath();
    if (!existsSync(script)) {
      throw new Error(`NUFFT worker: ${script} is missing; build first with "npx tsc -p tsconfig.json" (or use threads: 1)`);
    }
    for (let i = 0; i < workers; i++) {
      const ctrl = new Int32Array(new SharedArrayBuffer(4 * CTRL_SLOTS));
      const channel = new MessageChannel();
      const worker = new Worker(script, {
        workerData: { ctrl, port: channel.port2 },
        transferList: [channel.port2],
      });
      // A forgotten dispose() must not keep the process alive.
      worker.unref();
      channel.port1.unref();
      this.slots.push({ worker, port: channel.port1, ctrl, privateGrid: new Float64Array(0), seq: 0 });
    }
    for (const s of this.slots) {
      const t0 = Date.now();
      while (Atomics.load(s.ctrl, CTRL_READY) === 0) {
        Atomics.wait(s.ctrl, CTRL_READY, 0, 1000);
        if (Date.now() - t0 > 60_000) throw new Error("NUFFT worker: did not start within 60 s");
      }
    }
  }

  /** Bytes of the private spreading grids the pool allocated itself (not those in a plan's memory). */
  get privateGridBytes(): number {
    let b = 0;
    for (const s of this.slots) if (s.privateGrid.byteOffset === 0) b += s.privateGrid.byteLength;
    return b;
  }

  /** The private spreading grid of worker i. */
  privateGrid(i: number): Float64Array {
    return this.slots[i].privateGrid;
  }

  /**
   * Hand the shared point state to every worker (after setPoints).
   * @param privateGrids one spreading grid per worker inside the plan's WebAssembly memory
   *   (so the workers' SIMD code can reach it), or null: the pool allocates its own.
   */
  attach(state: SharedPointState, privateGrids: Float64Array[] | null): void {
    for (let i = 0; i < this.slots.length; i++) {
      const s = this.slots[i];
      let privateOffset = -1;
      if (privateGrids) {
        s.privateGrid = privateGrids[i];
        privateOffset = s.privateGrid.byteOffset;
      } else if (s.privateGrid.length !== state.grid.length || s.privateGrid.byteOffset !== 0) {
        s.privateGrid = new Float64Array(new SharedArrayBuffer(8 * state.grid.length));
      }
      s.port.postMessage({ op: "attach", state, privateGrid: s.privateGrid, privateOffset });
      this.signal(s);
    }
    this.waitAll(this.slots.length);
  }

  /** Send a command to worker i (returns at once). */
  start(i: number, command: WorkerCommand): void {
    const s = this.slots[i];
    s.port.postMessage(command);
    this.signal(s);
  }

  /** Block until workers 0 … n − 1 have finished their last command; rethrow their errors. */
  waitAll(n: number): void {
    for (let i = 0; i < n; i++) {
      const s = this.slots[i];
      const t0 = Date.now();
      for (;;) {
        const done = Atomics.load(s.ctrl, CTRL_DONE);
        if (done === s.seq) break;
        Atomics.wait(s.ctrl, CTRL_DONE, done, 1000);
        if (Date.now() - t0 > WORKER_TIMEOUT_MS) throw new Error(`NUFFT worker ${i}: no answer within ${WORKER_TIMEOUT_MS / 1000} s`);
      }
      if (Atomics.load(s.ctrl, CTRL_ERROR) !== 0) {
        const msg = receiveMessageOnPort(s.port);
        Atomics.store(s.ctrl, CTRL_ERROR, 0);
        throw new Error(`NUFFT worker ${i} failed: ${msg ? String(msg.message) : "unknown error"}`);
      }
    }
  }

  /** Stop the workers. */
  dispose(): void {
    for (const s of this.slots) {
      try {
        s.port.postMessage({ op: "exit" });
        this.signal(s);
      } catch {
        // already gone
      }
      void s.worker.terminate();
      s.port.close();
    }
    this.slots.length = 0;
  }

  private signal(s: Slot): void {
    s.seq++;
    Atomics.store(s.ctrl, CTRL_SEQ, s.seq);
    Atomics.notify(s.ctrl, CTRL_SEQ);
  }
}
