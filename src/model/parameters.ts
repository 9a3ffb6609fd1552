/**
 * Parameter vectors of a validated model: the list of free parameters (in file order of the
 * components, canonical order of each type's parameters), their priors, and the maps between a
 * Float64Array of free values and the numbers-only model the physics builders take.
 * Position angles are periodic (CONVENTIONS.md): 180° for ellipses and shear, 360°/m for an
 * m-fold multipole; the numbers-only model reports them in [0, period).
 */
import { type ComponentDef, componentDef, type ParamDef } from "./components.js";
import { formatPath } from "./messages.js";
import { inverseCdf, logDensity, makePrior, type Prior, searchBox } from "./priors.js";
import type { LensNumbers, NumericModel, SourceNumbers, ValidComponent, ValidModel } from "./types.js";

/** One free parameter of the model. */
export interface FreeParameter {
  /** Name as in result.json: `lens[0].theta_E`. */
  name: string;
  role: "lens" | "source";
  /** Index of the component in its array. */
  component: number;
  /** Parameter key, e.g. "theta_E". */
  key: string;
  /** "arcsec", "deg", "Jy", "M_sun", "GHz" or "" (dimensionless). */
  unit: string;
  /** Starting value (the truth, for a sky file). */
  init: number;
  prior: Prior;
  /** Period in degrees for position angles (180, or 360/m for a multipole); absent otherwise. */
  periodic?: number;
  /** A source flux that enters the model visibilities linearly (see LinearParameter). */
  linear: boolean;
}

/**
 * A free flux that the fitter may profile by non-negative least squares: the model
 * visibilities are Σ_k flux_k · (unit-flux visibilities of source k). `sourceIndices` lists every
 * source component whose flux equals this parameter (itself and those tied to it).
 */
export interface LinearParameter {
  freeIndex: number;
  name: string;
  sourceIndices: number[];
}

/** How one numeric parameter of the numbers-only model is obtained. */
interface PlanEntry {
  key: string;
  /** Index into the free vector, or −1 for a fixed value. */
  freeIndex: number;
  fixedValue: number;
  /** Wrap period in degrees, 0 for none (applied at the destination, after ties). */
  periodDeg: number;
}

interface ComponentPlan {
  base: Record<string, string | number>;
  baseKeys: string[];
  entries: PlanEntry[];
}

/** A validated model with its free-parameter list: what the fitter and samplers work with. */
export interface ModelSpec {
  /** File label for messages. */
  readonly label: string;
  readonly model: ValidModel;
  readonly free: readonly FreeParameter[];
  readonly linear: readonly LinearParameter[];
  /** @internal recipe for toNumbers. */
  readonly plan: { lens: ComponentPlan[]; source: ComponentPlan[]; blocks: Pick<NumericModel, "redshift" | "cosmology" | "field"> };
}

function paramDefs(c: ValidComponent): ComponentDef {
  return componentDef(c.type) as ComponentDef;
}

function periodOf(c: ValidComponent, def: ParamDef): number {
  if (def.periodDeg === undefined) return 0;
  if (c.type === "multipole") {
    const order = c.params.get("order");
    if (order?.kind === "fixed") return 360 / order.value;
  }
  return def.periodDeg;
}

