/**
 * Error messages for the model file: paths in the file's own notation (`lens[1].gamma`), short
 * descriptions of offending values, "did you mean" suggestions, and the translation of zod
 * issues into the project's one-line form "where: what was found; what is allowed"
 * (STYLE.md §6). Only the first few issues are reported, joined by "; ".
 */
import type { core } from "zod";
import { InputError } from "../errors.js";

export type Path = readonly (string | number)[];

/** One problem found in the file. */
export interface Issue {
  path: Path;
  message: string;
}

/** How many issues one error line reports before "(and N more)". */
export const MAX_REPORTED_ISSUES = 3;

/** `["lens", 1, "gamma"]` → `lens[1].gamma`. */
export function formatPath(path: Path): string {
  let out = "";
  for (const part of path) {
    if (typeof part === "number") out += `[${part}]`;
    else out += out === "" ? part : `.${part}`;
  }
  return out;
}

function truncate(text: string, max = 40): string {
  return text.length <= max ? text : `${text.slice(0, max - 1)}…`;
}

/** A short description of a JSON value for "got ..." (never throws, never long). */
export function describe(value: unknown): string {
  if (value === undefined) return "nothing";
  if (value === null) return "null";
  if (typeof value === "number") {
    if (Number.isNaN(value)) return "NaN";
    if (!Number.isFinite(value)) return `${value} (a number too large for double precision, e.g. 1e999)`;
    return String(value);
  }
  if (typeof value === "string") return truncate(JSON.stringify(value));
  if (typeof value === "boolean") return String(value);
  if (Array.isArray(value)) {
    let text = "";
    try {
      text = JSON.stringify(value);
    } catch {
      text = "";
    }
    return text && text.length <= 40 ? `an array ${text}` : `an array of ${value.length} items`;
  }
  if (typeof value === "object") {
    const keys = Object.keys(value as object);
    if (keys.length === 0) return "an empty object {}";
    return truncate(`an object {${keys.join(",")}}`, 60);
  }
  return typeof value;
}

/** Levenshtein distance, or Infinity when it exceeds `limit` (cheap exit on long strings). */
function editDistance(a: string, b: string, limit: number): number {
  if (Math.abs(a.length - b.length) > limit) return Infinity;
  let prev = new Array<number>(b.length + 1);
  let cur = new Array<number>(b.length + 1);
  for (let j = 0; j <= b.length; j++) prev[j] = j;
  for (let i = 1; i <= a.length; i++) {
    cur[0] = i;
    for (let j = 1; j <= b.length; j++) {
      const cost = a[i - 1] === b[j - 1] ? 0 : 1;
      cur[j] = Math.min(prev[j] + 1, cur[j - 1] + 1, prev[j - 1] + cost);
    }
    [prev, cur] = [cur, prev];
  }
  return prev[b.length];
}

/** The closest allowed word to a misspelt one, or undefined when nothing is close. */
export function suggest(word: string, allowed: readonly string[]): string | undefined {
  const norm = (s: string): string => s.toLowerCase().replace(/[_\-\s]/g, "");
  const w = norm(word);
  for (const a of allowed) if (norm(a) === w) return a;
  // "minimum" → "min", "thetaEinstein" → "theta_E": a prefix of three or more letters.
  for (const a of allowed) {
    const n = norm(a);
    if (n.length >= 3 && (w.startsWith(n) || (w.length >= 3 && n.startsWith(w)))) return a;
  }
  if (word.length < 2 || word.length > 64) return undefined;
  let best: string | undefined;
  let bestDistance = 3;
  for (const a of allowed) {
    const d = editDistance(word.toLowerCase(), a.toLowerCase(), 2);
    if (d < bestDistance) {
      bestDistance = d;
      best = a;
    }
  }
  return best;
}

/** ` (did you mean "theta_E"?)` or "". */
export function didYouMean(word: string, allowed: readonly string[]): string {
  const s = suggest(word, allowed);
  return s === undefined ? "" : ` (did you mean "${s}"?)`;
}

/** The value at a path inside a JSON value, or undefined. */
export function valueAt(root: unknown, path: Path): unknown {
  let v: unknown = root;
  for (const part of path) {
    if (v === null || typeof v !== "object") return undefined;
    if (!Object.hasOwn(v as object, part)) return undefined;
    v = (v as Record<string | number, unknown>)[part];
  }
  return v;
}

const EXPECTED_WORDS: Record<string, string> = {
  number: "a finite number",
  string: "a string",
  array: "an array",
  tuple: "an array",
  object: "an object",
  boolean: "true or false",
};

/**
 * Translate zod issues (from validating `input`, which sits at `basePath` in the file) into
 * issues with the project's wording. `allowedKeys` lists the keys of the strict object
 * validated, for "did you mean" on unknown keys; `expectedText` overrides the wording of a
 * type error at a given path (e.g. "a redshift > 0").
 */
export function fromZod(
  zodIssues: readonly core.$ZodIssue[],
  input: unknown,
  basePath: Path,
  allowedKeys: (path: Path) => readonly string[] = () => [],
): Issue[] {
  const out: Issue[] = [];
  for (const issue of zodIssues) {
    const rel = issue.path as (string | number)[];
    const path = [...basePath, ...rel];
    const value = valueAt(input, rel);
    switch (issue.code) {
      case "invalid_type": {
        const expected = EXPECTED_WORDS[issue.expected] ?? issue.expected;
        if (value === undefined && rel.length > 0) out.push({ path, message: `missing; expected ${expected}` });
        else out.push({ path, message: `expected ${expected}; got ${describe(value)}` });
        break;
      }
      case "unrecognized_keys": {
        const allowed = allowedKeys(rel);
        for (const key of issue.keys) {
          const hint = didYouMean(key, allowed);
          const list = allowed.length > 0 ? `; allowed: ${allowed.join(", ")}` : "";
          out.push({ path: [...path, key], message: `unknown key${hint}${list}` });
        }
        break;
      }
      case "too_small":
      case "too_big": {
        const small = issue.code === "too_small";
        const bound = small ? (issue as core.$ZodIssueTooSmall).minimum : (issue as core.$ZodIssueTooBig).maximum;
        if (issue.origin === "array") {
          const n = Array.isArray(value) ? value.length : 0;
          out.push({ path, message: `expected ${small ? "at least" : "at most"} ${bound} items; got ${n}` });
        } else {
          const op = small ? (issue.inclusive ? "≥" : ">") : issue.inclusive ? "≤" : "<";
          out.push({ path, message: `must be ${op} ${bound}; got ${describe(value)}` });
        }
        break;
      }
      case "invalid_value":
        out.push({ path, message: `expected one of ${issue.values.map((v) => JSON.stringify(v)).join(", ")}; got ${describe(value)}` });
        break;
      default:
        out.push({ path, message: issue.message });
    }
  }
  return out;
}

/** Throw one InputError line for the first few issues: `label: path: message; path: message`. */
export function throwIssues(label: string, issues: readonly Issue[]): never {
  const shown = issues.slice(0, MAX_REPORTED_ISSUES).map((i) => {
    const where = formatPath(i.path);
    return where === "" ? i.message : `${where}: ${i.message}`;
  });
  const more = issues.length > MAX_REPORTED_ISSUES ? ` (and ${issues.length - MAX_REPORTED_ISSUES} more)` : "";
  throw new InputError(`${label}: ${shown.join("; ")}${more}`);
}
