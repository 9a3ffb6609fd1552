/**
 * Fuzz test of the readers: seeded random mutations of valid UVFITS, HDF5 and CSV files
 * (flipped bytes, truncations, swapped header cards, huge NAXIS/GCOUNT/PCOUNT, NaN cells,
 * garbage cells). Each mutated file must either read or throw InputError; any other
 * exception, a hang (per-case time limit) or a crash of the worker (heap limit) fails.
 *
 * The reads run in a worker thread compiled to dist/ (src/vis/fuzzWorker.ts) with
 * `resourceLimits`, so a runaway allocation kills the worker, not the test runner. Run
 * `npx tsc -p tsconfig.json` first (npm test does, as `pretest`).
 */
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { Worker } from "node:worker_threads";
import { afterAll, describe, expect, it } from "vitest";
import { Rng } from "../../src/random.js";
import { writeVisibilities } from "../../src/vis/index.js";
import type { FuzzReply } from "../../src/vis/fuzzWorker.js";
import { syntheticVis } from "./synthetic.js";
import { SHARED_DIR } from "../helpers.js";

const ROOT = fileURLToPath(new URL("../../", import.meta.url));
const WORKER = join(ROOT, "dist", "src", "vis", "fuzzWorker.js");
/** Per-case limit [ms]: a small file reads in milliseconds; longer than the HDF5 reader's own 8 s limit. */
const CASE_TIMEOUT_MS = 20_000;
/** The worker's V8 heap limit [MB]. */
const HEAP_MB = 256;
/** Resident memory after any read must stay below this [bytes]: the files are < 1 MB. */
const MAX_RSS = 1.5e9;

const dir = mkdtempSync(join(tmpdir(), "arcfringe-vis-fuzz-"));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

class FuzzRunner {
  private worker!: Worker;
  private pending?: { resolve: (r: FuzzReply) => void; reject: (e: Error) => void };
  private exitError?: Error;
  constructor() {
    this.start();
  }
  private start(): void {
    this.exitError = undefined;
    this.worker = new Worker(WORKER, { resourceLimits: { maxOldGenerationSizeMb: HEAP_MB, maxYoungGenerationSizeMb: 32 } });
    this.worker.on("message", (r: FuzzReply) => {
      const p = this.pending;
      this.pending = undefined;
      p?.resolve(r);
    });
    const fail = (e: Error): void => {
      this.exitError = e;
      const p = this.pending;
      this.pending = undefined;
      p?.reject(e);
    };
    this.worker.on("error", fail);
    this.worker.on("exit", (code) => fail(new Error(`worker exited with code ${code}`)));
  }
  /** Read one file in the worker; hangs and crashes become "other" outcomes and restart it. */
  async read(id: number, path: string): Promise<FuzzReply> {
    if (this.exitError) this.start();
    let timer: NodeJS.Timeout | undefined;
    try {
      return await new Promise<FuzzReply>((resolve, reject) => {
        this.pending = { resolve, reject };
        timer = setTimeout(() => reject(new Error(`no answer within ${CASE_TIMEOUT_MS} ms (hang)`)), CASE_TIMEOUT_MS);
        this.worker.postMessage({ id, path });
      });
    } catch (e) {
      this.pending = undefined;
      await this.worker.terminate();
      this.start();
      return { id, outcome: "other", message: (e as Error).message, rssBytes: 0 };
    } finally {
      clearTimeout(timer);
    }
  }
  async close(): Promise<void> {
    this.worker.removeAllListeners("exit");
    await this.worker.terminate();
  }
}

type Mutator = (b: Buffer, rng: Rng) => Buffer;

const flipBytes: Mutator = (b, rng) => {
  const out = Buffer.from(b);
  const n = 1 + rng.int(8);
  for (let i = 0; i < n; i++) out[rng.int(out.length)] ^= 1 + rng.int(255);
  return out;
};
const truncate: Mutator = (b, rng) => b.subarray(0, rng.int(b.length));
/** Overwrite a random stretch with random bytes. */
const garbageRun: Mutator = (b, rng) => {
  const out = Buffer.from(b);
  const start = rng.int(out.length);
  const len = 1 + rng.int(200);
  for (let i = start; i < Math.min(out.length, start + len); i++) out[i] = rng.int(256);
  return out;
};

