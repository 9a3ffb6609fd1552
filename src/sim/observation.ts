/**
 * The observation file (DESIGN.md, "Observation file"): a JSON description of an array, a site,
 * a target and a correlator set-up, validated into an `Observation` whose field names carry
 * their units. Each problem is reported as one line: `<file>: <key>: expected ...; got ...`.
 *
 * Keys: `array` (path to an ENU table relative to the JSON file, or
 * `{ "generate": "disc" | "ring" | "y", "n_ant", "max_baseline_m", "seed" }`), `dish_m`,
 * `site_lat_deg`, `phase_centre_deg: [ra, dec]`, `hour_angle_h: [start, end]`, `integration_s`,
 * `freq_ghz` (band centre), `bandwidth_ghz` (total, split into `channels` equal channels),
 * `channels`, `tsys_k`, `aperture_efficiency`, `correlator_efficiency` (default 0.88), `n_pol`
 * (default 2); optional `elevation_limit_deg` (default 15), `date` (ISO 8601, UTC time of the
 * track start), `name`, `preset` (named defaults, OBSERVATION_PRESETS; explicit keys win) and
 * `gain_errors: { "phase_rms_deg", "amplitude_rms", "model": "constant" | "random_walk" }`.
 */
import { readFileSync } from "node:fs";
import { dirname, resolve } from "node:path";
import { InputError } from "../errors.js";
import { DEG_TO_RAD } from "../units.js";
import type { GainErrorSpec } from "./gains.js";
import { generateLayout, readLayoutFile, type AntennaLayout, type GenerateLayoutSpec } from "./layout.js";
import { DEFAULT_ELEVATION_LIMIT_DEG, elevationRad, SIDEREAL_PER_SOLAR } from "./uvw.js";

/** A validated observation. */
export interface Observation {
  /** Free-text name (object name in written files), if given. */
  name?: string;
  /** Antenna positions [m, ENU]. */
  layout: AntennaLayout;
  /** Where the layout came from: the table path, or "generated <kind>". */
  layoutSource: string;
  /** The generate spec when the layout was generated. */
  layoutSpec?: GenerateLayoutSpec;
  dishM: number;
  siteLatDeg: number;
  /** Phase (and pointing) centre [deg], J2000 (RA, Dec). */
  phaseCentreDeg: [number, number];
  /** Hour-angle range [h] (start < end, both in [−12, 12]). */
  hourAngleH: [number, number];
  integrationS: number;
  /** Band centre [Hz]. */
  freqHz: number;
  /** Total bandwidth per polarisation [Hz]. */
  bandwidthHz: number;
  channels: number;
  tsysK: number;
  apertureEfficiency: number;
  correlatorEfficiency: number;
  /** Number of parallel hands (1 or 2). */
  nPol: number;
  elevationLimitDeg: number;
  /** ISO date of the track start, if given. */
  date?: string;
  /** Julian date of the track start (from `date`; J2000.0 = 2451545.0 when absent). */
  timeRefJd: number;
  /** Preset name used, if any. */
  preset?: string;
  /** Calibration errors to simulate, if any. */
  gainErrors?: GainErrorSpec;
}

/** Named defaults: any observation-file key except `array`, `phase_centre_deg`, `hour_angle_h`. */
export interface ObservationPreset {
  description: string;
  values: Record<string, number>;
}

/**
 * Named defaults for a generic array of 12 m dishes on a high, dry site at standard sub-mm
 * frequencies. Typical values, common practice (from memory, no single source): T_sys and
 * aperture efficiencies typical of current 12 m sub-mm dishes in good weather at mid-elevation;
 * η_c = 0.88 for 2-bit sampling (REFERENCES.md §6, memory); 7.5 GHz of bandwidth per
 * polarisation, as modern wide-band correlators deliver (REFERENCES.md §6 worked example);
 * site latitude −23° for a high Andean plateau. Not a model of any particular instrument.
 */
