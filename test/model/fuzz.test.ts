/**
 * Seeded fuzz of model files: 3000 random mutations of the example files (wrong types, missing
 * keys, reversed bounds, init outside bounds, unknown types, "NaN"/"Infinity" strings, 1e999,
 * huge and tiny numbers, deep nesting, arrays in place of objects, random ties, text damage).
 * Each case must either parse or throw InputError — never another exception — and a model that
 * parses must be usable: finite init with finite log-prior, a finite search box containing it,
 * and prior-transform draws with finite log-prior. (Property check; no external value needed.)
 */
import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { InputError } from "../../src/errors.js";
import {
  bounds, initialVector, logPrior, type ModelSpec, parseModel, parseModelText, priorTransform, toNumbers,
} from "../../src/model/index.js";
import { Rng } from "../../src/random.js";

const FIXTURES = new URL("../../fixtures/models/", import.meta.url).pathname;
const BASES = ["sie_shear_sersic", "epl_shear_two_gaussians", "pixelised_source"].map(
  (f) => JSON.parse(readFileSync(`${FIXTURES}${f}.json`, "utf8")) as unknown,
);

type Json = unknown;
const clone = (v: Json): Json => JSON.parse(JSON.stringify(v));

function deepNest(depth: number, asArray: boolean): Json {
  let v: Json = 1;
  for (let i = 0; i < depth; i++) v = asArray ? [v] : { a: v };
  return v;
}

/** Every (container, key) pair inside a JSON value, for picking a mutation site. */
function sites(root: Json): [Record<string | number, Json>, string | number][] {
  const out: [Record<string | number, Json>, string | number][] = [];
  const walk = (v: Json, depth: number): void => {
    if (depth > 8 || v === null || typeof v !== "object") return;
    const obj = v as Record<string | number, Json>;
    for (const k of Array.isArray(v) ? v.keys() : Object.keys(obj)) {
      out.push([obj, k]);
      walk(obj[k], depth + 1);
    }
  };
  walk(root, 0);
  return out;
}

const PARAM_NAMES = ["lens[0].x", "lens[0].y", "lens[1].pa", "lens[0].pa", "source[0].x", "source[1].x", "lens[2].x", "source[0].flux", "lens[0].q", "lens[0].theta_E", "lens[9].x", "source[0].grid"];

function junk(rng: Rng): Json {
  const choices: (() => Json)[] = [
    () => "0.1", () => "NaN", () => "Infinity", () => "-Infinity", () => null, () => true, () => [], () => ({}),
    () => [1, 2], () => 1e308 * 10, () => -1e308 * 10, () => 1e308, () => -1e308, () => 1e-320, () => 0, () => -0,
    () => -1, () => 2.5, () => 1e6, () => rng.normal() * 1000,
    () => ({ init: rng.normal(), min: rng.normal(), max: rng.normal() }),
    () => ({ init: 1 }), () => ({ init: 0.5, min: 1, max: 0 }), () => ({ init: 5, min: 0, max: 1 }),
    () => ({ init: rng.normal(), prior: { normal: [rng.normal(), rng.normal()] } }),
    () => ({ init: rng.uniform(), prior: { normal: [rng.normal() * 20, Math.abs(rng.normal()) * 1e-3] }, min: rng.normal(), max: rng.normal() }),
    () => ({ init: rng.uniform(), prior: { loguniform: [rng.normal(), rng.normal()] } }),
    () => ({ init: 0.1, prior: { loguniform: [1e-300, 1e300] } }),
    () => ({ init: 0.1, prior: { normal: [0, 1e300] } }),
    () => ({ init: 0.1, prior: { normal: [0, 1e-300] } }),
    () => ({ init: 0.1, prior: { uniform: [0, 1] } }),
    () => ({ init: 0.1, prior: "normal" }),
    () => ({ init: 0.1, prior: { normal: [0, 1], loguniform: [1, 2] } }),
    () => ({ same_as: PARAM_NAMES[rng.int(PARAM_NAMES.length)] }),
    () => ({ same_as: 5 }), () => ({ same_as: "lens[0]" }),
    () => deepNest(2000 + rng.int(3000), rng.uniform() < 0.5),
    () => ({ type: "sie" }), () => "sie", () => ["sie"], () => "x".repeat(5000),
    () => ({ __proto__: { init: 1 } }), () => JSON.parse('{"__proto__": {"init": 1, "min": 0, "max": 2}}'),
  ];
  return choices[rng.int(choices.length)]();
}

const TYPES = ["sie", "epl", "shear", "multipole", "nfw", "point", "pseudo_jaffe", "sersic", "gaussian", "point_source", "pixelised", "SIE", "sérsic", "", "constructor", "toString", "__proto__"];
const KEYS = ["theta_E", "q", "pa", "x", "y", "core", "slope", "gamma", "order", "strength", "kappa_s", "r_s", "m200", "c200", "mass", "r_trunc", "flux", "r_eff", "n", "sigma", "spectral_index", "ref_freq_ghz", "grid", "cells", "regularisation", "lambda", "name", "redshift", "cosmology", "field", "init", "min", "max", "prior", "same_as", "constructor", "hasOwnProperty", "__proto__", "thetaE"];

