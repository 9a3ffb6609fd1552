/**
 * Every documented model-file error: InputError, one line, naming the file and the JSON path,
 * saying what was found and what is allowed (STYLE.md §6; ranges from DESIGN.md's component
 * table and CONVENTIONS.md: q = b/a ∈ (0, 1], θ_E > 0, Sérsic n ∈ [0.2, 10], multipole order
 * 3 or 4, EPL slope in (1.2, 2.8), shear γ ∈ [0, 1), z_lens < z_source).
 */
import { mkdtempSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { InputError } from "../../src/errors.js";
import { loadModelFile, parseModel, parseModelText } from "../../src/model/index.js";

const sie = (over: Record<string, unknown> = {}) => ({ type: "sie", theta_E: 1, q: 0.8, pa: 30, x: 0, y: 0, ...over });
const ps = (over: Record<string, unknown> = {}) => ({ type: "point_source", flux: 0.01, x: 0, y: 0, ...over });
const model = (lens: unknown[], source: unknown[] = [ps()], extra: Record<string, unknown> = {}) => ({ lens, source, ...extra });

/** Message of the InputError thrown for `json`; fails the test if none or another error. */
function messageOf(json: unknown): string {
  try {
    parseModel(json, "model.json");
  } catch (err) {
    expect(err).toBeInstanceOf(InputError);
    const msg = (err as Error).message;
    expect(msg.includes("\n"), `one line: ${msg}`).toBe(false);
    return msg;
  }
  throw new Error("expected an InputError, but the model parsed");
}

// [what, model, expected message pattern]. Patterns match the whole "where: what; allowed" shape.
const cases: [string, unknown, RegExp][] = [
  ["top level not an object", [1, 2], /^model\.json: expected a JSON object with "lens" and "source" arrays; got an array \[1,2\]$/],
  ["missing source", { lens: [] }, /^model\.json: source: missing; expected an array of source components/],
  ["empty source", { lens: [], source: [] }, /^model\.json: source: empty; give at least one source component$/],
  ["unknown top-level key", { ...model([]), redshfit: { lens: 0.5, source: 2 } }, /^model\.json: redshfit: unknown key \(did you mean "redshift"\?\); allowed: lens, source, redshift, cosmology, field$/],
  ["lens not an array", { lens: {}, source: [ps()] }, /^model\.json: lens: expected an array; got an empty object \{\}$/],
  ["component not an object", model([[1]]), /^model\.json: lens\[0\]: expected a component object like \{"type": "sie", \.\.\.\}; got an array \[1\]$/],
  ["missing type", model([{ theta_E: 1 }]), /^model\.json: lens\[0\]\.type: missing; expected one of sie, epl, shear, multipole, nfw, point, pseudo_jaffe$/],
  ["unknown type with suggestion", model([sie({ type: "SIE" })]), /lens\[0\]\.type: unknown lens type "SIE" \(did you mean "sie"\?\); expected one of sie, epl/],
  ["source type in lens", model([{ type: "sersic" }]), /lens\[0\]\.type: unknown lens type "sersic" \("sersic" is a source type: move it to "source"\)/],
  ["unknown key with suggestion", model([sie({ thetaE: 1 })]), /^model\.json: lens\[0\]\.thetaE: unknown key for type "sie" \(did you mean "theta_E"\?\); allowed: name, theta_E, q, pa, x, y, core$/],
  ["missing required parameter", model([{ type: "sie", theta_E: 1, q: 0.8, x: 0, y: 0 }]), /^model\.json: lens\[0\]\.pa: missing; "sie" needs theta_E, q, pa, x, y$/],
  ["string in place of a number", model([sie(), { type: "shear", gamma: "0.1", pa: 0 }]), /^model\.json: lens\[1\]\.gamma: expected a number, \{init,min,max\}, \{init,prior\} or \{same_as\}; got "0\.1" \(write 0\.1 without quotes\)$/],
  ["\"NaN\" string", model([sie({ q: "NaN" })]), /lens\[0\]\.q: expected a number, .*; got "NaN"$/],
  ["1e999 parses to Infinity", model([sie({ theta_E: 1e999 })]), /lens\[0\]\.theta_E: expected a finite number; got Infinity \(a number too large for double precision, e\.g\. 1e999\)$/],
  ["null value", model([sie({ x: null })]), /lens\[0\]\.x: expected a number, .*; got null$/],
  ["q above 1", model([sie({ q: 1.3 })]), /^model\.json: lens\[0\]\.q: 1\.3 is outside the allowed range \(0, 1\]$/],
  ["q = 0", model([sie({ q: 0 })]), /lens\[0\]\.q: 0 is outside the allowed range \(0, 1\]/],
  ["theta_E negative", model([sie({ theta_E: -1 })]), /lens\[0\]\.theta_E: -1 arcsec is outside the allowed range \(0, ∞\)/],
  ["sersic n out of range", model([], [{ type: "sersic", flux: 1, r_eff: 0.1, n: 12, q: 1, pa: 0, x: 0, y: 0 }]), /source\[0\]\.n: 12 is outside the allowed range \[0\.2, 10\]/],
  ["gaussian sigma zero", model([], [{ type: "gaussian", flux: 1, sigma: 0, q: 1, pa: 0, x: 0, y: 0 }]), /source\[0\]\.sigma: 0 arcsec is outside the allowed range \(0, ∞\)/],
  ["epl slope out of range", model([{ type: "epl", theta_E: 1, slope: 3, q: 0.8, pa: 0, x: 0, y: 0 }]), /lens\[0\]\.slope: 3 is outside the allowed range \(1\.2, 2\.8\)/],
  ["shear gamma ≥ 1", model([{ type: "shear", gamma: 1, pa: 0 }]), /lens\[0\]\.gamma: 1 is outside the allowed range \[0, 1\)/],
  ["multipole order 5", model([{ type: "multipole", order: 5, strength: 0.01, pa: 0, x: 0, y: 0 }]), /lens\[0\]\.order: expected 3 or 4; got 5$/],
  ["multipole order free", model([{ type: "multipole", order: { init: 3, min: 3, max: 4 }, strength: 0.01, pa: 0, x: 0, y: 0 }]), /lens\[0\]\.order: must be a fixed number \(3 or 4\), not free or tied; got an object/],
  ["bounds reversed", model([sie({ theta_E: { init: 1, min: 2, max: 0.5 } })]), /^model\.json: lens\[0\]\.theta_E: min 2 must be below max 0\.5 \(to fix a parameter, give a plain number\)$/],
  ["init outside bounds", model([sie({ theta_E: { init: 3, min: 0.5, max: 2 } })]), /^model\.json: lens\[0\]\.theta_E\.init: 3 lies outside \[min, max\] = \[0\.5, 2\]$/],
  ["bound outside the allowed range", model([sie({ q: { init: 0.5, min: 0.2, max: 1.5 } })]), /lens\[0\]\.q\.max: 1\.5 is outside the allowed range \(0, 1\]/],
  ["init without bounds", model([sie({ x: { init: 0 } })]), /lens\[0\]\.x: a free parameter needs "min" and "max" \(uniform prior\) or a "prior"; got an object \{init\}/],
  ["misspelt bound key", model([sie({ x: { init: 0, minimum: -1, max: 1 } })]), /lens\[0\]\.x: a free parameter needs "min" and "max" .* \(did you mean "min"\?\)/],
  ["extra key in uniform form", model([sie({ x: { init: 0, min: -1, max: 1, step: 0.1 } })]), /lens\[0\]\.x\.step: unknown key; allowed: init, min, max$/],
  ["normal sd not positive", model([sie({ x: { init: 0, prior: { normal: [0, 0] } } })]), /lens\[0\]\.x\.prior\.normal\[1\]: the standard deviation must be > 0; got 0/],
  ["normal with one number", model([sie({ x: { init: 0, prior: { normal: [0] } } })]), /lens\[0\]\.x\.prior\.normal: expected at least 2 items; got 1/],
  ["normal init outside truncation", model([sie({ x: { init: 2, prior: { normal: [0, 1] }, min: -1, max: 1 } })]), /lens\[0\]\.x\.init: 2 lies outside the prior's support \[-1, 1\]/],
  ["normal init outside the allowed range", model([sie({ theta_E: { init: -0.1, prior: { normal: [1, 0.5] } } })]), /lens\[0\]\.theta_E\.init: -0\.1 lies outside the prior's support \(0, ∞\)/],
  ["normal with no mass inside its bounds", model([sie({ q: { init: 0.5, prior: { normal: [10, 0.1] } } })]), /lens\[0\]\.q\.prior: normal\(10, 0\.1\) has almost no probability \(< 1e-12\) inside \[0, 1\]; check the mean, sd and bounds/],
  ["unknown prior kind", model([sie({ x: { init: 0, prior: { gaussian: [0, 1] } } })]), /lens\[0\]\.x\.prior: expected exactly one of \{"normal": \[mean, sd\]\} or \{"loguniform": \[min, max\]\}; got an object \{gaussian\}/],
  ["uniform written as a prior", model([sie({ x: { init: 0, prior: { uniform: [0, 1] } } })]), /\(for a uniform prior write \{"init", "min", "max"\} without "prior"\)/],
  ["prior without init", model([sie({ x: { prior: { normal: [0, 1] } } })]), /lens\[0\]\.x\.init: missing; a free parameter needs a starting value "init"/],
  ["loguniform not positive", model([], [ps({ flux: { init: 0.1, prior: { loguniform: [0, 1] } } })]), /source\[0\]\.flux\.prior\.loguniform: the range must be positive; got \[0, 1\]/],
  ["loguniform reversed", model([], [ps({ flux: { init: 0.1, prior: { loguniform: [1, 0.01] } } })]), /source\[0\]\.flux\.prior\.loguniform: min 1 must be below max 0\.01/],
  ["loguniform init outside", model([], [ps({ flux: { init: 5, prior: { loguniform: [0.01, 1] } } })]), /source\[0\]\.flux\.init: 5 lies outside the loguniform range \[0\.01, 1\]/],
  ["loguniform with min/max", model([], [ps({ flux: { init: 0.1, prior: { loguniform: [0.01, 1] }, min: 0.02 } })]), /source\[0\]\.flux\.min: not allowed with a loguniform prior/],
  ["loguniform outside the allowed range", model([sie({ q: { init: 0.5, prior: { loguniform: [0.1, 2] } } })]), /lens\[0\]\.q\.prior\.loguniform: \[0\.1, 2\] is not inside the allowed range \(0, 1\]/],
  ["same_as with other keys", model([sie({ x: { same_as: "lens[0].y", init: 0 } })]), /lens\[0\]\.x: "same_as" cannot be combined with "init"/],
  ["same_as malformed", model([sie({ x: { same_as: "lens0.y" } })]), /lens\[0\]\.x\.same_as: expected a parameter name like "lens\[0\]\.x" or "source\[1\]\.pa"; got "lens0\.y"/],
  ["same_as to a missing component", model([sie({ x: { same_as: "lens[3].x" } })]), /lens\[0\]\.x\.same_as: "lens\[3\]\.x" does not exist: the file has 1 lens component$/],
  ["same_as to a missing parameter", model([sie(), { type: "shear", gamma: 0.1, pa: 0, x: { same_as: "lens[0].core" } }]), /lens\[1\]\.x\.same_as: "lens\[0\]\.core" is not set in the file; lens\[0\] \(sie\) has theta_E, q, pa, x, y/],
  ["same_as to a fixed setting", model([{ type: "multipole", order: 3, strength: 0.01, pa: 0, x: 0, y: { same_as: "lens[0].order" } }]), /lens\[0\]\.y\.same_as: "lens\[0\]\.order" is a fixed setting/],
  ["tie cycle", model([sie({ x: { same_as: "lens[1].x" } }), { type: "shear", gamma: 0.1, pa: 0, x: { same_as: "lens[0].x" } }]), /lens\[0\]\.x\.same_as: ties form a cycle: lens\[0\]\.x → lens\[1\]\.x → lens\[0\]\.x; one of them must be a number or free/],
  ["self tie", model([sie({ x: { same_as: "lens[0].x" } })]), /lens\[0\]\.x\.same_as: ties form a cycle: lens\[0\]\.x → lens\[0\]\.x/],
  ["tie to an incompatible range", model([sie({ theta_E: { init: 1.5, min: 0.5, max: 2 }, q: { same_as: "lens[0].theta_E" } })]), /lens\[0\]\.q\.same_as: lens\[0\]\.theta_E ranges over \[0\.5, 2\], not inside the allowed range \(0, 1\] of q/],
  ["tie to a fixed value outside the range", model([sie({ theta_E: 1.5, q: { same_as: "lens[0].theta_E" } })]), /lens\[0\]\.q\.same_as: takes 1\.5 from lens\[0\]\.theta_E, outside the allowed range \(0, 1\] of q/],
  ["redshift order", model([sie()], [ps()], { redshift: { lens: 2, source: 1 } }), /^model\.json: redshift: the source \(z = 1\) must lie behind the lens \(z = 2\)$/],
  ["redshift not positive", model([sie()], [ps()], { redshift: { lens: 0, source: 1 } }), /redshift\.lens: must be > 0; got 0/],
  ["redshift missing source", model([sie()], [ps()], { redshift: { lens: 0.5 } }), /redshift\.source: missing; expected a finite number/],
  ["m200 without redshifts", model([{ type: "nfw", m200: 1e13, c200: 5, q: 1, pa: 0, x: 0, y: 0 }]), /lens\[0\]: m200 and c200 need a top-level "redshift": \{"lens": z_l, "source": z_s\}/],
  ["point mass without redshifts", model([{ type: "point", mass: 1e11, x: 0, y: 0 }]), /lens\[0\]: mass need a top-level "redshift"/],
  ["nfw mixing parametrisations", model([{ type: "nfw", kappa_s: 0.1, r_s: 2, m200: 1e13, q: 1, pa: 0, x: 0, y: 0 }]), /lens\[0\]: give either kappa_s \+ r_s or m200 \+ c200, not both/],
  ["nfw incomplete pair", model([{ type: "nfw", kappa_s: 0.1, q: 1, pa: 0, x: 0, y: 0 }]), /lens\[0\]\.r_s: missing; kappa_s and r_s go together/],
  ["point with neither", model([{ type: "point", x: 0, y: 0 }]), /lens\[0\]: "point" needs theta_E or mass/],
  ["field sizes", model([sie()], [ps()], { field: { size_arcsec: -5, pixel_arcsec: 0.02 } }), /field\.size_arcsec: must be > 0; got -5/],
  ["pixel larger than the field", model([sie()], [ps()], { field: { size_arcsec: 1, pixel_arcsec: 2 } }), /field\.pixel_arcsec: 2 arcsec must be smaller than size_arcsec \(1 arcsec\)/],
  ["cosmology Om0 out of range", model([sie()], [ps()], { cosmology: { H0: 70, Om0: 1.5 } }), /cosmology\.Om0: must be ≤ 1; got 1\.5/],
  ["pixelised grid kind", model([sie()], [{ type: "pixelised", grid: "regualr", cells: 40, regularisation: "gradient" }]), /source\[0\]\.grid: expected one of "regular", "adaptive"; got "regualr" \(did you mean "regular"\?\)/],
  ["pixelised cells not integer", model([sie()], [{ type: "pixelised", grid: "regular", cells: 40.5, regularisation: "gradient" }]), /source\[0\]\.cells: expected an integer in \[4, 1000000\]; got 40\.5/],
  ["pixelised missing regularisation", model([sie()], [{ type: "pixelised", grid: "regular", cells: 40 }]), /source\[0\]\.regularisation: missing; expected one of "zeroth", "gradient", "curvature"/],
  ["two pixelised sources", model([sie()], [{ type: "pixelised", grid: "regular", cells: 40, regularisation: "zeroth" }, { type: "pixelised", grid: "adaptive", cells: 400, regularisation: "zeroth" }]), /source: more than one pixelised source; a model takes at most one/],
  ["spectral index without reference frequency", model([], [ps({ spectral_index: 2 })]), /source\[0\]\.ref_freq_ghz: missing; spectral_index needs the reference frequency/],
  ["name not a string", model([sie({ name: 5 })]), /lens\[0\]\.name: expected a string; got 5/],
];

describe("model-file errors name the path and what is allowed", () => {
  for (const [what, json, pattern] of cases) {
    it(what, () => expect(messageOf(json)).toMatch(pattern));
  }
  it("several problems are reported together, at most three, joined by '; '", () => {
    const msg = messageOf(model([sie({ q: 2, theta_E: -1, x: "a", y: "b" })]));
    expect(msg).toMatch(/^model\.json: lens\[0\]\.theta_E: .*; lens\[0\]\.q: .*; lens\[0\]\.x: .* \(and 1 more\)$/);
  });
});

describe("JSON text and files", () => {
  it("a syntax error names line and column", () => {
    const text = '{\n  "lens": [],\n  "source": [ { "type": "point_source", "flux": 1, "x": 0, "y": 0, } ]\n}';
    expect(() => parseModelText(text, "m.json")).toThrow(/^m\.json:3:\d+: not valid JSON \(.+\); fix the JSON syntax/);
  });
  it("a bare NaN is located and explained", () => {
    const text = '{\n "lens": [],\n "source": [{"type": "point_source", "flux": NaN, "x": 0, "y": 0}]\n}';
    expect(() => parseModelText(text, "m.json")).toThrow(/^m\.json:3:\d+: not valid JSON .*; JSON has no NaN or Infinity: write a finite number$/);
  });
  it("truncated text reports the end of the file", () => {
    expect(() => parseModelText('{"lens": [', "m.json")).toThrow(/^m\.json:1:11: not valid JSON \(Unexpected end of JSON input\)/);
  });
  it("an unexpected token without an engine position is located by our own scan", () => {
    expect(() => parseModelText('{"lens": [], "source": [}', "m.json")).toThrow(/^m\.json:1:25: not valid JSON \(Unexpected token '\}'\); fix the JSON syntax/);
  });
  it("a UTF-8 byte-order mark is accepted", () => {
    const text = '\uFEFF{"lens": [], "source": [{"type": "point_source", "flux": 1, "x": 0, "y": 0}]}';
    expect(parseModelText(text, "m.json").free.length).toBe(0);
  });
  it("a missing file or a folder is one clear line", () => {
    const dir = mkdtempSync(join(tmpdir(), "arcfringe-model-"));
    expect(() => loadModelFile(join(dir, "nope.json"))).toThrow(/nope\.json: cannot read the model file \(no such file\); check the path/);
    expect(() => loadModelFile(dir)).toThrow(/cannot read the model file \(is a folder, not a file\)/);
    const bad = join(dir, "bad.json");
    writeFileSync(bad, JSON.stringify(model([sie({ q: 7 })])));
    expect(() => loadModelFile(bad)).toThrow(new RegExp(`^${bad.replace(/[.]/g, "\\.")}: lens\\[0\\]\\.q: 7 is outside`));
  });
});