export const OBSERVATION_PRESETS: Readonly<Record<string, ObservationPreset>> = Object.freeze({
  "generic-12m-band3": {
    description: "12 m dishes at 100 GHz (3 mm), T_sys 70 K",
    values: { dish_m: 12, site_lat_deg: -23.03, freq_ghz: 100, bandwidth_ghz: 7.5, tsys_k: 70, aperture_efficiency: 0.71, correlator_efficiency: 0.88, n_pol: 2 },
  },
  "generic-12m-band6": {
    description: "12 m dishes at 230 GHz (1.3 mm), T_sys 100 K",
    values: { dish_m: 12, site_lat_deg: -23.03, freq_ghz: 230, bandwidth_ghz: 7.5, tsys_k: 100, aperture_efficiency: 0.68, correlator_efficiency: 0.88, n_pol: 2 },
  },
  "generic-12m-band7": {
    description: "12 m dishes at 345 GHz (0.87 mm), T_sys 150 K",
    values: { dish_m: 12, site_lat_deg: -23.03, freq_ghz: 345, bandwidth_ghz: 7.5, tsys_k: 150, aperture_efficiency: 0.63, correlator_efficiency: 0.88, n_pol: 2 },
  },
});

/** Defaults for keys that may be omitted (DESIGN.md; elevation limit: uvw.ts). */
export const OBSERVATION_DEFAULTS = Object.freeze({
  correlator_efficiency: 0.88,
  n_pol: 2,
  elevation_limit_deg: DEFAULT_ELEVATION_LIMIT_DEG,
  /** J2000.0 epoch as a Julian date: the time reference when `date` is absent. */
  time_ref_jd: 2451545.0,
});

const KNOWN_KEYS = [
  "name", "preset", "array", "dish_m", "site_lat_deg", "phase_centre_deg", "hour_angle_h",
  "integration_s", "freq_ghz", "bandwidth_ghz", "channels", "tsys_k", "aperture_efficiency",
  "correlator_efficiency", "n_pol", "elevation_limit_deg", "date", "gain_errors",
];

/**
 * Validate a parsed observation file.
 * @param json the parsed JSON value
 * @param sourceName file name used in messages (e.g. "obs.json")
 * @param baseDir directory that a relative `array` path is resolved against
 * @throws InputError with one line naming the key, what was found and what is allowed
 * Reference: DESIGN.md "Observation file"; presets OBSERVATION_PRESETS.
 */
