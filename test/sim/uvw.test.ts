import { describe, expect, it } from "vitest";
import {
  buildUvTrack,
  elevationRad,
  enuToXyz,
  HOUR_ANGLE_RATE_RAD_PER_S,
  trackTimes,
  xyzToUvw,
  type AntennaLayout,
  type TrackGeometry,
} from "../../src/sim/index.js";
import { Rng } from "../../src/random.js";
import { DEG_TO_RAD } from "../../src/units.js";
import { expectAbs, expectRel } from "../helpers.js";

/** Two-antenna layout: antenna 1 at the origin, antenna 2 at (e, n, u) [m]. */
function pair(e: number, n: number, u: number): AntennaLayout {
  return { eastM: Float64Array.of(0, e), northM: Float64Array.of(0, n), upM: Float64Array.of(0, u), names: ["A01", "A02"] };
}

function uvwOf(e: number, n: number, u: number, latRad: number, hRad: number, decRad: number): Float64Array {
  const xyz = new Float64Array(3);
  const out = new Float64Array(3);
  enuToXyz(e, n, u, latRad, xyz);
  xyzToUvw(xyz[0], xyz[1], xyz[2], hRad, decRad, out);
  return out;
}

/**
 * Independent reference: the source direction in local ENU from the hour-angle/declination →
 * horizon conversion of spherical astronomy (from memory; e.g. cos e sin A = −cos δ sin H,
 * cos e cos A = cos φ sin δ − sin φ cos δ cos H, sin e = sin φ sin δ + cos φ cos δ cos H).
 */
function sourceEnu(hRad: number, decRad: number, latRad: number): [number, number, number] {
  const sD = Math.sin(decRad), cD = Math.cos(decRad), sP = Math.sin(latRad), cP = Math.cos(latRad);
  return [-cD * Math.sin(hRad), cP * sD - sP * cD * Math.cos(hRad), sP * sD + cP * cD * Math.cos(hRad)];
}

