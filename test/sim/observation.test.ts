import { describe, expect, it } from "vitest";
import { fileURLToPath } from "node:url";
import { dirname, join } from "node:path";
import {
  channelFrequenciesHz,
  OBSERVATION_PRESETS,
  parseObservation,
  readObservationFile,
  summariseObservation,
  buildUvTrack,
} from "../../src/sim/index.js";
import { DEG_TO_RAD } from "../../src/units.js";
import { InputError } from "../../src/errors.js";
import { expectAbs, expectRel } from "../helpers.js";

const ARRAYS_DIR = join(dirname(fileURLToPath(import.meta.url)), "..", "..", "fixtures", "arrays");

function base(): Record<string, unknown> {
  return {
    array: { generate: "ring", n_ant: 10, max_baseline_m: 400, seed: 3 },
    dish_m: 12,
    site_lat_deg: -23,
    phase_centre_deg: [150, -20],
    hour_angle_h: [-1, 1],
    integration_s: 10,
    freq_ghz: 345,
    bandwidth_ghz: 7.5,
    channels: 3,
    tsys_k: 100,
    aperture_efficiency: 0.7,
  };
}

function errorOf(obj: Record<string, unknown>): string {
  try {
    parseObservation(obj, "obs.json", ARRAYS_DIR);
  } catch (err) {
    expect(err).toBeInstanceOf(InputError);
    return (err as Error).message;
  }
  throw new Error("expected an InputError");
}

