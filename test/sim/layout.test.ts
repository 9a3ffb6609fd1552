import { describe, expect, it } from "vitest";
import {
  formatLayoutTable,
  generateLayout,
  maxBaselineLengthM,
  minBaselineLengthM,
  MIN_SPACING_DISHES,
  parseLayoutTable,
  readLayoutFile,
  Y_ARM_ROTATION_DEG,
  type GenerateLayoutSpec,
} from "../../src/sim/index.js";
import { RAD_TO_DEG } from "../../src/units.js";
import { expectAbs, expectRel } from "../helpers.js";

const DISH_M = 12;

describe("generateLayout", () => {
  const kinds: GenerateLayoutSpec["generate"][] = ["disc", "ring", "y"];

  it.each(kinds)("%s: the longest baseline equals max_baseline_m (to rounding)", (kind) => {
    // The generator scales positions by max_baseline_m / (current longest baseline), so the
    // request is met up to a few ulps (analytic); 1e-12 relative.
    for (const [nAnt, maxB] of [[8, 150], [25, 1000], [50, 16000]] as const) {
      const layout = generateLayout({ generate: kind, nAnt, maxBaselineM: maxB, seed: 7 }, DISH_M);
      expect(layout.eastM.length).toBe(nAnt);
      expectRel(maxBaselineLengthM(layout), maxB, 1e-12, `${kind} n=${nAnt}`);
    }
  });

  it.each(kinds)("%s: no two antennas closer than 1.5 dish diameters", (kind) => {
    // Requirement of the generator (common practice against shadowing); checked by brute force
    // over all pairs (minBaselineLengthM, and here again independently).
    // 40 antennas in a 300 m disc or ring; 60 on a 2 km Y, where the pure power law (arms of
    // 1154.7 m, 20 antennas, r_k ∝ k^1.7) would put the innermost antennas 7 m from the centre
    // and the second 16 m from the first, so the outward push is exercised.
    const nAnt = kind === "y" ? 60 : 40;
    const maxB = kind === "y" ? 2000 : 300;
    const layout = generateLayout({ generate: kind, nAnt, maxBaselineM: maxB, seed: 11 }, DISH_M);
    let minD = Infinity;
    for (let i = 0; i < nAnt; i++) {
      for (let j = i + 1; j < nAnt; j++) {
        minD = Math.min(minD, Math.hypot(layout.eastM[i] - layout.eastM[j], layout.northM[i] - layout.northM[j]));
      }
    }
    expect(minD).toBeGreaterThanOrEqual(MIN_SPACING_DISHES * DISH_M * (1 - 1e-12));
    expectRel(minBaselineLengthM(layout), minD, 1e-14, "minBaselineLengthM");
  });

  it("disc and ring are reproducible with the same seed and change with another", () => {
    for (const kind of ["disc", "ring"] as const) {
      const a = generateLayout({ generate: kind, nAnt: 20, maxBaselineM: 500, seed: 42 }, DISH_M);
      const b = generateLayout({ generate: kind, nAnt: 20, maxBaselineM: 500, seed: 42 }, DISH_M);
      const c = generateLayout({ generate: kind, nAnt: 20, maxBaselineM: 500, seed: 43 }, DISH_M);
      expect(Array.from(b.eastM)).toEqual(Array.from(a.eastM));
      expect(Array.from(b.northM)).toEqual(Array.from(a.northM));
      expect(Array.from(c.eastM)).not.toEqual(Array.from(a.eastM));
    }
  });

  it("disc positions are spread uniformly in area", () => {
    // For a uniform disc of radius R the fraction inside R/√2 is ½ (analytic). With n = 400
    // the binomial sd is 0.025, and the minimum spacing (tiny here: 18 m in a 20 km disc)
    // does not matter; assert within 4 sd (0.1).
    const layout = generateLayout({ generate: "disc", nAnt: 400, maxBaselineM: 20000, seed: 3 }, DISH_M);
    let cx = 0, cy = 0;
    for (let k = 0; k < 400; k++) { cx += layout.eastM[k] / 400; cy += layout.northM[k] / 400; }
    const r = Array.from(layout.eastM, (e, k) => Math.hypot(e - cx, layout.northM[k] - cy));
    const rMax = Math.max(...r);
    const inner = r.filter((x) => x < rMax / Math.SQRT2).length / 400;
    expectAbs(inner, 0.5, 0.1, "fraction inside R/√2");
  });

  it("ring antennas lie on one circle", () => {
    // Construction: every antenna at the same radius from the centre (analytic), 1e-12 relative.
    const layout = generateLayout({ generate: "ring", nAnt: 16, maxBaselineM: 400, seed: 5 }, DISH_M);
    const r0 = Math.hypot(layout.eastM[0], layout.northM[0]);
    for (let k = 1; k < 16; k++) expectRel(Math.hypot(layout.eastM[k], layout.northM[k]), r0, 1e-12, "radius");
    // A ring's longest chord cannot exceed its diameter.
    expect(maxBaselineLengthM(layout)).toBeLessThanOrEqual(2 * r0 * (1 + 1e-12));
  });

  it("Y antennas lie on three arms at 5°, 125° and 245° from North through East", () => {
    // Arm azimuths: 0°, 120°, 240° rotated by 5° (common practice, Y_ARM_ROTATION_DEG).
    const layout = generateLayout({ generate: "y", nAnt: 27, maxBaselineM: 3000, seed: 0 }, DISH_M);
    const seen = new Map<number, number>();
    for (let k = 0; k < 27; k++) {
      const az = ((Math.atan2(layout.eastM[k], layout.northM[k]) * RAD_TO_DEG) + 360) % 360;
      const arm = Math.round((az - Y_ARM_ROTATION_DEG) / 120);
      expectAbs(az, Y_ARM_ROTATION_DEG + 120 * arm, 1e-9, `azimuth of antenna ${k + 1}`);
      seen.set(arm, (seen.get(arm) ?? 0) + 1);
    }
    expect([...seen.values()]).toEqual([9, 9, 9]);
  });

  it("too many antennas for the area give an InputError that says what to change", () => {
    expect(() => generateLayout({ generate: "disc", nAnt: 200, maxBaselineM: 100, seed: 1 }, DISH_M, "obs.json: array"))
      .toThrow(/^obs\.json: array: could place only \d+ of 200 antennas in a disc of diameter 100\.0 m keeping 1\.5 dish diameters \(18\.00 m\) apart; use fewer antennas or a longer max_baseline_m$/);
    expect(() => generateLayout({ generate: "ring", nAnt: 60, maxBaselineM: 100, seed: 1 }, DISH_M))
      .toThrow(/^array: 60 antennas in a "ring" layout with max_baseline_m 100 come \d+\.\d\d m apart, closer than 1\.5 dish diameters \(18\.00 m\); use fewer antennas or a longer max_baseline_m$/);
    expect(() => generateLayout({ generate: "y", nAnt: 60, maxBaselineM: 100, seed: 1 }, DISH_M))
      .toThrow("array: 60 antennas do not fit on Y arms of 57.7 m (max_baseline_m 100.0) keeping 1.5 dish diameters (18.00 m) apart; use fewer antennas or a longer max_baseline_m");
  });
});

