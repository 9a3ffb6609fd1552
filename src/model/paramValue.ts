/**
 * Parse one parameter value of the model file into a fixed value, a free parameter with its
 * prior, or a tie. The four forms (DESIGN.md "Model file"):
 *   1.2                                              fixed
 *   { "init": v, "min": a, "max": b }                free, uniform prior on [a, b]
 *   { "init": v, "prior": { "normal": [μ, σ] } }     free, normal prior (optional min/max truncate it)
 *   { "init": v, "prior": { "loguniform": [a, b] } } free, log-uniform prior on [a, b]
 *   { "same_as": "lens[0].x" }                       tied to another parameter
 * The shape is chosen from the keys present, then checked by a strict zod schema, so that the
 * message names the form the user was writing rather than listing every alternative.
 */
import { z } from "zod";
import { type Domain, domainText, inDomain, type ParamDef } from "./components.js";
import { describe, didYouMean, fromZod, type Issue, type Path } from "./messages.js";
import { logDensity, makePrior, normalMass, searchBox } from "./priors.js";
import type { ParamValue } from "./types.js";

const num = z.number();
const UniformShape = z.strictObject({ init: num, min: num, max: num });
const NormalShape = z.strictObject({
  init: num,
  prior: z.strictObject({ normal: z.tuple([num, num]) }),
  min: num.optional(),
  max: num.optional(),
});
const LogUniformShape = z.strictObject({ init: num, prior: z.strictObject({ loguniform: z.tuple([num, num]) }) });
const TiedShape = z.strictObject({ same_as: z.string() });

const FORMS = "a number, {init,min,max}, {init,prior} or {same_as}";
const PRIOR_KINDS = ["normal", "loguniform"];

/** Smallest probability a truncated normal may keep inside its bounds before we call it a mistake. */
export const MIN_NORMAL_MASS = 1e-12;

/** A tie target: `lens[0].x` → ("lens", 0, "x"). */
export const TIE_PATTERN = /^(lens|source)\[(\d{1,6})\]\.([A-Za-z_][A-Za-z0-9_]*)$/;

function rangeMessage(v: number, domain: Domain, unit: string): string {
  const u = unit ? ` ${unit}` : "";
  return `${v}${u} is outside the allowed range ${domainText(domain)}`;
}

function allowedKeysOf(shape: string) {
  return (rel: Path): readonly string[] => {
    if (rel.length === 0) {
      if (shape === "uniform") return ["init", "min", "max"];
      if (shape === "normal") return ["init", "prior", "min", "max"];
      if (shape === "loguniform") return ["init", "prior"];
      return ["same_as"];
    }
    return rel[rel.length - 1] === "prior" ? PRIOR_KINDS : [];
  };
}

/**
 * Parse the value of parameter `def` found at `path`. Returns the value, or undefined after
 * pushing at least one issue.
 */
export function parseParamValue(raw: unknown, path: Path, def: ParamDef, issues: Issue[]): ParamValue | undefined {
  const value = parseForm(raw, path, def, issues);
  if (value?.kind !== "free") return value;
  // Numbers at the edge of double precision (bounds ±1e308, sd 1e-300) can pass every check
  // above and still leave a prior the search cannot use: its density at init must be finite.
  const prior = makePrior(value.prior, def.domain);
  const lp = logDensity(prior, value.init);
  const [lo, hi] = searchBox(prior, value.init);
  let problem = "";
  if (prior.kind === "uniform" && !Number.isFinite(prior.max - prior.min)) problem = "max − min overflows double precision";
  else if (!Number.isFinite(lp)) problem = `the prior density at init ${value.init} underflows to 0`;
  else if (!Number.isFinite(hi - lo)) problem = "the prior is too wide for a finite search box";
  if (problem !== "") {
    issues.push({ path, message: `${problem}; use a narrower range or start nearer the prior's mean` });
    return undefined;
  }
  return value;
}

