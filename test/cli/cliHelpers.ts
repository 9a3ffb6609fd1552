/**
 * Helpers of the CLI tests: run the compiled executable (bin/arcfringe.js → dist/, built by
 * `npx tsc -p tsconfig.json`, which `npm test` runs first), make scratch folders, find the
 * peak of a FITS image in its own WCS, and read a CSV table with a parser independent of
 * src/vis/csv.ts.
 */
import { spawnSync } from "node:child_process";
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { expect } from "vitest";
import { axisWcs, readFitsImage } from "../../src/io/fits.js";

export const ROOT = new URL("../../", import.meta.url).pathname;
export const BIN = join(ROOT, "bin", "arcfringe.js");

export interface CliResult {
  code: number | null;
  stdout: string;
  stderr: string;
}

/** Run `arcfringe <args>` with NO_COLOR set; fails the test if dist/ was not built. */
export function runCli(args: string[], env: Record<string, string> = {}): CliResult {
  if (!existsSync(join(ROOT, "dist", "src", "cli", "main.js"))) {
    throw new Error("dist/ is missing: run `npx tsc -p tsconfig.json` before the CLI tests");
  }
  const r = spawnSync(process.execPath, [BIN, ...args], {
    encoding: "utf8",
    env: { ...process.env, NO_COLOR: "1", ...env },
    timeout: 120_000,
  });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

const scratchDirs: string[] = [];

/** Remove every scratch folder made so far (call from afterAll; kept if ARCFRINGE_KEEP_TEST_FILES is set). */
export function cleanScratch(): void {
  if (process.env.ARCFRINGE_KEEP_TEST_FILES) return;
  for (const d of scratchDirs.splice(0)) rmSync(d, { recursive: true, force: true });
}

/** A fresh scratch folder under the system temp folder (see cleanScratch). */
export function scratch(prefix: string): string {
  const dir = mkdtempSync(join(tmpdir(), `arcfringe-cli-${prefix}-`));
  scratchDirs.push(dir);
  return dir;
}

/** Write a JSON file and return its path. */
export function writeJson(path: string, value: unknown): string {
  writeFileSync(path, JSON.stringify(value, null, 2));
  return path;
}

/** Assert a run succeeded, printing its stderr otherwise. */
export function expectOk(r: CliResult): void {
  expect(r.code, `exit ${r.code}; stderr:\n${r.stderr}`).toBe(0);
}

/**
 * Assert the shape of a bad-input failure (DESIGN.md exit codes, STYLE.md §6): exit 2, exactly
 * one stderr line that matches `pattern`, no stack trace.
 */
export function expectInputError(r: CliResult, pattern: RegExp): void {
  expect(r.code, `exit code; stderr:\n${r.stderr}`).toBe(2);
  const lines = r.stderr.split("\n").filter((l) => l.trim() !== "");
  expect(lines.length, `stderr should be one line:\n${r.stderr}`).toBe(1);
  expect(lines[0]).toMatch(pattern);
  expect(r.stderr).not.toMatch(/^\s+at /m);
}

/** The brightest pixel of a 2-D FITS image and its offsets [arcsec] from CRPIX by CDELT (WCS). */
export function fitsPeak(path: string): { xArcsec: number; yArcsec: number; value: number; cellXArcsec: number; cellYArcsec: number } {
  const img = readFitsImage(path);
  const [nx] = img.shape;
  let best = 0;
  for (let p = 1; p < img.data.length; p++) if (img.data[p] > img.data[best]) best = p;
  const p1 = (best % nx) + 1; // FITS pixel numbers are 1-based
  const p2 = Math.floor(best / nx) + 1;
  const a1 = axisWcs(img.header, 1, path);
  const a2 = axisWcs(img.header, 2, path);
  // Intermediate world coordinates of Greisen & Calabretta 2002 eq. 1–3 (no rotation): (p − CRPIX)·CDELT.
  const unit = (cunit: string): number => (cunit === "arcsec" ? 1 : 3600);
  return {
    xArcsec: (p1 - a1.crpix) * a1.cdelt * unit(a1.cunit),
    yArcsec: (p2 - a2.crpix) * a2.cdelt * unit(a2.cunit),
    value: img.data[best],
    cellXArcsec: a1.cdelt * unit(a1.cunit),
    cellYArcsec: a2.cdelt * unit(a2.cunit),
  };
}

/** Columns of a CSV table by header name (comment lines `#` skipped); a parser of our own. */
export function readCsvColumns(path: string): Record<string, number[]> {
  const lines = readFileSync(path, "utf8").split("\n").filter((l) => l.trim() !== "" && !l.startsWith("#"));
  const names = lines[0].split(",").map((s) => s.trim());
  const cols: Record<string, number[]> = {};
  for (const n of names) cols[n] = [];
  for (let i = 1; i < lines.length; i++) {
    const cells = lines[i].split(",");
    names.forEach((n, j) => cols[n].push(Number(cells[j])));
  }
  return cols;
}

/** A small observation file: 8 antennas, ±1 h at 230 GHz in 2 channels (a few thousand visibilities). */
export function smallObservation(dir: string, extra: Record<string, unknown> = {}): string {
  return writeJson(join(dir, "obs.json"), {
    name: "small test array",
    array: { generate: "disc", n_ant: 8, max_baseline_m: 600, seed: 3 },
    dish_m: 12,
    site_lat_deg: -23.0,
    phase_centre_deg: [150.0, -30.0],
    hour_angle_h: [-1, 1],
    integration_s: 300,
    freq_ghz: 230,
    bandwidth_ghz: 2,
    channels: 2,
    tsys_k: 80,
    aperture_efficiency: 0.7,
    ...extra,
  });
}
