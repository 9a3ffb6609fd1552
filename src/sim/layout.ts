/**
 * Antenna layouts as local East-North-Up (ENU) positions in metres: read from a text table, or
 * generated (random disc, ring, Y-shaped array) for array planning and mock observations.
 *
 * Conventions: E toward local East, N toward local North, U toward the local zenith, all relative
 * to an arbitrary array reference point. Antennas are numbered 1..n in table order (the
 * 1-based numbering of UVFITS, AIPS Memo 117). Generated layouts lie in the horizontal plane
 * (U = 0) and are scaled so that their longest baseline equals the requested one exactly.
 */
import { readFileSync } from "node:fs";
import { InputError } from "../errors.js";
import { Rng } from "../random.js";
import { DEG_TO_RAD } from "../units.js";

/** Antenna positions [m] in local ENU coordinates; antenna k (1-based) is index k − 1. */
export interface AntennaLayout {
  eastM: Float64Array;
  northM: Float64Array;
  upM: Float64Array;
  /** One name per antenna (from the table, or generated as "A01", "A02", ...). */
  names: string[];
}

/** How to generate a layout (the `array` object of an observation file). */
export interface GenerateLayoutSpec {
  /** "disc": uniform random in a disc; "ring": on a circle; "y": three arms (a Y). */
  generate: "disc" | "ring" | "y";
  /** Number of antennas (≥ 2; ≥ 3 for "y"). */
  nAnt: number;
  /** Longest baseline of the generated layout [m]; matched exactly by scaling. */
  maxBaselineM: number;
  /** Seed of the random positions (disc) or of the angular jitter (ring); unused by "y". */
  seed: number;
}

/**
 * Minimum spacing between antenna centres, in dish diameters. Two dishes of diameter D touch at
 * a spacing of D; 1.5 D leaves room for the mounts and keeps shadowing modest at moderate
 * elevations (common practice, no source).
 */
export const MIN_SPACING_DISHES = 1.5;

/**
 * Rotation of the first arm of a Y array from North toward East [deg]. A Y whose arms are turned
 * a few degrees off the cardinal directions avoids a north-south arm whose baselines all
 * foreshorten together (common practice, no source).
 */
export const Y_ARM_ROTATION_DEG = 5;

/**
 * Exponent of the power-law spacing along each arm of a Y: the k-th antenna of an arm of n sits
 * at r_k ∝ k^p (pushed outward where the minimum spacing requires). p ≈ 1.7 concentrates antennas toward the centre so short baselines are well
 * sampled (common practice, from memory).
 */
export const Y_ARM_POWER_LAW = 1.7;

/** Fraction of the angular step used as the maximum ±jitter of ring positions (no source). */
const RING_JITTER_FRACTION = 0.1;

/**
 * Parse an ENU antenna table: one antenna per line, whitespace- or comma-separated columns
 * `east north [up] [name]` in metres, `#` starting a comment, blank lines ignored.
 * @param text contents of the table
 * @param sourceName file name used in error messages
 * @returns the layout (up = 0 where the column is absent)
 * @throws InputError naming the line of the first malformed entry
 * Reference: local tangent-plane (ENU) coordinates, Thompson, Moran & Swenson 2017 §4.1.
 */