describe("parseLayoutTable", () => {
  it("reads east north [up] [name] with comments and blank lines", () => {
    const text = "# test array\n\n0 0 0 PAD1\n120.5, -30.25  # comma separated, no up or name\n-45 60 1.5\n10 20 north_pad\n";
    const layout = parseLayoutTable(text, "arr.txt");
    expect(Array.from(layout.eastM)).toEqual([0, 120.5, -45, 10]);
    expect(Array.from(layout.northM)).toEqual([0, -30.25, 60, 20]);
    expect(Array.from(layout.upM)).toEqual([0, 0, 1.5, 0]);
    expect(layout.names).toEqual(["PAD1", "A02", "A03", "north_pad"]);
  });

  it("round-trips through formatLayoutTable", () => {
    const layout = generateLayout({ generate: "disc", nAnt: 10, maxBaselineM: 500, seed: 9 }, DISH_M);
    const back = parseLayoutTable(formatLayoutTable(layout, ["generated"]), "x");
    for (let k = 0; k < 10; k++) expectAbs(back.eastM[k], layout.eastM[k], 5e-4, "east (3 decimals)");
    expect(back.names).toEqual(layout.names);
  });

  it("reports the line of a bad entry", () => {
    expect(() => parseLayoutTable("0 0\n1 2\n3 abc\n", "arr.txt"))
      .toThrow('arr.txt line 3: north is "abc"; every coordinate must be a finite number in metres');
    expect(() => parseLayoutTable("# c\n5\n", "arr.txt"))
      .toThrow('arr.txt line 2: found 1 column; expected "east north [up] [name]" in metres');
    expect(() => parseLayoutTable("0 0\n0 0\n", "arr.txt"))
      .toThrow("arr.txt line 2: antenna at (0, 0, 0) m repeats antenna 1; every antenna needs its own position");
    expect(() => parseLayoutTable("# only one\n1 2\n", "arr.txt"))
      .toThrow('arr.txt: found 1 antenna; an array needs at least 2 (one "east north [up] [name]" line each)');
    expect(() => readLayoutFile("/nonexistent/arr.txt", "arr.txt"))
      .toThrow("arr.txt: cannot read the antenna table (ENOENT); check the path");
  });
});
