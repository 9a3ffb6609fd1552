/**
 * Worker thread that reads arcfringe HDF5 visibility files with h5wasm on request and sends
 * the columns back by transfer (no copy). Started by hdf5Guard.ts, which enforces the time
 * limit. Message in: `{ id, path }`; out: Hdf5WorkerReply.
 */
import { parentPort } from "node:worker_threads";
import { InputError } from "../errors.js";
import { readHdf5InThread } from "./hdf5.js";
import type { Hdf5WorkerReply } from "./hdf5Guard.js";

const port = parentPort;
if (port) {
  port.on("message", (req: { id: number; path: string }) => {
    readHdf5InThread(req.path).then(
      ({ vis, report }) => {
        const buffers = [vis.uLambda, vis.vLambda, vis.wLambda, vis.reJy, vis.imJy, vis.weight, vis.channel, vis.antenna1, vis.antenna2, vis.timeS, vis.correlation, vis.channelFreqHz].map((a) => a.buffer as ArrayBuffer);
        const reply: Hdf5WorkerReply = { id: req.id, ok: true, vis, report };
        port.postMessage(reply, [...new Set(buffers)]);
      },
      (e: unknown) => {
        const reply: Hdf5WorkerReply = {
          id: req.id,
          ok: false,
          inputError: e instanceof InputError,
          message: e instanceof Error ? (e instanceof InputError ? e.message : `${e.name}: ${e.message}`) : String(e),
        };
        port.postMessage(reply);
      },
    );
  });
}