export function parseLayoutTable(text: string, sourceName: string): AntennaLayout {
  const east: number[] = [];
  const north: number[] = [];
  const up: number[] = [];
  const names: string[] = [];
  const lines = text.split(/\r?\n/);
  for (let i = 0; i < lines.length; i++) {
    const where = `${sourceName} line ${i + 1}`;
    const hash = lines[i].indexOf("#");
    const body = (hash >= 0 ? lines[i].slice(0, hash) : lines[i]).trim();
    if (body === "") continue;
    const cols = body.split(/[\s,]+/).filter((c) => c !== "");
    if (cols.length < 2 || cols.length > 4) {
      throw new InputError(
        `${where}: found ${cols.length} column${cols.length === 1 ? "" : "s"}; expected "east north [up] [name]" in metres`,
      );
    }
    const e = parseCoordinate(cols[0], "east", where);
    const n = parseCoordinate(cols[1], "north", where);
    let u = 0;
    let name = "";
    if (cols.length === 3) {
      // A third column is the height when it is a number, otherwise the name.
      if (looksNumeric(cols[2])) u = parseCoordinate(cols[2], "up", where);
      else name = cols[2];
    } else if (cols.length === 4) {
      u = parseCoordinate(cols[2], "up", where);
      name = cols[3];
    }
    for (let k = 0; k < east.length; k++) {
      if (east[k] === e && north[k] === n && up[k] === u) {
        throw new InputError(
          `${where}: antenna at (${e}, ${n}, ${u}) m repeats antenna ${k + 1}; every antenna needs its own position`,
        );
      }
    }
    east.push(e);
    north.push(n);
    up.push(u);
    names.push(name);
  }
  if (east.length < 2) {
    throw new InputError(
      `${sourceName}: found ${east.length} antenna${east.length === 1 ? "" : "s"}; an array needs at least 2 (one "east north [up] [name]" line each)`,
    );
  }
  return {
    eastM: Float64Array.from(east),
    northM: Float64Array.from(north),
    upM: Float64Array.from(up),
    names: names.map((nm, k) => (nm === "" ? defaultAntennaName(k + 1) : nm)),
  };
}

/**
 * Read an ENU antenna table from a file (format of `parseLayoutTable`).
 * @param path file path
 * @param displayName name used in messages (default: the path)
 * Reference: see parseLayoutTable.
 */
export function readLayoutFile(path: string, displayName = path): AntennaLayout {
  let text: string;
  try {
    text = readFileSync(path, "utf8");
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code ?? "unreadable";
    throw new InputError(`${displayName}: cannot read the antenna table (${code}); check the path`);
  }
  return parseLayoutTable(text, displayName);
}

/**
 * Format a layout as an ENU table that `parseLayoutTable` reads back.
 * @param layout antenna positions [m]
 * @param header comment lines written first (without the leading "#")
 */
export function formatLayoutTable(layout: AntennaLayout, header: string[] = []): string {
  const out: string[] = header.map((h) => `# ${h}`);
  out.push("# east_m north_m up_m name");
  for (let k = 0; k < layout.eastM.length; k++) {
    out.push(
      `${layout.eastM[k].toFixed(3)} ${layout.northM[k].toFixed(3)} ${layout.upM[k].toFixed(3)} ${layout.names[k]}`,
    );
  }
  return out.join("\n") + "\n";
}

/**
 * Generate a layout: uniform random disc (rejection sampling with a minimum spacing), ring with
 * a small seeded angular jitter, or a Y of three arms with power-law spacing. The result is
 * scaled so its longest baseline equals `spec.maxBaselineM` exactly (to rounding).
 * @param spec what to generate
 * @param dishM dish diameter [m]; sets the minimum antenna spacing MIN_SPACING_DISHES·dishM
 * @param where prefix for error messages (e.g. "obs.json: array")
 * @throws InputError when the antennas cannot keep the minimum spacing
 * Reference: rejection sampling of a uniform disc (common practice); Y-array geometry common
 * practice (see Y_ARM_ROTATION_DEG, Y_ARM_POWER_LAW).
 */