describe("uvw geometry (Thompson, Moran & Swenson 2017, eq. 4.1)", () => {
  it("u, v, w are the projections of the ENU baseline on sky-East, sky-North and the source direction", () => {
    // Reference built only from the horizon-coordinate formulas above: w = b·ŝ, u = b·ê (East on
    // the sky, ê ∝ ∂ŝ/∂α = −∂ŝ/∂H), v = b·n̂ (North, ∂ŝ/∂δ), derivatives by central differences
    // (step 1e-5 rad → truncation ~1e-10, rounding ~1e-11 relative; tolerance 1e-8·|b|).
    const rng = new Rng(4101);
    const h = 1e-5;
    for (let trial = 0; trial < 200; trial++) {
      const b: [number, number, number] = [2000 * (rng.uniform() - 0.5), 2000 * (rng.uniform() - 0.5), 20 * (rng.uniform() - 0.5)];
      const lat = (rng.uniform() * 160 - 80) * DEG_TO_RAD;
      const dec = (rng.uniform() * 160 - 80) * DEG_TO_RAD;
      const H = (rng.uniform() * 2 - 1) * Math.PI;
      const s = sourceEnu(H, dec, lat);
      const sHp = sourceEnu(H + h, dec, lat), sHm = sourceEnu(H - h, dec, lat);
      const sDp = sourceEnu(H, dec + h, lat), sDm = sourceEnu(H, dec - h, lat);
      const east = [0, 1, 2].map((k) => -(sHp[k] - sHm[k]) / (2 * h));
      const north = [0, 1, 2].map((k) => (sDp[k] - sDm[k]) / (2 * h));
      const eNorm = Math.hypot(east[0], east[1], east[2]);
      const dot = (a: ArrayLike<number>, c: ArrayLike<number>) => a[0] * c[0] + a[1] * c[1] + a[2] * c[2];
      const got = uvwOf(b[0], b[1], b[2], lat, H, dec);
      const bLen = Math.hypot(b[0], b[1], b[2]);
      expectAbs(got[0], dot(b, east) / eNorm, 1e-8 * bLen, "u");
      expectAbs(got[1], dot(b, north), 1e-8 * bLen, "v");
      expectAbs(got[2], dot(b, s), 1e-8 * bLen, "w");
    }
  });

  it("an East-West baseline at δ = 90° traces a circle of radius |b|/λ with w = 0", () => {
    // TMS eq. 4.1 with X = Z = 0, Y = L, δ = 90°: u = L cos H, v = L sin H, w = 0 (analytic).
    const L = 300;
    const lambdaM = 1e-3;
    const geom: TrackGeometry = {
      siteLatRad: 45 * DEG_TO_RAD, // δ = 90° sits at elevation φ = 45° all day
      decRad: 90 * DEG_TO_RAD,
      hourAngleStartRad: -6 * 15 * DEG_TO_RAD,
      hourAngleEndRad: 6 * 15 * DEG_TO_RAD,
      integrationS: 600,
      elevationLimitRad: 15 * DEG_TO_RAD,
    };
    const track = buildUvTrack(pair(L, 0, 0), geom);
    expect(track.nTimes).toBeGreaterThan(60);
    for (let t = 0; t < track.nTimes; t++) {
      const H = track.hourAngleRad[t];
      expectRel(Math.hypot(track.uM[t], track.vM[t]) / lambdaM, L / lambdaM, 1e-14, "radius");
      expectAbs(track.uM[t], L * Math.cos(H), 1e-12 * L, "u");
      expectAbs(track.vM[t], L * Math.sin(H), 1e-12 * L, "v");
      expectAbs(track.wM[t], 0, 1e-12 * L, "w");
    }
  });

  it("a North-South baseline of length L at H = 0 observing δ = φ gives u = 0, v = L, w = 0", () => {
    // Derivation: X = −sinφ·L, Y = 0, Z = cosφ·L; at H = 0, v = sinδ sinφ L + cosδ cosφ L =
    // L cos(δ − φ) = L and w = L sin(δ − φ) = 0 (source at the zenith; TMS eq. 4.1, analytic).
    const L = 250;
    for (const latDeg of [-23, 0, 34, 52]) {
      const lat = latDeg * DEG_TO_RAD;
      const uvw = uvwOf(0, L, 0, lat, 0, lat);
      expectAbs(uvw[0], 0, 1e-12 * L, "u");
      expectAbs(uvw[1], L, 1e-12 * L, "v");
      expectAbs(uvw[2], 0, 1e-12 * L, "w");
    }
  });

  it("at H = 0, δ = 90° a North-South baseline has u = 0, v = L sinφ, w = L cosφ", () => {
    // TMS eq. 4.1 with δ = 90°: v = −X cos H = L sinφ, w = Z = L cosφ (analytic).
    const L = 100;
    const lat = -23 * DEG_TO_RAD;
    const uvw = uvwOf(0, L, 0, lat, 0, Math.PI / 2);
    expectAbs(uvw[0], 0, 1e-12 * L, "u");
    expectAbs(uvw[1], L * Math.sin(lat), 1e-12 * L, "v");
    expectAbs(uvw[2], L * Math.cos(lat), 1e-12 * L, "w");
  });

  it("|(u, v)| never exceeds |b| and |(u, v, w)| = |b| (rotation)", () => {
    // The map ENU → uvw is a rotation, so lengths are kept (analytic).
    const layout: AntennaLayout = {
      eastM: Float64Array.of(0, 120, -340, 15, 800),
      northM: Float64Array.of(0, 45, 210, -600, 30),
      upM: Float64Array.of(0, 1.5, -2, 0.3, 4),
      names: ["a", "b", "c", "d", "e"],
    };
    const track = buildUvTrack(layout, {
      siteLatRad: -23 * DEG_TO_RAD, decRad: -40 * DEG_TO_RAD,
      hourAngleStartRad: -4 * 15 * DEG_TO_RAD, hourAngleEndRad: 4 * 15 * DEG_TO_RAD,
      integrationS: 300, elevationLimitRad: 15 * DEG_TO_RAD,
    });
    for (let r = 0; r < track.uM.length; r++) {
      const i = track.antenna1[r] - 1, j = track.antenna2[r] - 1;
      const b = Math.hypot(layout.eastM[j] - layout.eastM[i], layout.northM[j] - layout.northM[i], layout.upM[j] - layout.upM[i]);
      expect(Math.hypot(track.uM[r], track.vM[r])).toBeLessThanOrEqual(b * (1 + 1e-14));
      expectRel(Math.hypot(track.uM[r], track.vM[r], track.wM[r]), b, 1e-13, "|uvw|");
    }
  });

  it("swapping the two antennas negates (u, v, w)", () => {
    // b = r_j − r_i for the pair (i < j); the reverse order gives −b (analytic).
    const geom: TrackGeometry = {
      siteLatRad: 19.8 * DEG_TO_RAD, decRad: 10 * DEG_TO_RAD,
      hourAngleStartRad: -2 * 15 * DEG_TO_RAD, hourAngleEndRad: 2 * 15 * DEG_TO_RAD,
      integrationS: 300, elevationLimitRad: 15 * DEG_TO_RAD,
    };
    const ab = buildUvTrack({ eastM: Float64Array.of(10, 230), northM: Float64Array.of(-5, 80), upM: Float64Array.of(0, 3), names: ["a", "b"] }, geom);
    const ba = buildUvTrack({ eastM: Float64Array.of(230, 10), northM: Float64Array.of(80, -5), upM: Float64Array.of(3, 0), names: ["b", "a"] }, geom);
    for (let r = 0; r < ab.uM.length; r++) {
      expect(ba.uM[r]).toBeCloseTo(-ab.uM[r], 10);
      expect(ba.vM[r]).toBeCloseTo(-ab.vM[r], 10);
      expect(ba.wM[r]).toBeCloseTo(-ab.wM[r], 10);
    }
  });

  it("baselines are i < j with 1-based antenna numbers, time slowest", () => {
    const layout: AntennaLayout = { eastM: Float64Array.of(0, 50, 100), northM: Float64Array.of(0, 20, -30), upM: new Float64Array(3), names: ["a", "b", "c"] };
    const track = buildUvTrack(layout, {
      siteLatRad: 0, decRad: 0, hourAngleStartRad: 0, hourAngleEndRad: 0.1, integrationS: 100, elevationLimitRad: 0,
    });
    expect(Array.from(track.antenna1.subarray(0, 3))).toEqual([1, 1, 2]);
    expect(Array.from(track.antenna2.subarray(0, 3))).toEqual([2, 3, 3]);
    expect(Array.from(track.timeIndex.subarray(0, 6))).toEqual([0, 0, 0, 1, 1, 1]);
  });
});