// ---- UVFITS-specific mutations: they act on the 80-character cards of the primary header.
function headerEnd(b: Buffer): number {
  for (let c = 0; c + 80 <= b.length; c += 80) if (b.toString("latin1", c, c + 8) === "END     ") return c;
  return 0;
}
const swapCards: Mutator = (b, rng) => {
  const out = Buffer.from(b);
  const n = headerEnd(b) / 80;
  if (n < 2) return out;
  const i = rng.int(n), j = rng.int(n);
  const a = Buffer.from(out.subarray(i * 80, i * 80 + 80));
  out.copy(out, i * 80, j * 80, j * 80 + 80);
  a.copy(out, j * 80);
  return out;
};
const HUGE = ["999999999", "2147483647", "9007199254740993", "1E300", "-5", "0", "3.5", "'abc'", "NaN"];
const hugeSize: Mutator = (b, rng) => {
  const out = Buffer.from(b);
  const keys = ["NAXIS", "NAXIS2", "NAXIS3", "NAXIS4", "NAXIS5", "GCOUNT", "PCOUNT", "BITPIX", "NAXIS1", "TFIELDS", "CRPIX3", "CDELT4"];
  // Applies to the primary header and, sometimes, a table header (NAXIS2 of AIPS AN = rows).
  const key = keys[rng.int(keys.length)];
  const starts: number[] = [];
  for (let c = 0; c + 80 <= out.length; c += 80) if (out.toString("latin1", c, c + 8).trimEnd() === key) starts.push(c);
  if (starts.length === 0) return out;
  const c = starts[rng.int(starts.length)];
  out.write(`${key.padEnd(8)}= ${HUGE[rng.int(HUGE.length)].padStart(20)}`.padEnd(80), c, "latin1");
  return out;
};
const nanData: Mutator = (b, rng) => {
  const out = Buffer.from(b);
  const start = Math.ceil((headerEnd(b) + 80) / 2880) * 2880;
  const n = 1 + rng.int(20);
  for (let i = 0; i < n && start + 4 < out.length; i++) {
    const at = start + 4 * rng.int(Math.floor((out.length - start) / 4));
    out.writeUInt32BE(rng.uniform() < 0.5 ? 0x7fc00000 : rng.uniform() < 0.5 ? 0x7f800000 : 0x80000000, at);
  }
  return out;
};
const headerFlip: Mutator = (b, rng) => {
  const out = Buffer.from(b);
  const end = headerEnd(b) + 80;
  const n = 1 + rng.int(4);
  for (let i = 0; i < n; i++) out[rng.int(end)] = 32 + rng.int(95);
  return out;
};

// ---- CSV-specific mutations
const csvCell: Mutator = (b, rng) => {
  const lines = b.toString("latin1").split("\n");
  const GARBAGE = ["nan", "inf", "-inf", "", "abc", "1e999", "0x10", "1,2", "--1", "1e", ".", "  ", "\u00e9", "NaN", "1.5.2", "-0"];
  const n = 1 + rng.int(3);
  for (let i = 0; i < n; i++) {
    const li = rng.int(lines.length);
    const cells = lines[li].split(",");
    cells[rng.int(cells.length)] = GARBAGE[rng.int(GARBAGE.length)];
    lines[li] = cells.join(",");
  }
  return Buffer.from(lines.join("\n"), "latin1");
};
const csvLines: Mutator = (b, rng) => {
  const lines = b.toString("latin1").split("\n");
  const i = rng.int(lines.length), j = rng.int(lines.length);
  if (rng.uniform() < 0.5) [lines[i], lines[j]] = [lines[j], lines[i]];
  else lines.splice(i, 1);
  return Buffer.from(lines.join("\n"), "latin1");
};

// ---- HDF5-specific mutations: near the superblock and object headers (first 4 kB).
const hdf5Front: Mutator = (b, rng) => {
  const out = Buffer.from(b);
  const n = 1 + rng.int(6);
  for (let i = 0; i < n; i++) out[rng.int(Math.min(out.length, 4096))] = rng.int(256);
  return out;
};

