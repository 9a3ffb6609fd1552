/**
 * Reading speed and memory of the visibility readers. Writes a UVFITS and an HDF5 file of
 * 10⁶ rows (time × baseline groups; 1 channel, 2 correlations RR and LL, so 2·10⁶
 * visibilities) to a temporary folder, then reads each in a fresh child process that reports
 * the read time and its peak resident memory (process.resourceUsage().maxRSS).
 *
 * Figures: `read.uvfits.s`, `read.hdf5.s` [s]; `read.bytes_per_row` = (peak RSS − RSS before
 * the read) / visibilities [bytes] for UVFITS (the chunked reader), and the same per group and
 * for HDF5 (the whole file passes through the wasm heap). Targets: < 3 s, < 64 bytes per row.
 */
import { spawnSync } from "node:child_process";
import { mkdtempSync, rmSync, statSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { performance } from "node:perf_hooks";
import type { BenchResult } from "./types.js";

const GROUPS = 1_000_000;
const CORRELATIONS = 2;
const CHILD_FLAG = "--vis-read-child";

/** Child mode: read one file, print {seconds, rssBefore, maxRss, count} as JSON. */
async function child(path: string): Promise<void> {
  const { readVisibilities } = await import("../src/vis/index.js");
  if (global.gc) global.gc();
  const rssBefore = process.memoryUsage.rss();
  const t0 = performance.now();
  const { vis } = await readVisibilities(path);
  const seconds = (performance.now() - t0) / 1000;
  const maxRss = process.resourceUsage().maxRSS * 1024;
  process.stdout.write(JSON.stringify({ seconds, rssBefore, maxRss, count: vis.count }) + "\n");
  process.exit(0);
}

if (process.argv[2] === CHILD_FLAG) await child(process.argv[3]);

async function makeVis() {
  const { allocate } = await import("../src/vis/uvfits.js");
  const { Rng } = await import("../src/random.js");
  const n = GROUPS * CORRELATIONS;
  const vis = allocate(n, new Float64Array([230e9]), 2e9, 2451544.5);
  const rng = new Rng(5);
  const nAnt = 50;
  let k = 0;
  let g = 0;
  for (let t = 0; g < GROUPS; t++) {
    for (let a = 1; a <= nAnt && g < GROUPS; a++) {
      for (let b = a + 1; b <= nAnt && g < GROUPS; b++, g++) {
        const u = (rng.uniform() - 0.5) * 2e6;
        const v = (rng.uniform() - 0.5) * 2e6;
        for (let c = 0; c < CORRELATIONS; c++, k++) {
          vis.uLambda[k] = u; vis.vLambda[k] = v; vis.wLambda[k] = 0.01 * u;
          vis.reJy[k] = rng.normal(); vis.imJy[k] = rng.normal(); vis.weight[k] = 1;
          vis.antenna1[k] = a; vis.antenna2[k] = b; vis.timeS[k] = 6 * t; vis.correlation[k] = -1 - c;
        }
      }
    }
  }
  vis.circularFeeds = true;
  return vis;
}

export async function run(): Promise<BenchResult[]> {
  const { writeVisibilities } = await import("../src/vis/index.js");
  const dir = mkdtempSync(join(tmpdir(), "arcfringe-bench-read-"));
  const self = fileURLToPath(import.meta.url);
  const out: BenchResult[] = [];
  try {
    const vis = await makeVis();
    const params = { groups: GROUPS, channels: 1, correlations: CORRELATIONS, visibilities: vis.count };
    for (const [fmt, ext] of [["uvfits", ".uvfits"], ["hdf5", ".h5"]] as const) {
      const path = join(dir, `bench${ext}`);
      const tw = performance.now();
      await writeVisibilities(path, vis);
      const writeS = (performance.now() - tw) / 1000;
      const r = spawnSync(process.execPath, ["--expose-gc", self, CHILD_FLAG, path], { encoding: "utf8", maxBuffer: 1 << 20 });
      if (r.status !== 0) throw new Error(`bench read child failed for ${fmt}: ${r.stderr}`);
      const m = JSON.parse(r.stdout.trim().split("\n").pop()!) as { seconds: number; rssBefore: number; maxRss: number; count: number };
      if (m.count !== vis.count) throw new Error(`bench: read ${m.count} of ${vis.count} visibilities from ${fmt}`);
      const perVis = (m.maxRss - m.rssBefore) / m.count;
      const p = { ...params, fileBytes: statSync(path).size };
      out.push({ name: `read.${fmt}.s`, value: m.seconds, unit: "s", params: p });
      out.push({ name: `write.${fmt}.s`, value: writeS, unit: "s", params: p });
      if (fmt === "uvfits") {
        out.push({ name: "read.bytes_per_row", value: perVis, unit: "B", params: { ...p, row: "one visibility (group x correlation)" } });
        out.push({ name: "read.uvfits.bytes_per_group", value: perVis * CORRELATIONS, unit: "B", params: p });
      } else {
        out.push({ name: "read.hdf5.bytes_per_row", value: perVis, unit: "B", params: { ...p, row: "one visibility (group x correlation)" } });
      }
    }
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
  return out;
}