function parseForm(raw: unknown, path: Path, def: ParamDef, issues: Issue[]): ParamValue | undefined {
  const unit = def.unit;
  if (typeof raw === "number") {
    if (!Number.isFinite(raw)) {
      issues.push({ path, message: `expected a finite number; got ${describe(raw)}` });
      return undefined;
    }
    if (def.integer !== undefined) {
      const allowed = def.integer;
      if (allowed === "integer" ? !Number.isInteger(raw) : !allowed.includes(raw)) {
        const what = allowed === "integer" ? `an integer in ${domainText(def.domain)}` : allowed.join(" or ");
        issues.push({ path, message: `expected ${what}; got ${raw}` });
        return undefined;
      }
    }
    if (!inDomain(raw, def.domain)) {
      issues.push({ path, message: rangeMessage(raw, def.domain, unit) });
      return undefined;
    }
    return { kind: "fixed", value: raw };
  }
  if (def.fixedOnly) {
    const what = Array.isArray(def.integer) ? def.integer.join(" or ") : `a number in ${domainText(def.domain)}`;
    issues.push({ path, message: `must be a fixed number (${what}), not free or tied; got ${describe(raw)}` });
    return undefined;
  }
  if (raw === null || typeof raw !== "object" || Array.isArray(raw)) {
    let hint = "";
    if (typeof raw === "string" && raw.trim() !== "" && Number.isFinite(Number(raw))) hint = ` (write ${raw.trim()} without quotes)`;
    issues.push({ path, message: `expected ${FORMS}; got ${describe(raw)}${hint}` });
    return undefined;
  }
  const obj = raw as Record<string, unknown>;
  if (Object.hasOwn(obj, "same_as")) return parseTied(obj, path, issues);
  if (Object.hasOwn(obj, "prior")) return parsePrior(obj, path, def, issues);
  if (Object.hasOwn(obj, "init")) {
    if (!Object.hasOwn(obj, "min") || !Object.hasOwn(obj, "max")) {
      const keyHint = Object.keys(obj).filter((k) => !["init", "min", "max"].includes(k)).map((k) => didYouMean(k, ["min", "max", "prior"])).join("");
      issues.push({ path, message: `a free parameter needs "min" and "max" (uniform prior) or a "prior"${keyHint}; got ${describe(raw)}` });
      return undefined;
    }
    const r = UniformShape.safeParse(raw);
    if (!r.success) {
      issues.push(...fromZod(r.error.issues, raw, path, allowedKeysOf("uniform")));
      return undefined;
    }
    const { init, min, max } = r.data;
    if (!checkBounds(min, max, path, def, issues)) return undefined;
    if (!(init >= min && init <= max)) {
      issues.push({ path: [...path, "init"], message: `${init} lies outside [min, max] = [${min}, ${max}]` });
      return undefined;
    }
    return { kind: "free", init, prior: { kind: "uniform", min, max } };
  }
  const keys = Object.keys(obj);
  const hint = keys.filter((k) => !["min", "max"].includes(k)).map((k) => didYouMean(k, ["init", "prior", "same_as"])).join("");
  issues.push({ path, message: `expected ${FORMS}; got ${describe(raw)}${hint}` });
  return undefined;
}

function parseTied(obj: Record<string, unknown>, path: Path, issues: Issue[]): ParamValue | undefined {
  const others = Object.keys(obj).filter((k) => k !== "same_as");
  if (others.length > 0) {
    issues.push({ path, message: `"same_as" cannot be combined with ${others.map((k) => `"${k}"`).join(", ")}; a tied parameter takes its value from its target` });
    return undefined;
  }
  const r = TiedShape.safeParse(obj);
  if (!r.success) {
    issues.push({ path: [...path, "same_as"], message: `expected a parameter name like "lens[0].x"; got ${describe(obj.same_as)}` });
    return undefined;
  }
  const target = r.data.same_as.trim();
  if (!TIE_PATTERN.test(target)) {
    issues.push({ path: [...path, "same_as"], message: `expected a parameter name like "lens[0].x" or "source[1].pa"; got ${describe(r.data.same_as)}` });
    return undefined;
  }
  return { kind: "tied", target };
}