async function runCases(
  runner: FuzzRunner,
  label: string,
  ext: string,
  bases: Buffer[],
  mutators: [Mutator, number][],
  count: number,
  seed: number,
): Promise<{ ok: number; input: number; bad: string[]; maxRss: number }> {
  const rng = new Rng(seed);
  const total = mutators.reduce((s, [, w]) => s + w, 0);
  const res = { ok: 0, input: 0, bad: [] as string[], maxRss: 0 };
  for (let i = 0; i < count; i++) {
    // The first base is small and fast; later ones (a real file) are used one time in five.
    const base = bases.length > 1 && rng.uniform() < 0.2 ? bases[1 + rng.int(bases.length - 1)] : bases[0];
    let x = rng.uniform() * total;
    let m = mutators[0][0];
    for (const [f, w] of mutators) {
      if ((x -= w) < 0) {
        m = f;
        break;
      }
    }
    let mutated = m(base, rng);
    if (rng.uniform() < 0.2) mutated = mutators[rng.int(mutators.length)][0](mutated, rng); // two at once
    const path = join(dir, `${label}-${i % 50}${ext}`);
    writeFileSync(path, mutated);
    const tCase = Date.now();
    const r = await runner.read(i, path);
    if (Date.now() - tCase > 1000) console.log(`fuzz: slow case ${label} ${i} (${m.name}): ${Date.now() - tCase} ms: ${r.outcome} ${r.message.slice(0, 200)}`);
    if (r.outcome === "ok") res.ok++;
    else if (r.outcome === "input") {
      res.input++;
      if (r.message.includes("\n")) res.bad.push(`${label} case ${i}: multi-line InputError: ${r.message.slice(0, 300)}`);
    } else {
      const keep = join(dir, `FAILED-${label}-${i}${ext}`);
      writeFileSync(keep, mutated);
      res.bad.push(`${label} case ${i} (${m.name}): ${r.message.slice(0, 400)}`);
    }
    res.maxRss = Math.max(res.maxRss, r.rssBytes);
  }
  return res;
}

describe("reader fuzz test (worker thread, heap limit, per-case time limit)", () => {
  it("every mutated UVFITS, HDF5 and CSV file reads or throws InputError", async () => {
    expect(existsSync(WORKER), `${WORKER} is missing: run npx tsc -p tsconfig.json first`).toBe(true);
    const vis = syntheticVis({ seed: 31, nAnt: 5, nTimes: 4, freqHz: [100e9, 100.1e9, 100.3e9], correlations: [-1, -2], dropEvery: 9 });
    await writeVisibilities(join(dir, "base.uvfits"), vis);
    await writeVisibilities(join(dir, "base.h5"), vis);
    await writeVisibilities(join(dir, "base.csv"), vis);
    const uvf = [readFileSync(join(dir, "base.uvfits")), readFileSync(`${SHARED_DIR}data/real/vis_multichan.vis`)];
    const h5 = [readFileSync(join(dir, "base.h5"))];
    const csv = [readFileSync(join(dir, "base.csv"))];

    const runner = new FuzzRunner();
    try {
      const t0 = Date.now();
      const a = await runCases(runner, "uvfits", ".uvfits", uvf,
        [[flipBytes, 2], [truncate, 2], [garbageRun, 1], [swapCards, 2], [hugeSize, 3], [nanData, 1], [headerFlip, 2]], 1000, 101);
      const t1 = Date.now();
      const b = await runCases(runner, "hdf5", ".h5", h5, [[flipBytes, 3], [truncate, 2], [garbageRun, 2], [hdf5Front, 3]], 400, 202);
      const t2 = Date.now();
      const c = await runCases(runner, "csv", ".csv", csv, [[csvCell, 4], [csvLines, 2], [flipBytes, 1], [truncate, 1], [garbageRun, 1]], 800, 303);
      const seconds = (Date.now() - t0) / 1000;
      console.log(`fuzz: ${seconds} s (uvfits ${(t1 - t0) / 1000} s, hdf5 ${(t2 - t1) / 1000} s); read/refused:`, a.ok, a.input, b.ok, b.input, c.ok, c.input);
      const bad = [...a.bad, ...b.bad, ...c.bad];
      expect(bad, bad.join("\n")).toEqual([]);
      // The mutations must exercise both outcomes, or the test proves nothing.
      for (const [name, r] of [["uvfits", a], ["hdf5", b], ["csv", c]] as const) {
        expect(r.ok, `${name}: some mutated files still read`).toBeGreaterThan(20);
        expect(r.input, `${name}: some mutated files are refused`).toBeGreaterThan(50);
        expect(r.maxRss, `${name}: resident memory after a read`).toBeLessThan(MAX_RSS);
      }
    } finally {
      await runner.close();
    }
  });
});