export function parseObservation(json: unknown, sourceName: string, baseDir: string): Observation {
  const src = sourceName;
  if (json === null || typeof json !== "object" || Array.isArray(json)) {
    throw new InputError(`${src}: expected a JSON object of observation keys; got ${describe(json)}`);
  }
  const given = json as Record<string, unknown>;
  for (const key of Object.keys(given)) {
    if (!KNOWN_KEYS.includes(key)) {
      throw new InputError(`${src}: ${key}: unknown key; allowed keys are ${KNOWN_KEYS.join(", ")}`);
    }
  }

  // Preset values first; explicit keys override them.
  let preset: string | undefined;
  const obj: Record<string, unknown> = {};
  if (given.preset !== undefined) {
    if (typeof given.preset !== "string" || !(given.preset in OBSERVATION_PRESETS)) {
      throw new InputError(
        `${src}: preset: expected one of ${Object.keys(OBSERVATION_PRESETS).map((p) => `"${p}"`).join(", ")}; got ${describe(given.preset)}`,
      );
    }
    preset = given.preset;
    Object.assign(obj, OBSERVATION_PRESETS[preset].values);
  }
  for (const [k, v] of Object.entries(given)) if (v !== undefined) obj[k] = v;

  const r = new Reader(src, obj);
  const name = r.optionalString("name");
  const dishM = r.number("dish_m", { min: 0, minExclusive: true, max: 1000, unit: "m", what: "the dish diameter" });
  const siteLatDeg = r.number("site_lat_deg", { min: -90, max: 90, unit: "deg", what: "the site latitude" });
  const phaseCentreDeg = r.pair("phase_centre_deg", "[ra, dec] in degrees", ([ra, dec]) => {
    if (!(ra >= 0 && ra < 360)) return `RA must lie in [0, 360) deg; got ${ra}`;
    if (!(dec >= -90 && dec <= 90)) return `Dec must lie in [−90, 90] deg; got ${dec}`;
    return null;
  });
  const hourAngleH = r.pair("hour_angle_h", "[start, end] in hours", ([a, b]) => {
    if (!(a >= -12 && a <= 12 && b >= -12 && b <= 12)) return `both hour angles must lie in [−12, 12] h; got [${a}, ${b}]`;
    if (!(b > a)) return `the end must come after the start; got [${a}, ${b}]`;
    return null;
  });
  const integrationS = r.number("integration_s", { min: 0, minExclusive: true, unit: "s", what: "the integration time" });
  const trackS = ((hourAngleH[1] - hourAngleH[0]) * 3600) / SIDEREAL_PER_SOLAR;
  if (integrationS > trackS) {
    throw new InputError(
      `${src}: integration_s: ${integrationS} s is longer than the track (${trackS.toFixed(1)} s of time for hour_angle_h [${hourAngleH[0]}, ${hourAngleH[1]}]); shorten it or widen the hour-angle range`,
    );
  }
  const freqGhz = r.number("freq_ghz", { min: 0, minExclusive: true, unit: "GHz", what: "the band centre" });
  const bandwidthGhz = r.number("bandwidth_ghz", { min: 0, minExclusive: true, unit: "GHz", what: "the total bandwidth" });
  if (!(bandwidthGhz < 2 * freqGhz)) {
    throw new InputError(
      `${src}: bandwidth_ghz: expected less than twice freq_ghz (${freqGhz} GHz) so every channel has a positive frequency; got ${bandwidthGhz}`,
    );
  }
  const channels = r.number("channels", { min: 1, max: 65535, integer: true, unit: "", what: "the number of channels" });
  const tsysK = r.number("tsys_k", { min: 0, minExclusive: true, unit: "K", what: "the system temperature" });
  const apertureEfficiency = r.number("aperture_efficiency", { min: 0, minExclusive: true, max: 1, unit: "", what: "η_a" });
  const correlatorEfficiency = r.number("correlator_efficiency", {
    min: 0, minExclusive: true, max: 1, unit: "", what: "η_c", fallback: OBSERVATION_DEFAULTS.correlator_efficiency,
  });
  const nPol = r.number("n_pol", { min: 1, max: 2, integer: true, unit: "", what: "1 or 2 parallel hands", fallback: OBSERVATION_DEFAULTS.n_pol });
  const elevationLimitDeg = r.number("elevation_limit_deg", {
    min: 0, max: 90, maxExclusive: true, unit: "deg", what: "the elevation limit", fallback: OBSERVATION_DEFAULTS.elevation_limit_deg,
  });

  let date: string | undefined;
  let timeRefJd: number = OBSERVATION_DEFAULTS.time_ref_jd;
  if (obj.date !== undefined) {
    const ms = typeof obj.date === "string" && /^\d{4}-\d{2}-\d{2}/.test(obj.date) ? Date.parse(obj.date) : NaN;
    if (!Number.isFinite(ms)) {
      throw new InputError(`${src}: date: expected an ISO 8601 date such as "2024-03-01T04:00:00Z"; got ${describe(obj.date)}`);
    }
    date = obj.date as string;
    // Unix epoch 1970-01-01T00:00Z is JD 2440587.5.
    timeRefJd = ms / 86_400_000 + 2440587.5;
  }

  const gainErrors = parseGainErrors(obj.gain_errors, src);
  const { layout, layoutSource, layoutSpec } = parseArray(obj.array, src, baseDir, dishM);

  // The source must clear the elevation limit somewhere in the range; the highest point of the
  // track is at the hour angle closest to 0 (elevation falls monotonically with |H|).
  const hBest = Math.min(Math.max(0, hourAngleH[0]), hourAngleH[1]) * 15 * DEG_TO_RAD;
  const maxElDeg = elevationRad(hBest, phaseCentreDeg[1] * DEG_TO_RAD, siteLatDeg * DEG_TO_RAD) / DEG_TO_RAD;
  if (maxElDeg < elevationLimitDeg) {
    throw new InputError(
      `${src}: hour_angle_h: at Dec ${phaseCentreDeg[1]}° from site_lat_deg ${siteLatDeg}° the source peaks at ${maxElDeg.toFixed(1)}° elevation ` +
        `in [${hourAngleH[0]}, ${hourAngleH[1]}] h, below elevation_limit_deg ${elevationLimitDeg}°; choose hour angles nearer 0 or lower the limit`,
    );
  }

  return {
    name,
    layout,
    layoutSource,
    layoutSpec,
    dishM,
    siteLatDeg,
    phaseCentreDeg,
    hourAngleH,
    integrationS,
    freqHz: freqGhz * 1e9,
    bandwidthHz: bandwidthGhz * 1e9,
    channels,
    tsysK,
    apertureEfficiency,
    correlatorEfficiency,
    nPol,
    elevationLimitDeg,
    date,
    timeRefJd,
    preset,
    gainErrors,
  };
}