/** Build the ModelSpec of a validated model (validateModel has checked ties and ranges). */
export function buildSpec(model: ValidModel, label: string): ModelSpec {
  const free: FreeParameter[] = [];
  const indexOf = new Map<string, number>();
  const roles = [["lens", model.lens], ["source", model.source]] as const;
  for (const [role, comps] of roles) {
    comps.forEach((c, i) => {
      for (const def of paramDefs(c).params) {
        const v = c.params.get(def.key);
        if (v?.kind !== "free") continue;
        const name = formatPath([role, i, def.key]);
        const period = periodOf(c, def);
        indexOf.set(name, free.length);
        free.push({
          name, role, component: i, key: def.key, unit: def.unit, init: v.init,
          prior: makePrior(v.prior, def.domain),
          ...(period > 0 ? { periodic: period } : {}),
          linear: false,
        });
      }
    });
  }
  // Resolve each tie to its final fixed value or free index (validation excluded cycles).
  const resolve = (name: string): { freeIndex: number; fixedValue: number } => {
    for (let hops = 0; hops < 10_000; hops++) {
      const m = /^(lens|source)\[(\d+)\]\.(\w+)$/.exec(name) as RegExpExecArray;
      const comp = model[m[1] as "lens" | "source"][Number(m[2])];
      const v = comp.params.get(m[3]);
      if (v === undefined) break;
      if (v.kind === "fixed") return { freeIndex: -1, fixedValue: v.value };
      if (v.kind === "free") return { freeIndex: indexOf.get(name) as number, fixedValue: NaN };
      name = v.target;
    }
    throw new Error(`model: unresolved tie ${name} (validateModel should have caught it)`);
  };
  const users = free.map(() => [] as { role: string; component: number; def: ParamDef }[]);
  const planFor = (role: "lens" | "source", c: ValidComponent, i: number): ComponentPlan => {
    const base: Record<string, string | number> = { type: c.type };
    if (c.name !== undefined) base.name = c.name;
    for (const [k, s] of c.strings) base[k] = s;
    const entries: PlanEntry[] = [];
    for (const def of paramDefs(c).params) {
      const v = c.params.get(def.key);
      let freeIndex = -1;
      let fixedValue = NaN;
      if (v === undefined) {
        if (def.defaultValue === undefined) continue;
        fixedValue = def.defaultValue;
      } else if (v.kind === "fixed") {
        fixedValue = v.value;
      } else if (v.kind === "free") {
        freeIndex = indexOf.get(formatPath([role, i, def.key])) as number;
      } else {
        ({ freeIndex, fixedValue } = resolve(v.target));
      }
      if (freeIndex >= 0) users[freeIndex].push({ role, component: i, def });
      entries.push({ key: def.key, freeIndex, fixedValue, periodDeg: periodOf(c, def) });
    }
    return { base, baseKeys: Object.keys(base), entries };
  };
  const plan = {
    lens: model.lens.map((c, i) => planFor("lens", c, i)),
    source: model.source.map((c, i) => planFor("source", c, i)),
    blocks: {
      ...(model.redshift ? { redshift: { ...model.redshift } } : {}),
      ...(model.cosmology ? { cosmology: { ...model.cosmology } } : {}),
      ...(model.field ? { field: { ...model.field } } : {}),
    },
  };
  const linear: LinearParameter[] = [];
  free.forEach((f, k) => {
    const u = users[k];
    if (u.length > 0 && u.every((x) => x.role === "source" && x.def.linear === true)) {
      f.linear = true;
      linear.push({ freeIndex: k, name: f.name, sourceIndices: u.map((x) => x.component) });
    }
  });
  return { label, model, free, linear, plan };
}

/** Wrap an angle in degrees into [0, period). */
export function wrapAngleDeg(angleDeg: number, periodDeg: number): number {
  let r = angleDeg % periodDeg;
  if (r < 0) r += periodDeg;
  if (r >= periodDeg) r -= periodDeg; // −1e-20 % 180 + 180 rounds to 180
  return r === 0 ? 0 : r; // no −0
}

function checkLength(spec: ModelSpec, vector: ArrayLike<number>, what: string): void {
  if (vector.length !== spec.free.length) {
    throw new RangeError(`${what}: vector has ${vector.length} values; the model has ${spec.free.length} free parameters`);
  }
}

/**
 * The numbers-only model for a vector of free values: same structure as the file, every
 * parameter a number, ties resolved, optional parameters with defaults filled in (sie core,
 * shear centre), position angles wrapped into [0, period).
 * @param vector free values in the order of `spec.free` (units as in the file: arcsec, deg, Jy, M_sun)
 * @returns a new object each call (arcsec, deg, Jy, M_sun as in the file)
 * Reference: DESIGN.md "Model file"; CONVENTIONS.md (pa periodic, reported in [0°, 180°)).
 */
export function toNumbers(spec: ModelSpec, vector: ArrayLike<number>): NumericModel {
  checkLength(spec, vector, "toNumbers");
  const build = (cp: ComponentPlan): Record<string, string | number> => {
    // Copy key by key: `{ ...base }` followed by new keys sends V8 down a ~40× slower path.
    const out: Record<string, string | number> = {};
    for (let i = 0; i < cp.baseKeys.length; i++) out[cp.baseKeys[i]] = cp.base[cp.baseKeys[i]];
    for (const e of cp.entries) {
      let v = e.freeIndex >= 0 ? vector[e.freeIndex] : e.fixedValue;
      if (e.periodDeg > 0) v = wrapAngleDeg(v, e.periodDeg);
      out[e.key] = v;
    }
    return out;
  };
  const b = spec.plan.blocks;
  return {
    lens: spec.plan.lens.map(build) as unknown as LensNumbers[],
    source: spec.plan.source.map(build) as unknown as SourceNumbers[],
    ...(b.redshift ? { redshift: { ...b.redshift } } : {}),
    ...(b.cosmology ? { cosmology: { ...b.cosmology } } : {}),
    ...(b.field ? { field: { ...b.field } } : {}),
  };
}

