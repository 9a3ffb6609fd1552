/**
 * Validation of a parsed model file (DESIGN.md "Model file"): the top-level blocks, each
 * component's type and parameters (required, allowed ranges, unknown keys with "did you mean"),
 * the parameter forms (paramValue.ts), ties (targets exist, no cycles, compatible ranges) and the
 * cross-checks (redshifts when a mass needs them, z_lens < z_source, field sizes). Every problem
 * becomes one short line; the first few are thrown together as one InputError.
 */
import { z } from "zod";
import { type ComponentDef, COMMON_KEYS, componentDef, domainText, inDomain, type ParamDef, typesFor } from "./components.js";
import { describe, didYouMean, formatPath, fromZod, type Issue, type Path, throwIssues } from "./messages.js";
import { parseParamValue, TIE_PATTERN } from "./paramValue.js";
import { makePrior } from "./priors.js";
import type { Cosmology, FieldSpec, ParamValue, Redshifts, ValidComponent, ValidModel } from "./types.js";

/** Default cosmology (CONVENTIONS.md): flat ΛCDM with H0 = 70 km/s/Mpc, Ωm = 0.3. */
export const DEFAULT_COSMOLOGY: Readonly<Cosmology> = Object.freeze({ H0: 70, Om0: 0.3 });

const TopShape = z.strictObject({
  lens: z.array(z.unknown()),
  source: z.array(z.unknown()).min(1),
  redshift: z.unknown().optional(),
  cosmology: z.unknown().optional(),
  field: z.unknown().optional(),
});
const TOP_KEYS = Object.keys(TopShape.shape);

const RedshiftShape = z.strictObject({ lens: z.number().gt(0), source: z.number().gt(0) });
const CosmologyShape = z.strictObject({ H0: z.number().gt(0).optional(), Om0: z.number().min(0).max(1).optional() });
const FieldShape = z.strictObject({ size_arcsec: z.number().gt(0), pixel_arcsec: z.number().gt(0) });

/**
 * Validate a parsed model file. `label` names it in messages (usually the file path).
 * @throws InputError with one line naming the file, the JSON path and what is allowed.
 * Reference: DESIGN.md "Model file" (forms and component table), CONVENTIONS.md (ranges, units).
 */
export function validateModel(json: unknown, label: string): ValidModel {
  if (json === null || typeof json !== "object" || Array.isArray(json)) {
    throwIssues(label, [{ path: [], message: `expected a JSON object with "lens" and "source" arrays; got ${describe(json)}` }]);
  }
  const top = TopShape.safeParse(json);
  if (!top.success) {
    const issues = fromZod(top.error.issues, json, [], (rel) => (rel.length === 0 ? TOP_KEYS : []));
    for (const issue of issues) {
      if (issue.path.length === 1 && issue.path[0] === "source" && /at least 1/.test(issue.message)) {
        issue.message = "empty; give at least one source component";
      } else if (issue.path.length === 1 && /^missing/.test(issue.message)) {
        issue.message = `missing; expected an array of ${issue.path[0]} components (it may be empty for "lens")`;
      }
    }
    throwIssues(label, issues);
  }
  const raw = top.data;
  const issues: Issue[] = [];

  const redshift = parseBlock<Redshifts>(raw.redshift, ["redshift"], RedshiftShape, issues);
  if (redshift && !(redshift.source > redshift.lens)) {
    issues.push({ path: ["redshift"], message: `the source (z = ${redshift.source}) must lie behind the lens (z = ${redshift.lens})` });
  }
  const cosmoRaw = parseBlock<Partial<Cosmology>>(raw.cosmology, ["cosmology"], CosmologyShape, issues);
  const cosmology = cosmoRaw ? { H0: cosmoRaw.H0 ?? DEFAULT_COSMOLOGY.H0, Om0: cosmoRaw.Om0 ?? DEFAULT_COSMOLOGY.Om0 } : undefined;
  const field = parseBlock<FieldSpec>(raw.field, ["field"], FieldShape, issues);
  if (field && !(field.pixel_arcsec < field.size_arcsec)) {
    issues.push({ path: ["field", "pixel_arcsec"], message: `${field.pixel_arcsec} arcsec must be smaller than size_arcsec (${field.size_arcsec} arcsec)` });
  }

  const lens = raw.lens.map((c, i) => parseComponent(c, ["lens", i], "lens", issues));
  const source = raw.source.map((c, i) => parseComponent(c, ["source", i], "source", issues));
  if (issues.length > 0) throwIssues(label, issues);

  const model: ValidModel = {
    lens: lens as ValidComponent[],
    source: source as ValidComponent[],
    ...(redshift ? { redshift } : {}),
    ...(cosmology ? { cosmology } : {}),
    ...(field ? { field } : {}),
  };
  checkCrossReferences(model, issues);
  if (issues.length > 0) throwIssues(label, issues);
  return model;
}

