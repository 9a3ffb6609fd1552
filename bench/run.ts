/**
 * `npm run bench`: runs every benchmark module, prints each figure, and writes them all to
 * bench/results.json. A report, not a test: machines here are noisy, so no figure fails the run.
 * Usage: node --expose-gc dist/bench/run.js [name-filter]
 *
 * Each module runs in a fresh child process. Why: run one after another in one process, a module
 * inherits the heap, the JIT state and the idle worker threads of those before it; the pixelised
 * inversion then measured 0.89 s in the full run against 0.41 s alone.
 */
import { spawnSync } from "node:child_process";
import { mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync, mkdirSync } from "node:fs";
import { tmpdir } from "node:os";
import { dirname, join } from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";
import type { BenchModule, BenchResult } from "./types.js";

const here = dirname(fileURLToPath(import.meta.url));
const self = fileURLToPath(import.meta.url);
const CHILD_FLAG = "--bench-module";

if (process.argv[2] === CHILD_FLAG) {
  // Child: run one module and write its figures as JSON to the given path.
  const [file, outPath] = process.argv.slice(3);
  const mod = (await import(pathToFileURL(join(here, file)).href)) as BenchModule;
  const results = typeof mod.run === "function" ? await mod.run() : [];
  writeFileSync(outPath, JSON.stringify(results));
  process.exit(0);
}

const filter = process.argv[2];
const modules = readdirSync(here)
  .filter((f) => f.endsWith(".js") && f !== "run.js" && f !== "types.js")
  .filter((f) => !filter || f.includes(filter))
  .sort();

const all: BenchResult[] = [];
const scratch = mkdtempSync(join(tmpdir(), "arcfringe-bench-"));
let failed = 0;
try {
  for (const file of modules) {
    process.stderr.write(`bench: ${file}\n`);
    const outPath = join(scratch, `${file}.json`);
    // the child's own output (progress lines of the code under test) goes to stderr
    const r = spawnSync(process.execPath, ["--expose-gc", self, CHILD_FLAG, file, outPath], { stdio: ["ignore", 2, 2] });
    if (r.status !== 0) {
      process.stderr.write(`bench: ${file} failed (exit ${r.status ?? r.signal}); its figures are missing\n`);
      failed++;
      continue;
    }
    const results = JSON.parse(readFileSync(outPath, "utf8")) as BenchResult[];
    for (const res of results) {
      const params = Object.entries(res.params).map(([k, v]) => `${k}=${v}`).join(" ");
      process.stdout.write(`${res.name.padEnd(28)} ${formatValue(res.value).padStart(12)} ${res.unit.padEnd(10)} ${params}\n`);
      all.push(res);
    }
  }
} finally {
  rmSync(scratch, { recursive: true, force: true });
}
// results.json lives in the source folder bench/, not in dist/
const outPath = join(here, "..", "..", "bench", "results.json");
mkdirSync(dirname(outPath), { recursive: true });
writeFileSync(outPath, JSON.stringify(all, null, 2) + "\n");
process.stderr.write(`bench: wrote ${all.length} figures to bench/results.json${failed ? `; ${failed} module(s) failed` : ""}\n`);
if (failed) process.exitCode = 1;

function formatValue(v: number): string {
  if (!Number.isFinite(v)) return String(v);
  const a = Math.abs(v);
  return a !== 0 && (a < 1e-3 || a >= 1e6) ? v.toExponential(3) : v.toPrecision(4);
}