function parsePrior(obj: Record<string, unknown>, path: Path, def: ParamDef, issues: Issue[]): ParamValue | undefined {
  const prior = obj.prior;
  const priorPath = [...path, "prior"];
  const allowedText = `{"normal": [mean, sd]} or {"loguniform": [min, max]}`;
  if (prior === null || typeof prior !== "object" || Array.isArray(prior)) {
    issues.push({ path: priorPath, message: `expected ${allowedText}; got ${describe(prior)}` });
    return undefined;
  }
  const kinds = Object.keys(prior);
  if (kinds.length !== 1 || !PRIOR_KINDS.includes(kinds[0])) {
    const unknown = kinds.find((k) => !PRIOR_KINDS.includes(k));
    let hint = unknown !== undefined ? didYouMean(unknown, PRIOR_KINDS) : "";
    if (unknown === "uniform") hint = ` (for a uniform prior write {"init", "min", "max"} without "prior")`;
    issues.push({ path: priorPath, message: `expected exactly one of ${allowedText}; got ${describe(prior)}${hint}` });
    return undefined;
  }
  if (!Object.hasOwn(obj, "init")) {
    issues.push({ path: [...path, "init"], message: "missing; a free parameter needs a starting value \"init\"" });
    return undefined;
  }
  if (kinds[0] === "normal") {
    const r = NormalShape.safeParse(obj);
    if (!r.success) {
      issues.push(...fromZod(r.error.issues, obj, path, allowedKeysOf("normal")));
      return undefined;
    }
    const { init } = r.data;
    const [mean, sd] = r.data.prior.normal;
    const { min, max } = r.data;
    if (!(sd > 0)) {
      issues.push({ path: [...priorPath, "normal", 1], message: `the standard deviation must be > 0; got ${sd}` });
      return undefined;
    }
    if (min !== undefined && !inDomain(min, def.domain)) {
      issues.push({ path: [...path, "min"], message: rangeMessage(min, def.domain, def.unit) });
      return undefined;
    }
    if (max !== undefined && !inDomain(max, def.domain)) {
      issues.push({ path: [...path, "max"], message: rangeMessage(max, def.domain, def.unit) });
      return undefined;
    }
    if (min !== undefined && max !== undefined && !(min < max)) {
      issues.push({ path, message: `min ${min} must be below max ${max}` });
      return undefined;
    }
    const lo = min ?? def.domain.lo;
    const hi = max ?? def.domain.hi;
    if (!inDomain(init, def.domain) || init < lo || init > hi) {
      const where = min !== undefined || max !== undefined ? `[${lo}, ${hi}]` : domainText(def.domain);
      issues.push({ path: [...path, "init"], message: `${init} lies outside the prior's support ${where}` });
      return undefined;
    }
    const mass = normalMass((lo - mean) / sd, (hi - mean) / sd);
    if (!(mass >= MIN_NORMAL_MASS)) {
      issues.push({ path: priorPath, message: `normal(${mean}, ${sd}) has almost no probability (< ${MIN_NORMAL_MASS}) inside [${lo}, ${hi}]; check the mean, sd and bounds` });
      return undefined;
    }
    const spec = { kind: "normal" as const, mean, sd, ...(min !== undefined ? { min } : {}), ...(max !== undefined ? { max } : {}) };
    return { kind: "free", init, prior: spec };
  }
  const r = LogUniformShape.safeParse(obj);
  if (!r.success) {
    const extra = Object.keys(obj).filter((k) => k === "min" || k === "max");
    if (extra.length > 0) {
      issues.push({ path: [...path, extra[0]], message: `not allowed with a loguniform prior: its [min, max] range already bounds the parameter` });
      return undefined;
    }
    issues.push(...fromZod(r.error.issues, obj, path, allowedKeysOf("loguniform")));
    return undefined;
  }
  const { init } = r.data;
  const [a, b] = r.data.prior.loguniform;
  const lpath = [...priorPath, "loguniform"];
  if (!(a > 0)) {
    issues.push({ path: lpath, message: `the range must be positive; got [${a}, ${b}]` });
    return undefined;
  }
  if (!(a < b)) {
    issues.push({ path: lpath, message: `min ${a} must be below max ${b}` });
    return undefined;
  }
  if (!inDomain(a, def.domain) || !inDomain(b, def.domain)) {
    issues.push({ path: lpath, message: `[${a}, ${b}] is not inside the allowed range ${domainText(def.domain)}` });
    return undefined;
  }
  if (!(init >= a && init <= b)) {
    issues.push({ path: [...path, "init"], message: `${init} lies outside the loguniform range [${a}, ${b}]` });
    return undefined;
  }
  return { kind: "free", init, prior: { kind: "loguniform", min: a, max: b } };
}

/** Uniform bounds: ordered and inside the allowed range. */
function checkBounds(min: number, max: number, path: Path, def: ParamDef, issues: Issue[]): boolean {
  if (!(min < max)) {
    issues.push({ path, message: `min ${min} must be below max ${max} (to fix a parameter, give a plain number)` });
    return false;
  }
  if (!inDomain(min, def.domain)) {
    issues.push({ path: [...path, "min"], message: rangeMessage(min, def.domain, def.unit) });
    return false;
  }
  if (!inDomain(max, def.domain)) {
    issues.push({ path: [...path, "max"], message: rangeMessage(max, def.domain, def.unit) });
    return false;
  }
  return true;
}