function parseBlock<T>(value: unknown, path: Path, shape: z.ZodObject, issues: Issue[]): T | undefined {
  if (value === undefined) return undefined;
  const r = shape.safeParse(value);
  if (!r.success) {
    const keys = Object.keys(shape.shape);
    issues.push(...fromZod(r.error.issues, value, path, (rel) => (rel.length === 0 ? keys : [])));
    return undefined;
  }
  return r.data as T;
}

/** Validate one component object; undefined after pushing issues. */
function parseComponent(raw: unknown, path: Path, role: "lens" | "source", issues: Issue[]): ValidComponent | undefined {
  const allowedTypes = typesFor(role);
  if (raw === null || typeof raw !== "object" || Array.isArray(raw)) {
    issues.push({ path, message: `expected a component object like {"type": "${allowedTypes[0]}", ...}; got ${describe(raw)}` });
    return undefined;
  }
  const obj = raw as Record<string, unknown>;
  const type = obj.type;
  if (!Object.hasOwn(obj, "type")) {
    issues.push({ path: [...path, "type"], message: `missing; expected one of ${allowedTypes.join(", ")}` });
    return undefined;
  }
  if (typeof type !== "string") {
    issues.push({ path: [...path, "type"], message: `expected one of ${allowedTypes.join(", ")}; got ${describe(type)}` });
    return undefined;
  }
  const def = componentDef(type);
  if (def === undefined || def.role !== role) {
    const other = role === "lens" ? "source" : "lens";
    const misplaced = def !== undefined ? ` ("${type}" is a ${other} type: move it to "${other}")` : didYouMean(type, allowedTypes);
    issues.push({ path: [...path, "type"], message: `unknown ${role} type ${describe(type)}${misplaced}; expected one of ${allowedTypes.join(", ")}` });
    return undefined;
  }
  const before = issues.length;
  const allowedKeys = [...COMMON_KEYS, ...def.params.map((p) => p.key), ...def.strings.map((s) => s.key)];
  for (const key of Object.keys(obj)) {
    if (!allowedKeys.includes(key)) {
      issues.push({ path: [...path, key], message: `unknown key for type "${type}"${didYouMean(key, allowedKeys)}; allowed: ${allowedKeys.filter((k) => k !== "type").join(", ")}` });
    }
  }
  let name: string | undefined;
  if (Object.hasOwn(obj, "name")) {
    if (typeof obj.name === "string") name = obj.name;
    else issues.push({ path: [...path, "name"], message: `expected a string; got ${describe(obj.name)}` });
  }
  const strings = new Map<string, string>();
  for (const s of def.strings) {
    if (!Object.hasOwn(obj, s.key)) {
      if (s.required) issues.push({ path: [...path, s.key], message: `missing; expected one of ${s.allowed.map((a) => `"${a}"`).join(", ")}` });
      continue;
    }
    const v = obj[s.key];
    if (typeof v !== "string" || !s.allowed.includes(v)) {
      const hint = typeof v === "string" ? didYouMean(v, s.allowed) : "";
      issues.push({ path: [...path, s.key], message: `expected one of ${s.allowed.map((a) => `"${a}"`).join(", ")}; got ${describe(v)}${hint}` });
    } else {
      strings.set(s.key, v);
    }
  }
  const params = new Map<string, ParamValue>();
  for (const p of def.params) {
    if (!Object.hasOwn(obj, p.key)) {
      if (p.required) issues.push({ path: [...path, p.key], message: `missing; "${type}" needs ${requiredList(def)}` });
      continue;
    }
    const value = parseParamValue(obj[p.key], [...path, p.key], p, issues);
    if (value !== undefined) params.set(p.key, value);
  }
  checkAlternatives(def, obj, path, issues);
  if (params.has("spectral_index") && !Object.hasOwn(obj, "ref_freq_ghz")) {
    issues.push({ path: [...path, "ref_freq_ghz"], message: "missing; spectral_index needs the reference frequency ref_freq_ghz (GHz) at which flux is given" });
  }
  if (issues.length > before) return undefined;
  return { type: def.type, ...(name !== undefined ? { name } : {}), params, strings };
}

function requiredList(def: ComponentDef): string {
  return def.params.filter((p) => p.required).map((p) => p.key).join(", ");
}

/** Exactly one complete alternative parametrisation (NFW, point mass). */
function checkAlternatives(def: ComponentDef, obj: Record<string, unknown>, path: Path, issues: Issue[]): void {
  if (!def.alternatives) return;
  const texts = def.alternatives.map((a) => a.keys.join(" + ")).join(" or ");
  const used = def.alternatives.filter((a) => a.keys.some((k) => Object.hasOwn(obj, k)));
  if (used.length === 0) {
    issues.push({ path, message: `"${def.type}" needs ${texts}` });
  } else if (used.length > 1) {
    issues.push({ path, message: `give either ${texts}, not both` });
  } else {
    const missing = used[0].keys.filter((k) => !Object.hasOwn(obj, k));
    for (const k of missing) issues.push({ path: [...path, k], message: `missing; ${used[0].keys.join(" and ")} go together` });
  }
}

