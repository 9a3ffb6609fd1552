/**
 * `npm run bench`: runs every benchmark module, prints each figure, and writes them all to
 * bench/results.json. A report, not a test: machines here are noisy, so no figure fails the run.
 * Usage: node --expose-gc dist/bench/run.js [name-filter]
 */
import { readdirSync, writeFileSync, mkdirSync } from "node:fs";
import { dirname, join } from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";
import type { BenchModule, BenchResult } from "./types.js";

const here = dirname(fileURLToPath(import.meta.url));
const filter = process.argv[2];
const modules = readdirSync(here)
  .filter((f) => f.endsWith(".js") && f !== "run.js" && f !== "types.js")
  .filter((f) => !filter || f.includes(filter))
  .sort();

const all: BenchResult[] = [];
for (const file of modules) {
  const mod = (await import(pathToFileURL(join(here, file)).href)) as BenchModule;
  if (typeof mod.run !== "function") continue;
  process.stderr.write(`bench: ${file}\n`);
  const results = await mod.run();
  for (const r of results) {
    const params = Object.entries(r.params).map(([k, v]) => `${k}=${v}`).join(" ");
    process.stdout.write(`${r.name.padEnd(28)} ${formatValue(r.value).padStart(12)} ${r.unit.padEnd(10)} ${params}\n`);
    all.push(r);
  }
}
// results.json lives in the source folder bench/, not in dist/
const outPath = join(here, "..", "..", "bench", "results.json");
mkdirSync(dirname(outPath), { recursive: true });
writeFileSync(outPath, JSON.stringify(all, null, 2) + "\n");
process.stderr.write(`bench: wrote ${all.length} figures to bench/results.json\n`);

function formatValue(v: number): string {
  if (!Number.isFinite(v)) return String(v);
  const a = Math.abs(v);
  return a !== 0 && (a < 1e-3 || a >= 1e6) ? v.toExponential(3) : v.toPrecision(4);
}