function mutate(doc: Json, rng: Rng): Json {
  const kind = rng.int(10);
  if (kind === 0) return junk(rng); // replace the whole document
  const all = sites(doc);
  if (all.length === 0) return doc;
  const [obj, key] = all[rng.int(all.length)];
  switch (kind) {
    case 1: case 2: case 3:
      obj[key] = junk(rng);
      break;
    case 4:
      if (Array.isArray(obj)) obj.splice(Number(key), 1);
      else delete obj[key];
      break;
    case 5:
      if (!Array.isArray(obj)) obj[KEYS[rng.int(KEYS.length)]] = junk(rng);
      break;
    case 6: {
      const v = obj[key] as Record<string, Json> | null;
      if (v && typeof v === "object" && "min" in v && "max" in v) [v.min, v.max] = [v.max, v.min];
      else if (v && typeof v === "object" && "init" in v) v.init = (typeof v.init === "number" ? v.init : 0) + rng.normal() * 10;
      else obj[key] = typeof v === "number" ? -v * 3 : junk(rng);
      break;
    }
    case 7:
      if (!Array.isArray(obj) && "type" in obj) obj.type = TYPES[rng.int(TYPES.length)];
      else obj[key] = TYPES[rng.int(TYPES.length)];
      break;
    case 8:
      if (Array.isArray(obj)) obj.push(obj[rng.int(obj.length)] ?? null); // shared, not cloned: it may be deeply nested
      else if (!Array.isArray(obj)) {
        const v = obj[key];
        delete obj[key];
        obj[`${String(key)}${rng.uniform() < 0.5 ? "_" : "s"}`] = v;
      }
      break;
    default:
      obj[key] = { same_as: PARAM_NAMES[rng.int(PARAM_NAMES.length)] };
  }
  return doc;
}

/** A model that parsed must be usable by the search. */
function checkUsable(spec: ModelSpec, rng: Rng): void {
  const v = initialVector(spec);
  for (const x of v) expect(Number.isFinite(x)).toBe(true);
  const bad = spec.free.filter((f, i) => !Number.isFinite(logPrior({ ...spec, free: [f] }, [v[i]])));
  expect(bad.length, `logPrior(init) is not finite for ${bad.map((f) => `${f.name} ${JSON.stringify(f.prior)} init ${f.init}`).join(", ")}`).toBe(0);
  const b = bounds(spec);
  for (let i = 0; i < v.length; i++) {
    expect(Number.isFinite(b.lower[i]) && Number.isFinite(b.upper[i]) && b.lower[i] <= v[i] && v[i] <= b.upper[i],
      `${spec.free[i].name}: init ${v[i]} in [${b.lower[i]}, ${b.upper[i]}]`).toBe(true);
  }
  const u = new Float64Array(v.length);
  const out = new Float64Array(v.length);
  for (let k = 0; k < 3; k++) {
    for (let i = 0; i < u.length; i++) u[i] = rng.uniform();
    priorTransform(spec, u, out);
    expect(Number.isFinite(logPrior(spec, out)), `logPrior(transform(u)) = ${logPrior(spec, out)} at ${Array.from(out)}`).toBe(true);
  }
  toNumbers(spec, v);
}

describe("fuzzed model files parse or throw InputError, never anything else", () => {
  it("3000 seeded mutations of the example files", () => {
    const rng = new Rng(777);
    let parsed = 0;
    let rejected = 0;
    for (let n = 0; n < 3000; n++) {
      let doc = clone(BASES[n % BASES.length]);
      const steps = 1 + rng.int(3);
      for (let s = 0; s < steps; s++) doc = mutate(doc, rng);
      let spec: ModelSpec | undefined;
      try {
        spec = parseModel(doc, "fuzz.json");
      } catch (err) {
        if (!(err instanceof InputError)) {
          let text = "";
          try { text = JSON.stringify(doc).slice(0, 300); } catch { text = "(unprintable)"; }
          throw new Error(`case ${n}: ${String(err)} for ${text}`);
        }
        expect(err.message.startsWith("fuzz.json: ")).toBe(true);
        expect(err.message.includes("\n")).toBe(false);
        rejected++;
        continue;
      }
      checkUsable(spec, rng);
      parsed++;
    }
    // Both outcomes must occur, or the fuzz is not exercising anything.
    expect(parsed).toBeGreaterThan(50); // 97 of 3000 parse with this seed
    expect(rejected).toBeGreaterThan(1000);
  });
  it("1000 seeded text-level corruptions of the JSON (deleted, inserted or swapped characters)", () => {
    const rng = new Rng(4242);
    const texts = BASES.map((b) => JSON.stringify(b, null, 2));
    const alphabet = '{}[]:,"0123456789.eE+-NaInfity \n\\/tuef';
    for (let n = 0; n < 1000; n++) {
      const chars = texts[n % texts.length].split("");
      const edits = 1 + rng.int(3);
      for (let e = 0; e < edits; e++) {
        const at = rng.int(chars.length);
        const op = rng.int(3);
        if (op === 0) chars.splice(at, 1);
        else if (op === 1) chars.splice(at, 0, alphabet[rng.int(alphabet.length)]);
        else chars[at] = alphabet[rng.int(alphabet.length)];
      }
      try {
        checkUsable(parseModelText(chars.join(""), "t.json"), rng);
      } catch (err) {
        if (!(err instanceof InputError)) throw new Error(`text case ${n}: ${String(err)}`);
        expect(err.message).toMatch(/^t\.json[:]/);
      }
    }
  });
});
