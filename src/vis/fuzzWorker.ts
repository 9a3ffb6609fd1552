/**
 * Worker thread for the reader fuzz test: reads the visibility files it is sent and reports,
 * for each, whether it was read, refused with an InputError, or failed in any other way
 * (which the test counts as a bug). Runs compiled from dist/ so that the test can impose
 * `resourceLimits` and kill it on a hang.
 *
 * Message in: `{ id: number, path: string }`. Message out: `{ id, outcome: "ok" | "input" |
 * "other", message, rssBytes }`.
 */
import { parentPort } from "node:worker_threads";
import { InputError } from "../errors.js";
import { readVisibilities } from "./read.js";

export interface FuzzRequest {
  id: number;
  path: string;
}

export interface FuzzReply {
  id: number;
  outcome: "ok" | "input" | "other";
  message: string;
  /** Resident set size of the process after the read [bytes]. */
  rssBytes: number;
}

const port = parentPort;
if (port) {
  port.on("message", (req: FuzzRequest) => {
    readVisibilities(req.path).then(
      ({ vis }) => reply(req.id, "ok", `${vis.count} visibilities`),
      (e: unknown) => {
        if (e instanceof InputError) reply(req.id, "input", e.message);
        else reply(req.id, "other", e instanceof Error ? `${e.name}: ${e.message}\n${e.stack ?? ""}` : String(e));
      },
    );
  });
}

function reply(id: number, outcome: FuzzReply["outcome"], message: string): void {
  const msg: FuzzReply = { id, outcome, message, rssBytes: process.memoryUsage.rss() };
  port!.postMessage(msg);
}