describe("time sampling and elevation limit", () => {
  it("the hour angle turns once per sidereal day, 86164.0905 s", () => {
    // Sidereal day = 23 h 56 m 4.0905 s of UT1 (Astronomical Almanac, from memory); printed to
    // 1e-4 s → tolerance 1e-4 s.
    expectAbs((2 * Math.PI) / HOUR_ANGLE_RATE_RAD_PER_S, 86164.0905, 1e-4, "sidereal day [s]");
  });

  it("trackTimes: ⌊duration/τ⌋ integrations centred at (k + ½)τ", () => {
    // 1 h of hour angle lasts 3600/1.00273790935 = 3590.17 s of UT1 → 598 integrations of 6 s.
    const { timeS, hourAngleRad } = trackTimes(-0.5 * 15 * DEG_TO_RAD, 0.5 * 15 * DEG_TO_RAD, 6);
    expect(timeS.length).toBe(598);
    expectAbs(timeS[0], 3, 1e-12, "first centre");
    expectAbs(hourAngleRad[1] - hourAngleRad[0], 6 * HOUR_ANGLE_RATE_RAD_PER_S, 1e-15, "step");
  });

  it("drops exactly the integrations whose elevation (from the ENU source direction) is below the limit", () => {
    // Reference: elevation = asin(ŝ_U) from the horizon conversion above, independent of elevationRad.
    const lat = -23 * DEG_TO_RAD;
    const dec = 30 * DEG_TO_RAD; // transits at 37° elevation; sets early
    const limit = 15 * DEG_TO_RAD;
    const geom: TrackGeometry = {
      siteLatRad: lat, decRad: dec, hourAngleStartRad: -5 * 15 * DEG_TO_RAD, hourAngleEndRad: 5 * 15 * DEG_TO_RAD,
      integrationS: 120, elevationLimitRad: limit,
    };
    const all = trackTimes(geom.hourAngleStartRad, geom.hourAngleEndRad, geom.integrationS);
    let expected = 0;
    for (const H of all.hourAngleRad) if (Math.asin(sourceEnu(H, dec, lat)[2]) >= limit) expected++;
    const track = buildUvTrack(pair(100, 0, 0), geom);
    expect(track.nTimes).toBe(expected);
    expect(track.droppedLowElevation).toBe(all.timeS.length - expected);
    expect(track.droppedLowElevation).toBeGreaterThan(0);
    for (let t = 0; t < track.nTimes; t++) {
      expectAbs(track.elevationRad[t], Math.asin(sourceEnu(track.hourAngleRad[t], dec, lat)[2]), 1e-12, "elevation");
      expect(track.elevationRad[t]).toBeGreaterThanOrEqual(limit);
    }
    // Transit elevation 90° − |φ − δ| = 37° (analytic).
    expectAbs(elevationRad(0, dec, lat), 37 * DEG_TO_RAD, 1e-12, "transit");
  });
});