describe("parseObservation", () => {
  it("fills the documented defaults (η_c 0.88, n_pol 2, elevation limit 15°, J2000 time reference)", () => {
    // Defaults: DESIGN.md "Observation file" (0.88, 2); elevation limit 15° (common practice);
    // J2000.0 = JD 2451545.0 (IAU definition of the epoch).
    const obs = parseObservation(base(), "obs.json", ARRAYS_DIR);
    expect(obs.correlatorEfficiency).toBe(0.88);
    expect(obs.nPol).toBe(2);
    expect(obs.elevationLimitDeg).toBe(15);
    expect(obs.timeRefJd).toBe(2451545.0);
    expect(obs.freqHz).toBe(345e9);
    expect(obs.layout.eastM.length).toBe(10);
  });

  it("channels tile the band: centres ν_c + (k − (n−1)/2)·Δν/n", () => {
    const obs = parseObservation(base(), "obs.json", ARRAYS_DIR);
    const f = channelFrequenciesHz(obs);
    // 7.5 GHz in 3 channels of 2.5 GHz around 345 GHz (analytic).
    expect(Array.from(f)).toEqual([342.5e9, 345e9, 347.5e9]);
  });

  it("converts date to a Julian date", () => {
    // 2000-01-01T12:00:00Z is JD 2451545.0; the Unix epoch is JD 2440587.5 (standard values,
    // from memory). Millisecond arithmetic → 1e-9 day.
    expectAbs(parseObservation({ ...base(), date: "2000-01-01T12:00:00Z" }, "o", ARRAYS_DIR).timeRefJd, 2451545.0, 1e-9, "J2000");
    expectAbs(parseObservation({ ...base(), date: "1970-01-01T00:00:00Z" }, "o", ARRAYS_DIR).timeRefJd, 2440587.5, 1e-9, "Unix epoch");
  });

  it("a preset supplies defaults and explicit keys override them", () => {
    const { dish_m, freq_ghz, bandwidth_ghz, tsys_k, aperture_efficiency, site_lat_deg, ...rest } = base();
    void dish_m; void freq_ghz; void bandwidth_ghz; void tsys_k; void aperture_efficiency; void site_lat_deg;
    const obs = parseObservation({ ...rest, preset: "generic-12m-band7", tsys_k: 120 }, "obs.json", ARRAYS_DIR);
    expect(obs.freqHz).toBe(345e9);
    expect(obs.bandwidthHz).toBe(7.5e9);
    expect(obs.dishM).toBe(12);
    expect(obs.tsysK).toBe(120);
    expect(obs.apertureEfficiency).toBe(OBSERVATION_PRESETS["generic-12m-band7"].values.aperture_efficiency);
  });

  it("reads the fixture observation files and their array tables", () => {
    const a = readObservationFile(join(ARRAYS_DIR, "example-band7.obs.json"));
    expect(a.layout.eastM.length).toBe(25);
    expect(a.layoutSource).toBe("compact-disc-25.enu");
    const b = readObservationFile(join(ARRAYS_DIR, "example-generated.obs.json"));
    expect(b.layout.eastM.length).toBe(40);
    const s = summariseObservation(b);
    expectRel(s.maxBaselineM, 1500, 1e-12, "max baseline");
    // SEFD = 2kT/(η_a πD²/4): 100 K, 12 m, 0.68 → 3590.47 Jy (same formula as REFERENCES.md §6,
    // scaled from its 3487.8907 Jy at η_a = 0.7 by 0.7/0.68; analytic).
    expectRel(s.sefdJy, 3487.8907 * (0.7 / 0.68), 1e-7, "SEFD");
  });

  // Each invalid input gives one line: file — key — what was found — what is allowed.
  const cases: [string, Record<string, unknown>, string][] = [
    ["tsys_k negative", { tsys_k: -5 }, "obs.json: tsys_k: expected a positive number in K; got -5"],
    ["tsys_k missing", { tsys_k: undefined }, "obs.json: tsys_k: missing; give the system temperature in K"],
    ["tsys_k a string", { tsys_k: "100" }, 'obs.json: tsys_k: expected a positive number in K; got "100"'],
    ["dish_m zero", { dish_m: 0 }, "obs.json: dish_m: expected a number in (0, 1000] m; got 0"],
    ["latitude out of range", { site_lat_deg: 95 }, "obs.json: site_lat_deg: expected a number in [-90, 90] deg; got 95"],
    ["phase centre shape", { phase_centre_deg: [150] }, "obs.json: phase_centre_deg: expected [ra, dec] in degrees; got [150]"],
    ["dec out of range", { phase_centre_deg: [150, -95] }, "obs.json: phase_centre_deg: Dec must lie in [−90, 90] deg; got -95"],
    ["RA out of range", { phase_centre_deg: [360, 0] }, "obs.json: phase_centre_deg: RA must lie in [0, 360) deg; got 360"],
    ["hour angles reversed", { hour_angle_h: [2, -2] }, "obs.json: hour_angle_h: the end must come after the start; got [2, -2]"],
    ["hour angle beyond 12 h", { hour_angle_h: [-13, 1] }, "obs.json: hour_angle_h: both hour angles must lie in [−12, 12] h; got [-13, 1]"],
    ["integration zero", { integration_s: 0 }, "obs.json: integration_s: expected a positive number in s; got 0"],
    ["integration longer than the track", { hour_angle_h: [0, 0.01], integration_s: 60 }, "obs.json: integration_s: 60 s is longer than the track (35.9 s of time for hour_angle_h [0, 0.01]); shorten it or widen the hour-angle range"],
    ["channels fractional", { channels: 2.5 }, "obs.json: channels: expected an integer in [1, 65535]; got 2.5"],
    ["bandwidth too wide", { bandwidth_ghz: 700 }, "obs.json: bandwidth_ghz: expected less than twice freq_ghz (345 GHz) so every channel has a positive frequency; got 700"],
    ["aperture efficiency > 1", { aperture_efficiency: 1.2 }, "obs.json: aperture_efficiency: expected a number in (0, 1]; got 1.2"],
    ["correlator efficiency 0", { correlator_efficiency: 0 }, "obs.json: correlator_efficiency: expected a number in (0, 1]; got 0"],
    ["n_pol 4", { n_pol: 4 }, "obs.json: n_pol: expected 1 or 2; got 4"],
    ["elevation limit 90", { elevation_limit_deg: 90 }, "obs.json: elevation_limit_deg: expected a number in [0, 90) deg; got 90"],
    ["bad date", { date: "yesterday" }, 'obs.json: date: expected an ISO 8601 date such as "2024-03-01T04:00:00Z"; got "yesterday"'],
    ["unknown key", { tsys: 100 }, "obs.json: tsys: unknown key; allowed keys are name, preset, array, dish_m, site_lat_deg, phase_centre_deg, hour_angle_h, integration_s, freq_ghz, bandwidth_ghz, channels, tsys_k, aperture_efficiency, correlator_efficiency, n_pol, elevation_limit_deg, date, gain_errors"],
    ["unknown preset", { preset: "band7" }, 'obs.json: preset: expected one of "generic-12m-band3", "generic-12m-band6", "generic-12m-band7"; got "band7"'],
    ["array missing", { array: undefined }, 'obs.json: array: missing; give a path to an ENU table or { "generate": "disc" | "ring" | "y", "n_ant", "max_baseline_m", "seed" }'],
    ["array file missing", { array: "no-such-table.enu" }, "no-such-table.enu: cannot read the antenna table (ENOENT); check the path"],
    ["array generate kind", { array: { generate: "cross", n_ant: 5, max_baseline_m: 100 } }, 'obs.json: array.generate: expected "disc", "ring" or "y"; got "cross"'],
    ["array n_ant 1", { array: { generate: "disc", n_ant: 1, max_baseline_m: 100 } }, "obs.json: array.n_ant: expected an integer in [2, 1000]; got 1"],
    ["array unknown key", { array: { generate: "disc", n_ant: 5, max_baseline_m: 100, size: 3 } }, "obs.json: array.size: unknown key; allowed keys are generate, n_ant, max_baseline_m, seed"],
    ["gain model", { gain_errors: { phase_rms_deg: 10, model: "drift" } }, 'obs.json: gain_errors.model: expected "constant" or "random_walk"; got "drift"'],
    ["source never rises", { site_lat_deg: 60, phase_centre_deg: [10, -50] }, "obs.json: hour_angle_h: at Dec -50° from site_lat_deg 60° the source peaks at -20.0° elevation in [-1, 1] h, below elevation_limit_deg 15°; choose hour angles nearer 0 or lower the limit"],
  ];
  it.each(cases)("%s → one-line InputError", (_label, patch, message) => {
    expect(errorOf({ ...base(), ...patch })).toBe(message);
  });

  it("summariseObservation: image noise = σ_I/sqrt(visibilities), time kept as in the simulated track", () => {
    // REFERENCES.md §6 consistency identity (1e-9 there; here the same arithmetic → 1e-12), with
    // the track from buildUvTrack as an independent count of the kept integrations.
    const obs = parseObservation({ ...base(), phase_centre_deg: [150, 30], hour_angle_h: [-4, 4], integration_s: 120 }, "obs.json", ARRAYS_DIR);
    const s = summariseObservation(obs);
    const track = buildUvTrack(obs.layout, {
      siteLatRad: obs.siteLatDeg * DEG_TO_RAD, decRad: obs.phaseCentreDeg[1] * DEG_TO_RAD,
      hourAngleStartRad: -4 * 15 * DEG_TO_RAD, hourAngleEndRad: 4 * 15 * DEG_TO_RAD,
      integrationS: 120, elevationLimitRad: 15 * DEG_TO_RAD,
    });
    expect(s.nTimes).toBe(track.nTimes);
    expect(s.droppedLowElevation).toBe(track.droppedLowElevation);
    expect(s.droppedLowElevation).toBeGreaterThan(0); // Dec +30° from −23° sets within ±4 h
    expect(s.nVisibilities).toBe(45 * track.nTimes * 3);
    expectRel(s.imageSigmaJyPerBeam, s.sigmaStokesIJy / Math.sqrt(s.nVisibilities), 1e-12, "σ_image");
    // λ/B_max at 345 GHz and 400 m: 0.179240″·(1000/400) from REFERENCES.md §7 (λ/(1 km) = 0.17924″,
    // printed to 5 digits → 5e-5 relative).
    expectRel(s.resolutionArcsec, 0.17924 * 2.5, 5e-5, "λ/B_max");
  });

  it("rejects a non-object and invalid JSON", () => {
    expect(() => parseObservation([1, 2], "obs.json", ARRAYS_DIR)).toThrow("obs.json: expected a JSON object of observation keys; got [1,2]");
    expect(() => readObservationFile(join(ARRAYS_DIR, "compact-disc-25.enu"))).toThrow(/compact-disc-25\.enu: not valid JSON \(.*\); fix the syntax$/);
  });
});
