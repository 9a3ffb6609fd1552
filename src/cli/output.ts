/**
 * Shared helpers of the CLI commands: aligned human-readable tables on stdout, JSON on stdout,
 * warnings and notes on stderr, colour only on a terminal and never when NO_COLOR is set
 * (https://no-color.org, common practice), number formatting with units, and the output-folder
 * and extension checks every command makes before it computes anything.
 * Only src/cli touches stdout/stderr (STYLE.md §1); this module is light so `--help` stays fast.
 */
import { statSync } from "node:fs";
import { extname } from "node:path";
import { InputError } from "../errors.js";

/** True when `stream` is a terminal and NO_COLOR is unset or empty (https://no-color.org). */
export function useColour(stream: NodeJS.WriteStream = process.stdout): boolean {
  const noColour = process.env.NO_COLOR;
  if (noColour !== undefined && noColour !== "") return false;
  return stream.isTTY === true;
}

const ANSI = { bold: "\x1b[1m", yellow: "\x1b[33m", red: "\x1b[31m", dim: "\x1b[2m", reset: "\x1b[0m" } as const;

function paint(text: string, style: keyof typeof ANSI, stream: NodeJS.WriteStream): string {
  return useColour(stream) ? `${ANSI[style]}${text}${ANSI.reset}` : text;
}

let pipeGuard = false;

/**
 * A reader that stops early (`arcfringe inspect f --json | head`) closes the pipe; the next
 * write then fails with EPIPE. That is not an error of ours: end quietly, as Unix tools do.
 */
function guardPipe(): void {
  if (pipeGuard) return;
  pipeGuard = true;
  process.stdout.on("error", (err: NodeJS.ErrnoException) => {
    if (err.code === "EPIPE") process.exit(0);
    throw err;
  });
}

/** Write one line to stdout. */
export function out(line = ""): void {
  guardPipe();
  process.stdout.write(line + "\n");
}

/** A bold heading line on stdout. */
export function heading(text: string): void {
  out(paint(text, "bold", process.stdout));
}

/** A warning on stderr: `warning: <message>` (yellow on a terminal). */
export function warn(message: string): void {
  process.stderr.write(paint("warning:", "yellow", process.stderr) + " " + message + "\n");
}

/** An informational note (progress, choices made) on stderr, so stdout stays data. */
export function note(message: string): void {
  process.stderr.write(message + "\n");
}

/**
 * Format rows of (label, value) as aligned lines: labels padded to the longest one.
 * @param indent spaces before every line
 */
export function formatTable(rows: ReadonlyArray<readonly [string, string]>, indent = 2): string[] {
  const width = rows.reduce((w, [k]) => Math.max(w, [...k].length), 0);
  return rows.map(([k, v]) => " ".repeat(indent) + k + " ".repeat(width - [...k].length + 2) + v);
}

/** Print a table (see formatTable) to stdout. */
export function printTable(rows: ReadonlyArray<readonly [string, string]>, indent = 2): void {
  for (const l of formatTable(rows, indent)) out(l);
}

/** JSON.stringify with typed arrays as arrays and non-finite numbers as null (JSON has no NaN). */
export function toJsonText(value: unknown): string {
  return JSON.stringify(
    value,
    (_key, v) => {
      if (typeof v === "number" && !Number.isFinite(v)) return null;
      if (ArrayBuffer.isView(v) && !(v instanceof DataView)) return Array.from(v as unknown as ArrayLike<number>);
      if (v instanceof Map) return Object.fromEntries(v);
      return v;
    },
    2,
  );
}

/** Print `value` as JSON on stdout. */
export function printJson(value: unknown): void {
  guardPipe();
  process.stdout.write(toJsonText(value) + "\n");
}

/** A number with `digits` significant digits, without a trailing exponent for ordinary magnitudes. */
export function fmt(x: number | null | undefined, digits = 4): string {
  if (x === null || x === undefined || !Number.isFinite(x)) return "n/a";
  if (x === 0) return "0";
  const a = Math.abs(x);
  if (a >= 1e-3 && a < 1e6) return String(Number(x.toPrecision(digits)));
  return x.toExponential(digits - 1);
}

/** A number with its unit, e.g. `fmt1(0.25, "″")` → "0.25″", `fmt1(3, "m")` → "3 m". */
export function withUnit(x: number | null | undefined, unit: string, digits = 4): string {
  const s = fmt(x, digits);
  if (s === "n/a") return s;
  return unit === "″" || unit === "°" ? s + unit : `${s} ${unit}`;
}

/** Flux density with an SI prefix chosen for readability: Jy, mJy or µJy. */
export function fluxText(jy: number | null | undefined, unit = "Jy", digits = 4): string {
  if (jy === null || jy === undefined || !Number.isFinite(jy)) return "n/a";
  const a = Math.abs(jy);
  if (a !== 0 && a < 1e-3) return `${fmt(jy * 1e6, digits)} µ${unit}`;
  if (a !== 0 && a < 1) return `${fmt(jy * 1e3, digits)} m${unit}`;
  return `${fmt(jy, digits)} ${unit}`;
}

/**
 * Check an output folder before any work: it may exist (as a folder) or not yet exist; a file
 * of that name is refused. The folder itself is created only when the results are written.
 * @param flag the option that named it, for the message
 */
export function checkOutDir(dir: string, flag = "--out"): void {
  let st;
  try {
    st = statSync(dir);
  } catch {
    return; // created when the outputs are written
  }
  if (!st.isDirectory()) throw new InputError(`${flag} ${dir}: exists and is not a folder; give a folder path for the outputs`);
}

/** Extension (lower case, with the dot) of a path, or "" when it has none. */
export function extensionOf(path: string): string {
  return extname(path).toLowerCase();
}