interface Slot {
  path: Path;
  def: ParamDef;
  value: ParamValue;
}

/** Ties and the redshifts that masses need; run once every component has parsed. */
function checkCrossReferences(model: ValidModel, issues: Issue[]): void {
  const slots = new Map<string, Slot>();
  const roles = [["lens", model.lens], ["source", model.source]] as const;
  for (const [role, comps] of roles) {
    comps.forEach((c, i) => {
      const def = componentDef(c.type) as ComponentDef;
      for (const [key, value] of c.params) {
        const p = def.params.find((q) => q.key === key) as ParamDef;
        slots.set(formatPath([role, i, key]), { path: [role, i, key], def: p, value });
      }
      if (!model.redshift && def.alternatives) {
        const alt = def.alternatives.find((a) => a.keys.every((k) => c.params.has(k)));
        if (alt?.needsRedshift) {
          issues.push({ path: [role, i], message: `${alt.keys.join(" and ")} need a top-level "redshift": {"lens": z_l, "source": z_s}` });
        }
      }
    });
  }
  if (model.source.filter((c) => c.type === "pixelised").length > 1) {
    issues.push({ path: ["source"], message: "more than one pixelised source; a model takes at most one" });
  }
  for (const [name, slot] of slots) {
    if (slot.value.kind !== "tied") continue;
    const end = followTie(name, slots, model, issues);
    if (end === undefined) continue;
    checkTieRange(slot, end, issues);
  }
}

/** Follow a chain of ties to a fixed or free parameter; undefined (with an issue) if broken. */
function followTie(start: string, slots: Map<string, Slot>, model: ValidModel, issues: Issue[]): Slot | undefined {
  const chain = [start];
  let current = slots.get(start) as Slot;
  while (current.value.kind === "tied") {
    const target = current.value.target;
    const targetSlot = slots.get(target);
    if (targetSlot === undefined) {
      issues.push({ path: [...current.path, "same_as"], message: missingTargetMessage(target, model) });
      return undefined;
    }
    if (targetSlot.def.fixedOnly) {
      issues.push({ path: [...current.path, "same_as"], message: `"${target}" is a fixed setting, not a continuous parameter; same_as cannot refer to it` });
      return undefined;
    }
    if (chain.includes(target)) {
      // Report each cycle once, from its first member in file order.
      if (target === start) issues.push({ path: [...slots.get(start)!.path, "same_as"], message: `ties form a cycle: ${[...chain, target].join(" → ")}; one of them must be a number or free` });
      return undefined;
    }
    chain.push(target);
    current = targetSlot;
  }
  return current;
}

function missingTargetMessage(target: string, model: ValidModel): string {
  const m = TIE_PATTERN.exec(target) as RegExpExecArray;
  const role = m[1] as "lens" | "source";
  const index = Number(m[2]);
  const comps = model[role];
  if (index >= comps.length) return `"${target}" does not exist: the file has ${comps.length} ${role} component${comps.length === 1 ? "" : "s"}`;
  const keys = [...comps[index].params.keys()];
  return `"${target}" is not set in the file${didYouMean(m[3], keys)}; ${role}[${index}] (${comps[index].type}) has ${keys.join(", ")}`;
}

/** A tied parameter must be able to take every value its target can. */
function checkTieRange(slot: Slot, end: Slot, issues: Issue[]): void {
  const d = slot.def.domain;
  const where = [...slot.path, "same_as"];
  if (end.value.kind === "fixed") {
    if (!inDomain(end.value.value, d)) {
      issues.push({ path: where, message: `takes ${end.value.value} from ${formatPath(end.path)}, outside the allowed range ${domainText(d)} of ${slot.def.key}` });
    }
    return;
  }
  if (end.value.kind !== "free") return;
  const prior = makePrior(end.value.prior, end.def.domain);
  // An excluded end (q > 0) may be reached only by a prior whose density also excludes it.
  const openMin = prior.kind === "normal" && prior.minOpen;
  const openMax = prior.kind === "normal" && prior.maxOpen;
  const loOk = !Number.isFinite(d.lo) || prior.min > d.lo || (prior.min === d.lo && (!d.loOpen || openMin));
  const hiOk = !Number.isFinite(d.hi) || prior.max < d.hi || (prior.max === d.hi && (!d.hiOpen || openMax));
  const ok = loOk && hiOk && inDomain(end.value.init, d);
  if (!ok) {
    issues.push({ path: where, message: `${formatPath(end.path)} ranges over [${prior.min}, ${prior.max}], not inside the allowed range ${domainText(d)} of ${slot.def.key}` });
  }
}