/**
 * Read and validate an observation file (JSON).
 * @param path file path; a relative `array` path inside is resolved against its directory
 * @throws InputError for unreadable files, invalid JSON and every invalid key
 * Reference: see parseObservation.
 */
export function readObservationFile(path: string): Observation {
  let text: string;
  try {
    text = readFileSync(path, "utf8");
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code ?? "unreadable";
    throw new InputError(`${path}: cannot read the observation file (${code}); check the path`);
  }
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch (err) {
    throw new InputError(`${path}: not valid JSON (${(err as Error).message}); fix the syntax`);
  }
  return parseObservation(json, path, dirname(resolve(path)));
}

/**
 * Centre frequencies of the channels [Hz]: `channels` equal channels tiling the band,
 * ν_k = ν_c + (k − (n−1)/2)·Δν/n.
 */
export function channelFrequenciesHz(obs: Observation): Float64Array {
  const width = obs.bandwidthHz / obs.channels;
  const out = new Float64Array(obs.channels);
  for (let k = 0; k < obs.channels; k++) out[k] = obs.freqHz + (k - (obs.channels - 1) / 2) * width;
  return out;
}

function parseArray(
  value: unknown,
  src: string,
  baseDir: string,
  dishM: number,
): { layout: AntennaLayout; layoutSource: string; layoutSpec?: GenerateLayoutSpec } {
  if (value === undefined) {
    throw new InputError(`${src}: array: missing; give a path to an ENU table or { "generate": "disc" | "ring" | "y", "n_ant", "max_baseline_m", "seed" }`);
  }
  if (typeof value === "string") {
    if (value.trim() === "") throw new InputError(`${src}: array: empty path; give the path of an ENU table (east north [up] [name], metres)`);
    const full = resolve(baseDir, value);
    return { layout: readLayoutFile(full, value), layoutSource: value };
  }
  if (value === null || typeof value !== "object" || Array.isArray(value)) {
    throw new InputError(`${src}: array: expected a path or a { "generate": ... } object; got ${describe(value)}`);
  }
  const spec = value as Record<string, unknown>;
  const allowed = ["generate", "n_ant", "max_baseline_m", "seed"];
  for (const k of Object.keys(spec)) {
    if (!allowed.includes(k)) throw new InputError(`${src}: array.${k}: unknown key; allowed keys are ${allowed.join(", ")}`);
  }
  const r = new Reader(src, spec, "array.");
  const kind = spec.generate;
  if (kind !== "disc" && kind !== "ring" && kind !== "y") {
    throw new InputError(`${src}: array.generate: expected "disc", "ring" or "y"; got ${describe(kind)}`);
  }
  const nAnt = r.number("n_ant", { min: kind === "y" ? 3 : 2, max: 1000, integer: true, unit: "", what: "the number of antennas" });
  const maxBaselineM = r.number("max_baseline_m", { min: 0, minExclusive: true, unit: "m", what: "the longest baseline" });
  const seed = r.number("seed", { min: 0, max: 4294967295, integer: true, unit: "", what: "the layout seed", fallback: 1 });
  const layoutSpec: GenerateLayoutSpec = { generate: kind, nAnt, maxBaselineM, seed };
  return { layout: generateLayout(layoutSpec, dishM, `${src}: array`), layoutSource: `generated ${kind}`, layoutSpec };
}

