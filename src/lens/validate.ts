/**
 * Checks on numbers-only model components, shared by the lens and source builders. Every
 * failure is one InputError line: where (model path) — what was found — what is allowed.
 */
import { InputError } from "../errors.js";

/** A numbers-only component as it arrives from the model layer. */
export type ComponentInput = { type: string } & Record<string, unknown>;

export interface NumberRule {
  /** Lower bound and whether it is included. */
  min?: number;
  minInclusive?: boolean;
  max?: number;
  maxInclusive?: boolean;
  /** Value used when the key is absent; absent and no default → error. */
  defaultValue?: number;
  /** Hint appended to range errors. */
  hint?: string;
}

/** Interval notation for messages, e.g. "(0, 1]". */
function interval(r: NumberRule): string {
  const lo = r.min === undefined ? "(-∞" : `${r.minInclusive === false ? "(" : "["}${r.min}`;
  const hi = r.max === undefined ? "∞)" : `${r.max}${r.maxInclusive === false ? ")" : "]"}`;
  return `${lo}, ${hi}`;
}

/**
 * Read component[key] as a finite number within the rule's bounds.
 * @param path model path of the component, e.g. "lens[1]"
 */
export function readNumber(c: ComponentInput, path: string, key: string, rule: NumberRule = {}): number {
  const raw = c[key];
  if (raw === undefined || raw === null) {
    if (rule.defaultValue !== undefined) return rule.defaultValue;
    throw new InputError(`${path}.${key}: missing; a ${c.type} component needs ${key}`);
  }
  if (typeof raw !== "number" || !Number.isFinite(raw)) {
    throw new InputError(`${path}.${key}: expected a finite number, got ${JSON.stringify(raw)}`);
  }
  const below =
    rule.min !== undefined && (rule.minInclusive === false ? raw <= rule.min : raw < rule.min);
  const above =
    rule.max !== undefined && (rule.maxInclusive === false ? raw >= rule.max : raw > rule.max);
  if (below || above) {
    throw new InputError(`${path}.${key}: ${raw} is outside ${interval(rule)}${rule.hint ? `; ${rule.hint}` : ""}`);
  }
  return raw;
}

/** Axis ratio q = b/a ∈ (0, 1]. */
export const AXIS_RATIO: NumberRule = { min: 0, minInclusive: false, max: 1 };
/** A strictly positive length or flux. */
export const POSITIVE: NumberRule = { min: 0, minInclusive: false };
/** Any finite number. */
export const FINITE: NumberRule = {};