export function generateLayout(spec: GenerateLayoutSpec, dishM: number, where = "array"): AntennaLayout {
  const { nAnt, maxBaselineM } = spec;
  if (!Number.isInteger(nAnt) || nAnt < 2) {
    throw new InputError(`${where}.n_ant: expected an integer ≥ 2; got ${nAnt}`);
  }
  if (!(maxBaselineM > 0) || !Number.isFinite(maxBaselineM)) {
    throw new InputError(`${where}.max_baseline_m: expected a positive number in m; got ${maxBaselineM}`);
  }
  const minSpacingM = MIN_SPACING_DISHES * dishM;
  let east: Float64Array;
  let north: Float64Array;
  if (spec.generate === "disc") {
    [east, north] = discPositions(nAnt, maxBaselineM / 2, minSpacingM, new Rng(spec.seed), where);
  } else if (spec.generate === "ring") {
    [east, north] = ringPositions(nAnt, new Rng(spec.seed));
  } else if (spec.generate === "y") {
    if (nAnt < 3) throw new InputError(`${where}.n_ant: a Y array needs at least 3 antennas; got ${nAnt}`);
    [east, north] = yPositions(nAnt, maxBaselineM / Math.sqrt(3), minSpacingM, where);
  } else {
    throw new InputError(
      `${where}.generate: expected "disc", "ring" or "y"; got ${JSON.stringify((spec as { generate: unknown }).generate)}`,
    );
  }
  const layout: AntennaLayout = {
    eastM: east,
    northM: north,
    upM: new Float64Array(nAnt),
    names: Array.from({ length: nAnt }, (_, k) => defaultAntennaName(k + 1)),
  };
  const scale = maxBaselineM / maxBaselineLengthM(layout);
  for (let k = 0; k < nAnt; k++) {
    east[k] *= scale;
    north[k] *= scale;
  }
  const spacing = minBaselineLengthM(layout);
  // Disc and Y keep the spacing by construction (their scale factors are ≥ 1, up to rounding);
  // the ring can only be checked after scaling.
  if (spacing < minSpacingM * (1 - 1e-12)) {
    throw new InputError(
      `${where}: ${nAnt} antennas in a "${spec.generate}" layout with max_baseline_m ${maxBaselineM} come ${spacing.toFixed(2)} m apart, ` +
        `closer than ${MIN_SPACING_DISHES} dish diameters (${minSpacingM.toFixed(2)} m); use fewer antennas or a longer max_baseline_m`,
    );
  }
  return layout;
}

/** Longest baseline of a layout [m] (3-D distance between antenna centres). */
export function maxBaselineLengthM(layout: AntennaLayout): number {
  return extremeBaselineM(layout, true);
}

/** Shortest baseline of a layout [m] (3-D distance between antenna centres). */
export function minBaselineLengthM(layout: AntennaLayout): number {
  return extremeBaselineM(layout, false);
}

/** Name of antenna `k` (1-based) when the table gives none: "A01", "A02", ... */
export function defaultAntennaName(k: number): string {
  return `A${String(k).padStart(2, "0")}`;
}

function extremeBaselineM(layout: AntennaLayout, longest: boolean): number {
  const { eastM, northM, upM } = layout;
  let best = longest ? 0 : Infinity;
  for (let i = 0; i < eastM.length; i++) {
    for (let j = i + 1; j < eastM.length; j++) {
      const de = eastM[j] - eastM[i];
      const dn = northM[j] - northM[i];
      const du = upM[j] - upM[i];
      const d2 = de * de + dn * dn + du * du;
      if (longest ? d2 > best : d2 < best) best = d2;
    }
  }
  return Math.sqrt(best);
}

