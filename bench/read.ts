/**
 * Reading speed and memory of the visibility readers. Writes a UVFITS and an HDF5 file of
 * 10⁶ rows (time × baseline groups; 1 channel, 2 correlations RR and LL, so 2·10⁶
 * visibilities) to a temporary folder, then reads each in a fresh child process that reports
 * the read time and the peak resident memory of its own address space during the read.
 *
 * Figures: `read.uvfits.s`, `read.hdf5.s` [s]; `read.bytes_per_row` = (peak RSS − RSS before
 * the read) / visibilities [bytes] for UVFITS (the chunked reader), and the same per group and
 * for HDF5 (the whole file passes through the wasm heap). Targets: < 3 s, < 64 bytes per row.
 * "Row" here is one visibility (group × correlation), not one UVFITS group: the stricter of the
 * two readings, since a group of two correlations is allowed twice the bytes.
 *
 * How the peak is read (Linux): `VmHWM` of /proc/self/status, after writing "5" to
 * /proc/self/clear_refs, which resets the high-water mark to the current RSS (Linux ≥ 4.0,
 * Documentation/filesystems/proc.rst), so the peak is that of the read alone. Not
 * `process.resourceUsage().maxRSS` (getrusage ru_maxrss): the kernel carries it across execve
 * as the larger of the old and new address spaces' peaks, so a child spawned by a parent
 * holding 1 GB reports ≥ 1 GB (measured: 593 B per row instead of 65 with maxRSS; 161 B in a
 * full `npm run bench`, after the larger benchmarks had grown the parent). Elsewhere the child falls back to maxRSS, and the `peak` parameter of every figure
 * says which method was used (VmHWM-reset, VmHWM-since-exec or maxRSS).
 */
import { spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync, rmSync, statSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { performance } from "node:perf_hooks";
import type { BenchResult } from "./types.js";

const GROUPS = 1_000_000;
const CORRELATIONS = 2;
const CHILD_FLAG = "--vis-read-child";

/** How the child read its peak: see the module comment. "maxRSS" may include the parent's peak. */
type PeakMethod = "VmHWM-reset" | "VmHWM-since-exec" | "maxRSS";

/** Resident set size and its high-water mark [bytes] from /proc/self/status; undefined off Linux. */
function procStatus(): { rssBytes: number; hwmBytes: number } | undefined {
  let text: string;
  try {
    text = readFileSync("/proc/self/status", "latin1");
  } catch {
    return undefined;
  }
  const rss = /^VmRSS:\s+(\d+) kB/m.exec(text);
  const hwm = /^VmHWM:\s+(\d+) kB/m.exec(text);
  return rss && hwm ? { rssBytes: Number(rss[1]) * 1024, hwmBytes: Number(hwm[1]) * 1024 } : undefined;
}

/** Start a fresh peak measurement; returns how the peak will be read. */
function resetPeak(): PeakMethod {
  if (!procStatus()) return "maxRSS";
  try {
    writeFileSync("/proc/self/clear_refs", "5");
    return "VmHWM-reset";
  } catch {
    // older kernels or a read-only /proc: the mark then dates from exec, still this process's own
    return "VmHWM-since-exec";
  }
}

/** Child mode: read one file, print {seconds, rssBefore, peakRss, count, peak} as JSON. */
async function child(path: string): Promise<void> {
  const { readVisibilities } = await import("../src/vis/index.js");
  if (global.gc) global.gc();
  // RSS and its high-water mark from the same kernel counters, so their difference is exact
  const rssBefore = procStatus()?.rssBytes ?? process.memoryUsage.rss();
  const peak = resetPeak();
  const t0 = performance.now();
  const { vis } = await readVisibilities(path);
  const seconds = (performance.now() - t0) / 1000;
  const peakRss = peak === "maxRSS" ? process.resourceUsage().maxRSS * 1024 : procStatus()!.hwmBytes;
  process.stdout.write(JSON.stringify({ seconds, rssBefore, peakRss, count: vis.count, peak }) + "\n");
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
      const m = JSON.parse(r.stdout.trim().split("\n").pop()!) as { seconds: number; rssBefore: number; peakRss: number; count: number; peak: PeakMethod };
      if (m.count !== vis.count) throw new Error(`bench: read ${m.count} of ${vis.count} visibilities from ${fmt}`);
      const perVis = (m.peakRss - m.rssBefore) / m.count;
      const p = { ...params, fileBytes: statSync(path).size, peak: m.peak };
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