/** The starting vector: every free parameter's `init`. */
export function initialVector(spec: ModelSpec): Float64Array {
  const out = new Float64Array(spec.free.length);
  for (let i = 0; i < out.length; i++) out[i] = spec.free[i].init;
  return out;
}

/** Names of the free parameters, in vector order (`lens[0].theta_E`, ...). */
export function freeNames(spec: ModelSpec): string[] {
  return spec.free.map((f) => f.name);
}

/** Index of a free parameter by name, or −1. */
export function freeIndex(spec: ModelSpec, name: string): number {
  return spec.free.findIndex((f) => f.name === name);
}

/**
 * ln of the joint prior density (a product of independent normalised priors): −Infinity when
 * any value lies outside its prior's support.
 * Reference: normalisations in priors.ts.
 */
export function logPrior(spec: ModelSpec, vector: ArrayLike<number>): number {
  checkLength(spec, vector, "logPrior");
  let sum = 0;
  for (let i = 0; i < spec.free.length; i++) {
    const lp = logDensity(spec.free[i].prior, vector[i]);
    if (lp === -Infinity || Number.isNaN(lp)) return -Infinity;
    sum += lp;
  }
  return sum;
}

/**
 * Nested-sampling prior transform: maps a point of the unit cube to parameter values by the
 * inverse CDF of each (independent) prior. Writes into `out`, allocates nothing.
 * Reference: Skilling (2006, Bayesian Analysis 1, 833) §2 (prior mass coordinates, from memory).
 */
export function priorTransform(spec: ModelSpec, unitCube: ArrayLike<number>, out: Float64Array): void {
  checkLength(spec, unitCube, "priorTransform");
  for (let i = 0; i < spec.free.length; i++) out[i] = inverseCdf(spec.free[i].prior, unitCube[i]);
}

/** A finite search box for a global optimiser (see priors.ts `searchBox`). */
export interface SearchBounds {
  lower: Float64Array;
  upper: Float64Array;
}

/**
 * The search box of every free parameter, in vector order (units as in the file).
 * Reference: rule in priors.ts `searchBox` (uniform/log-uniform range; normal mean ± 5 sd, clipped).
 */
export function bounds(spec: ModelSpec): SearchBounds {
  const n = spec.free.length;
  const lower = new Float64Array(n);
  const upper = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const [lo, hi] = searchBox(spec.free[i].prior, spec.free[i].init);
    lower[i] = lo;
    upper[i] = hi;
  }
  return { lower, upper };
}

/**
 * A periodic parameter whose uniform box spans at least one period has no real edge: wrap such
 * values back into [min, min + period). Other values are left alone. In place.
 */
export function wrapToBox(spec: ModelSpec, vector: Float64Array): void {
  checkLength(spec, vector, "wrapToBox");
  for (let i = 0; i < spec.free.length; i++) {
    const f = spec.free[i];
    if (f.periodic === undefined || f.prior.kind !== "uniform") continue;
    if (f.prior.max - f.prior.min < f.periodic) continue;
    vector[i] = f.prior.min + wrapAngleDeg(vector[i] - f.prior.min, f.periodic);
  }
}

/** Default closeness to a bound, as a fraction of the search box width. */
export const AT_BOUND_FRACTION = 1e-3;

/**
 * Whether a value sits at a hard edge of its prior (for a warning such as "lens[0].q is at its
 * upper bound 1"): "min", "max" or null. Hard edges are the uniform and log-uniform ranges and
 * a normal's truncation; a normal's open tails and a periodic box covering a full period have none.
 * Closeness is `fraction` of the search box (in ln x for a log-uniform prior).
 * @throws RangeError for an unknown name
 */
export function isAtBound(spec: ModelSpec, name: string, value: number, fraction = AT_BOUND_FRACTION): "min" | "max" | null {
  const i = freeIndex(spec, name);
  if (i < 0) throw new RangeError(`isAtBound: ${name} is not a free parameter of ${spec.label}`);
  const f = spec.free[i];
  const prior = f.prior;
  if (f.periodic !== undefined && prior.kind === "uniform" && prior.max - prior.min >= f.periodic) return null;
  if (prior.kind === "loguniform") {
    const lv = Math.log(value);
    const w = Math.log(prior.max) - Math.log(prior.min);
    if (lv - Math.log(prior.min) <= fraction * w) return "min";
    if (Math.log(prior.max) - lv <= fraction * w) return "max";
    return null;
  }
  const [lo, hi] = searchBox(prior, f.init);
  const tol = fraction * (hi - lo);
  if (Number.isFinite(prior.min) && value - prior.min <= tol) return "min";
  if (Number.isFinite(prior.max) && prior.max - value <= tol) return "max";
  return null;
}
