/**
 * Runs the HDF5 reader in a worker thread with a time limit. The HDF5 library (compiled to
 * WebAssembly) can loop forever or abort on some corrupt files; in a worker, a hang is ended by
 * `terminate()` and an abort kills only the worker, and both become an InputError naming the
 * file. One worker is kept for later reads (unref'd, so it never keeps the program alive) and
 * replaced after a failure.
 *
 * The worker is compiled JavaScript in `<package root>/dist/src/vis/hdf5Worker.js`. When it
 * has not been built (tests running the TypeScript sources before `tsc`), the read happens in
 * this thread and a note says so.
 *
 * Reference: Node.js worker_threads documentation (Worker, terminate, transferList).
 */
import { existsSync } from "node:fs";
import { basename, dirname, join } from "node:path";
import { fileURLToPath } from "node:url";
import { Worker } from "node:worker_threads";
import { InputError } from "../errors.js";
import type { ReadReport, Visibilities } from "./types.js";

/** Time allowed for one HDF5 read [ms]: a base plus a rate generous for slow shared machines. */
function timeLimitMs(fileBytes: number): number {
  return 8_000 + fileBytes / 50_000; // + 20 s per GB
}

/** The package root: the nearest folder above this module holding package.json. */
function packageRoot(): string {
  let d = dirname(fileURLToPath(import.meta.url));
  for (let i = 0; i < 6; i++) {
    if (existsSync(join(d, "package.json"))) return d;
    d = dirname(d);
  }
  return d;
}

const WORKER_PATH = join(packageRoot(), "dist", "src", "vis", "hdf5Worker.js");

export interface Hdf5WorkerReply {
  id: number;
  ok: boolean;
  /** InputError text, or the text of another failure. */
  message?: string;
  inputError?: boolean;
  vis?: Visibilities;
  report?: ReadReport;
}

let worker: Worker | undefined;
let nextId = 0;
let chain: Promise<unknown> = Promise.resolve();

function getWorker(): Worker {
  if (!worker) {
    worker = new Worker(WORKER_PATH);
    worker.unref();
    const w = worker;
    w.on("exit", () => {
      if (worker === w) worker = undefined;
    });
  }
  return worker;
}

/**
 * Read an arcfringe HDF5 visibility file (see hdf5.ts) in the guarded worker.
 * @param path file path
 * @param fileBytes file size [bytes], for the time limit
 * @param opts.timeLimitMs time limit [ms] (default 8 s + 20 s per GB)
 */
export function readHdf5(path: string, fileBytes = 0, opts: { timeLimitMs?: number } = {}): Promise<{ vis: Visibilities; report: ReadReport }> {
  const run = async (): Promise<{ vis: Visibilities; report: ReadReport }> => {
    if (!existsSync(WORKER_PATH)) {
      const { readHdf5InThread } = await import("./hdf5.js");
      const r = await readHdf5InThread(path);
      r.report.notes.push(`${basename(path)}: HDF5 read without the guarding worker (dist/ not built)`);
      return r;
    }
    return readInWorker(path, opts.timeLimitMs ?? timeLimitMs(fileBytes));
  };
  // One read at a time per worker.
  const p = chain.then(run, run);
  chain = p.catch(() => undefined);
  return p;
}

function readInWorker(path: string, limitMs: number): Promise<{ vis: Visibilities; report: ReadReport }> {
  const name = basename(path);
  const w = getWorker();
  const id = nextId++;
  return new Promise((resolve, reject) => {
    let done = false;
    const finish = (): void => {
      done = true;
      clearTimeout(timer);
      w.off("message", onMessage);
      w.off("error", onError);
      w.off("exit", onExit);
    };
    const kill = (): void => {
      if (worker === w) worker = undefined;
      void w.terminate();
    };
    const timer = setTimeout(() => {
      if (done) return;
      finish();
      kill();
      reject(new InputError(`${name}: the HDF5 library did not finish reading within ${Number((limitMs / 1000).toPrecision(3))} s; the file is corrupt`));
    }, limitMs);
    const onMessage = (r: Hdf5WorkerReply): void => {
      if (r.id !== id || done) return;
      finish();
      if (r.ok && r.vis && r.report) resolve({ vis: r.vis, report: r.report });
      else if (r.inputError) reject(new InputError(r.message ?? `${name}: unreadable HDF5 file`));
      else {
        kill(); // the library may be in a bad state after an unexpected failure
        reject(new InputError(`${name}: the HDF5 library failed on the file (${(r.message ?? "").split("\n")[0].slice(0, 160)}); the file is corrupt`));
      }
    };
    const onError = (e: Error): void => {
      if (done) return;
      finish();
      kill();
      reject(new InputError(`${name}: the HDF5 library stopped on the file (${e.name}: ${e.message.split("\n")[0].slice(0, 160)}); the file is corrupt`));
    };
    const onExit = (code: number): void => {
      if (done) return;
      finish();
      reject(new InputError(`${name}: the HDF5 reader stopped (exit code ${code}) on the file; the file is corrupt`));
    };
    w.on("message", onMessage);
    w.on("error", onError);
    w.on("exit", onExit);
    w.postMessage({ id, path });
  });
}