function parseGainErrors(value: unknown, src: string): GainErrorSpec | undefined {
  if (value === undefined) return undefined;
  if (value === null || typeof value !== "object" || Array.isArray(value)) {
    throw new InputError(`${src}: gain_errors: expected { "phase_rms_deg", "amplitude_rms", "model" }; got ${describe(value)}`);
  }
  const spec = value as Record<string, unknown>;
  const allowed = ["phase_rms_deg", "amplitude_rms", "model"];
  for (const k of Object.keys(spec)) {
    if (!allowed.includes(k)) throw new InputError(`${src}: gain_errors.${k}: unknown key; allowed keys are ${allowed.join(", ")}`);
  }
  const r = new Reader(src, spec, "gain_errors.");
  const phaseRmsDeg = r.number("phase_rms_deg", { min: 0, max: 180, unit: "deg", what: "the rms antenna phase error", fallback: 0 });
  const amplitudeRms = r.number("amplitude_rms", { min: 0, max: 1, unit: "", what: "the rms log-amplitude error", fallback: 0 });
  const model = spec.model ?? "constant";
  if (model !== "constant" && model !== "random_walk") {
    throw new InputError(`${src}: gain_errors.model: expected "constant" or "random_walk"; got ${describe(model)}`);
  }
  return { phaseRmsDeg, amplitudeRms, model };
}

interface NumberRule {
  min?: number;
  max?: number;
  minExclusive?: boolean;
  maxExclusive?: boolean;
  integer?: boolean;
  /** Unit for messages ("" for dimensionless). */
  unit: string;
  /** What the key is, for the "missing" message. */
  what: string;
  /** Value when the key is absent; absent and no fallback → "missing". */
  fallback?: number;
}

/** Typed access to one JSON object with one-line errors. */
class Reader {
  constructor(
    private readonly src: string,
    private readonly obj: Record<string, unknown>,
    private readonly prefix = "",
  ) {}

  number(key: string, rule: NumberRule): number {
    const v = this.obj[key];
    const where = `${this.src}: ${this.prefix}${key}`;
    if (v === undefined) {
      if (rule.fallback !== undefined) return rule.fallback;
      throw new InputError(`${where}: missing; give ${rule.what}${rule.unit ? ` in ${rule.unit}` : ""}`);
    }
    const ok =
      typeof v === "number" &&
      Number.isFinite(v) &&
      (!rule.integer || Number.isInteger(v)) &&
      (rule.min === undefined || (rule.minExclusive ? v > rule.min : v >= rule.min)) &&
      (rule.max === undefined || (rule.maxExclusive ? v < rule.max : v <= rule.max));
    if (!ok) throw new InputError(`${where}: expected ${expectation(rule)}; got ${describe(v)}`);
    return v as number;
  }

  optionalString(key: string): string | undefined {
    const v = this.obj[key];
    if (v === undefined) return undefined;
    if (typeof v !== "string") throw new InputError(`${this.src}: ${this.prefix}${key}: expected a string; got ${describe(v)}`);
    return v;
  }

  pair(key: string, shape: string, check: (p: [number, number]) => string | null): [number, number] {
    const v = this.obj[key];
    const where = `${this.src}: ${this.prefix}${key}`;
    if (v === undefined) throw new InputError(`${where}: missing; give ${shape}`);
    if (!Array.isArray(v) || v.length !== 2 || !v.every((x) => typeof x === "number" && Number.isFinite(x))) {
      throw new InputError(`${where}: expected ${shape}; got ${describe(v)}`);
    }
    const p: [number, number] = [v[0] as number, v[1] as number];
    const problem = check(p);
    if (problem) throw new InputError(`${where}: ${problem}`);
    return p;
  }
}

/** "a positive number in K", "an integer in [1, 65535]", "a number in (0, 1]". */
function expectation(rule: NumberRule): string {
  const kind = rule.integer ? "an integer" : "a number";
  const unit = rule.unit ? ` in ${rule.unit}` : "";
  if (rule.min === 0 && rule.minExclusive && rule.max === undefined) return `a positive number${unit}`;
  if (rule.min !== undefined && rule.max === undefined) return `${kind} ≥ ${rule.min}${unit}`;
  if (rule.min !== undefined && rule.max !== undefined) {
    if (rule.integer && rule.max - rule.min === 1) return `${rule.min} or ${rule.max}`;
    const lo = rule.minExclusive ? "(" : "[";
    const hi = rule.maxExclusive ? ")" : "]";
    return `${kind} in ${lo}${rule.min}, ${rule.max}${hi}${rule.unit ? ` ${rule.unit}` : ""}`;
  }
  return `${kind}${unit}`;
}

function describe(v: unknown): string {
  if (v === undefined) return "nothing";
  if (typeof v === "string") return JSON.stringify(v);
  if (typeof v === "number") return String(v);
  try {
    return JSON.stringify(v);
  } catch {
    return String(v);
  }
}
