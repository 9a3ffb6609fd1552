/**
 * Read a model or sky file from disk: JSON text → validated model → ModelSpec. Syntax errors
 * are reported with line and column; everything else by the schema (schema.ts).
 */
import { readFileSync } from "node:fs";
import { InputError } from "../errors.js";
import { locateJsonError } from "./jsonLocate.js";
import { buildSpec, initialVector, type ModelSpec, toNumbers } from "./parameters.js";
import { validateModel } from "./schema.js";
import type { NumericModel } from "./types.js";

/** 1-based line and column of a character offset. */
function lineColumn(text: string, offset: number): { line: number; column: number } {
  let line = 1;
  let lineStart = 0;
  const end = Math.min(offset, text.length);
  for (let i = 0; i < end; i++) {
    if (text.charCodeAt(i) === 10) {
      line++;
      lineStart = i + 1;
    }
  }
  return { line, column: end - lineStart + 1 };
}

/** Offset of a JSON syntax error: the engine's "at position N", else our own scan. */
function errorOffset(text: string, message: string): number | undefined {
  const pos = /at position (\d+)/.exec(message);
  if (pos) return Number(pos[1]);
  return locateJsonError(text);
}

/**
 * JSON.parse with one clear line on failure: `model.json:3:5: not valid JSON (...)`.
 * @throws InputError
 */
export function parseJsonText(text: string, label: string): unknown {
  const body = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text; // a UTF-8 byte-order mark
  try {
    return JSON.parse(body);
  } catch (err) {
    const message = err instanceof Error ? err.message : String(err);
    if (!(err instanceof SyntaxError)) {
      throw new InputError(`${label}: could not be parsed as JSON (${message}); simplify the file`);
    }
    const offset = errorOffset(body, message);
    const where = offset === undefined ? label : `${label}:${lineColumn(body, offset).line}:${lineColumn(body, offset).column}`;
    const short = message.replace(/, (\.\.\.)?".*"(\.\.\.)? is not valid JSON$/s, "").replace(/ in JSON at position \d+.*$/s, "");
    let hint = "fix the JSON syntax (double-quoted keys, no trailing commas, no comments)";
    if (/\b(NaN|-?Infinity)\b/.test(body)) hint = "JSON has no NaN or Infinity: write a finite number";
    throw new InputError(`${where}: not valid JSON (${short}); ${hint}`);
  }
}

/**
 * Validate a parsed model (already-parsed JSON) and build its ModelSpec.
 * @param label name used in messages, usually the file path
 * @throws InputError
 */
export function parseModel(json: unknown, label: string): ModelSpec {
  return buildSpec(validateModel(json, label), label);
}

/** Parse and validate model-file text. @throws InputError */
export function parseModelText(text: string, label: string): ModelSpec {
  return parseModel(parseJsonText(text, label), label);
}

function readText(path: string): string {
  try {
    return readFileSync(path, "utf8");
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    const why = code === "ENOENT" ? "no such file" : code === "EISDIR" ? "is a folder, not a file" : code ?? "unreadable";
    throw new InputError(`${path}: cannot read the model file (${why}); check the path`);
  }
}

/**
 * Read, parse and validate a model file.
 * @throws InputError naming the file, the JSON path and what is allowed
 */
export function loadModelFile(path: string): ModelSpec {
  return parseModelText(readText(path), path);
}

/** A sky file: the model, and the truth it describes (every free parameter at its `init`). */
export interface SkyFile {
  spec: ModelSpec;
  truth: NumericModel;
}

/** Build a SkyFile from an already-parsed JSON value. @throws InputError */
export function parseSky(json: unknown, label: string): SkyFile {
  const spec = parseModel(json, label);
  return { spec, truth: toNumbers(spec, initialVector(spec)) };
}

/**
 * Read a sky file (simulate, plan): a model file, with numbers only or with free parameters
 * whose `init` is the truth. `plan` forecasts the free parameters.
 * @throws InputError
 */
export function loadSkyFile(path: string): SkyFile {
  return parseSky(parseJsonText(readText(path), path), path);
}