/** Uniform points in a disc of radius `radiusM`, no two closer than `minSpacingM`. */
function discPositions(
  nAnt: number,
  radiusM: number,
  minSpacingM: number,
  rng: Rng,
  where: string,
): [Float64Array, Float64Array] {
  const east = new Float64Array(nAnt);
  const north = new Float64Array(nAnt);
  const min2 = minSpacingM * minSpacingM;
  // Generous budget: a disc filled to a packing fraction that random sequential addition can
  // still reach succeeds in far fewer draws; beyond it we stop and say why.
  const maxDraws = 5000 * nAnt;
  let placed = 0;
  let draws = 0;
  while (placed < nAnt) {
    if (++draws > maxDraws) {
      throw new InputError(
        `${where}: could place only ${placed} of ${nAnt} antennas in a disc of diameter ${(2 * radiusM).toFixed(1)} m ` +
          `keeping ${MIN_SPACING_DISHES} dish diameters (${minSpacingM.toFixed(2)} m) apart; use fewer antennas or a longer max_baseline_m`,
      );
    }
    // r = R·sqrt(U) makes the density uniform in area.
    const r = radiusM * Math.sqrt(rng.uniform());
    const a = 2 * Math.PI * rng.uniform();
    const e = r * Math.sin(a);
    const n = r * Math.cos(a);
    let ok = true;
    for (let k = 0; k < placed; k++) {
      const de = e - east[k];
      const dn = n - north[k];
      if (de * de + dn * dn < min2) {
        ok = false;
        break;
      }
    }
    if (!ok) continue;
    east[placed] = e;
    north[placed] = n;
    placed++;
  }
  return [east, north];
}

/** Unit circle, uniform angles with a seeded jitter of ±RING_JITTER_FRACTION of a step. */
function ringPositions(nAnt: number, rng: Rng): [Float64Array, Float64Array] {
  const east = new Float64Array(nAnt);
  const north = new Float64Array(nAnt);
  const step = (2 * Math.PI) / nAnt;
  for (let k = 0; k < nAnt; k++) {
    const a = k * step + (2 * rng.uniform() - 1) * RING_JITTER_FRACTION * step;
    east[k] = Math.sin(a);
    north[k] = Math.cos(a);
  }
  return [east, north];
}

/**
 * Three arms at azimuths 5°, 125° and 245° (North through East), each of length `armM`, so the
 * longest baseline (tip to tip) is √3·armM. Arm m carries n_m antennas at radii armM·(k/n_m)^p,
 * k = 1..n_m, each pushed outward where needed to keep `minSpacingM` from its inner neighbour
 * (and √3·r_1 ≥ minSpacingM between the innermost antennas of two arms). Antennas are split as
 * evenly as possible, the first arms taking the remainder.
 */
function yPositions(nAnt: number, armM: number, minSpacingM: number, where: string): [Float64Array, Float64Array] {
  const east = new Float64Array(nAnt);
  const north = new Float64Array(nAnt);
  let idx = 0;
  for (let arm = 0; arm < 3; arm++) {
    const nArm = Math.floor(nAnt / 3) + (arm < nAnt % 3 ? 1 : 0);
    const az = (Y_ARM_ROTATION_DEG + 120 * arm) * DEG_TO_RAD;
    let prev = minSpacingM / Math.sqrt(3) - minSpacingM; // so that r_1 ≥ minSpacing/√3
    for (let k = 1; k <= nArm; k++) {
      const r = Math.max(armM * Math.pow(k / nArm, Y_ARM_POWER_LAW), prev + minSpacingM);
      if (r > armM * (1 + 1e-12)) {
        throw new InputError(
          `${where}: ${nAnt} antennas do not fit on Y arms of ${armM.toFixed(1)} m (max_baseline_m ${(armM * Math.sqrt(3)).toFixed(1)}) ` +
            `keeping ${MIN_SPACING_DISHES} dish diameters (${minSpacingM.toFixed(2)} m) apart; use fewer antennas or a longer max_baseline_m`,
        );
      }
      east[idx] = r * Math.sin(az);
      north[idx] = r * Math.cos(az);
      prev = r;
      idx++;
    }
  }
  return [east, north];
}

function looksNumeric(s: string): boolean {
  return /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/.test(s);
}

function parseCoordinate(s: string, column: string, where: string): number {
  const v = looksNumeric(s) ? Number(s) : NaN;
  if (!Number.isFinite(v)) {
    throw new InputError(`${where}: ${column} is "${s}"; every coordinate must be a finite number in metres`);
  }
  return v;
}
