/**
 * `arcfringe inspect`: counts of real files against the figures measured independently with
 * astropy (shared/data/real/README.md), the noise and weight checks on a simulated file with
 * known noise, and the figures written by --out.
 */
import { readFileSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { SHARED_DIR, expectAbs, expectRel } from "../helpers.js";
import { cleanScratch, expectOk, readCsvColumns, runCli, scratch, smallObservation, writeJson } from "./cliHelpers.js";

const REAL = join(SHARED_DIR, "data", "real");

function inspectJson(file: string, extra: string[] = []): { json: any; stderr: string } {
  const r = runCli(["inspect", file, "--json", ...extra]);
  expectOk(r);
  return { json: JSON.parse(r.stdout), stderr: r.stderr };
}

afterAll(cleanScratch);

describe("arcfringe inspect --json on real files (counts from shared/data/real/README.md)", () => {
  it("SR1_M87_2017_095_hi_hops_netcal_StokesI.uvfits (EHT 2017)", () => {
    const { json } = inspectJson(join(REAL, "SR1_M87_2017_095_hi_hops_netcal_StokesI.uvfits"));
    // README table "Measured figures (astropy)": exact counts.
    expect(json.format).toBe("uvfits");
    expect(json.entries.inFile).toBe(25832); // 6458 groups × 4 Stokes
    expect(json.entries.droppedFlagged).toBe(3540); // weight ≤ 0, all RL/LR
    expect(json.entries.droppedNonFinite).toBe(9376); // RL/LR with weight +inf
    expect(json.entries.kept).toBe(12916); // usable RR + LL
    expect(json.entries.droppedAuto).toBe(0);
    expect(json.correlations).toEqual({ RR: 6458, LL: 6458 });
    expect(json.baselines).toBe(21);
    expect(json.antennas).toBe(7); // antenna numbers used 1..7
    expect(json.channels.count).toBe(1);
    expectRel(json.channels.minFreqHz, 229.070703125e9, 1e-12, "frequency [Hz]");
    expect(json.time.distinctTimes).toBe(701);
    expect(json.time.start).toBe("2017-04-05T00:46:05.000Z");
    expect(json.time.end).toBe("2017-04-05T08:09:55.001Z");
    // uv ranges printed to 6 significant digits in the README → rtol 1e-5.
    expectRel(json.uvDistanceKLambda.min * 1e3, 1.19783e5, 1e-5, "min uv distance [λ]");
    expectRel(json.uvDistanceKLambda.max * 1e3, 8.33472e9, 1e-5, "max uv distance [λ]");
    expectRel(json.maxAbsULambda, 8.23587e9, 1e-5, "max |u| [λ]");
    expectRel(json.maxAbsVLambda, 5.48291e9, 1e-5, "max |v| [λ]");
    // RR and LL are identical (release README): every pair combines into Stokes I.
    expect(json.stokesI.pairs).toBe(6458);
    expect(json.stokesI.visibilities).toBe(6458);
  });

  it("vis_multichan.vis (VLBA 1996, LL only, 8 IFs × 16 channels)", () => {
    const { json } = inspectJson(join(REAL, "vis_multichan.vis"));
    expect(json.entries.inFile).toBe(65920); // 515 × 8 × 16 × 1
    expect(json.entries.droppedFlagged).toBe(11504); // 11184 negative + 320 −0.0 weights
    expect(json.entries.kept).toBe(54416);
    expect(json.entries.droppedNonFinite).toBe(0);
    expect(json.correlations).toEqual({ LL: 54416 });
    expect(json.channels.count).toBe(128);
    expectRel(json.channels.minFreqHz, 4.60099e9, 1e-9, "lowest channel [Hz]");
    expectRel(json.channels.maxFreqHz, 5.09849e9, 1e-9, "highest channel [Hz]");
    expectRel(json.channels.widthHz, 0.5e6, 1e-12, "channel width [Hz]");
    expect(json.antennas).toBe(9);
    // The README's "36 distinct" baselines counts flagged groups too; the usable count is not
    // stated there, so it is not asserted.
    expect(json.time.distinctTimes).toBe(16);
    expect(json.time.start).toBe("1996-06-05T19:14:25.002Z");
    expect(json.time.end).toBe("1996-06-05T19:16:55.002Z");
    expectRel(json.uvDistanceKLambda.min * 1e3, 3.16145e6, 1e-5, "min uv distance [λ]");
    expectRel(json.uvDistanceKLambda.max * 1e3, 1.25077e8, 1e-5, "max uv distance [λ]");
    expectRel(json.maxAbsULambda, 1.1865e8, 1e-4, "max |u| [λ] (5 digits in the README)");
    expectRel(json.maxAbsVLambda, 4.60076e7, 1e-5, "max |v| [λ]");
    // A lone circular hand is kept as Stokes I (CONVENTIONS.md "Stokes I").
    expect(json.stokesI.singleKept).toBe(54416);
  });
});

describe("arcfringe inspect on a simulated file with known noise", () => {
  let dir = "";
  let clean = "";
  let wrong = "";
  beforeAll(() => {
    dir = scratch("inspect-sim");
    const obs = smallObservation(dir);
    const sky = writeJson(join(dir, "sky.json"), { lens: [], source: [{ type: "gaussian", flux: 0.005, sigma: 0.2, q: 0.8, pa: 10, x: 0.1, y: 0.1 }] });
    clean = join(dir, "sim.csv");
    expectOk(runCli(["simulate", "--sky", sky, "--config", obs, "--out", clean, "--seed", "11"]));
    // The same data with every weight multiplied by 9 (σ claimed 3× too small).
    const text = readFileSync(clean, "utf8").split("\n");
    const header = text.findIndex((l) => l.startsWith("u_lambda"));
    const wCol = text[header].split(",").indexOf("weight");
    const edited = text.map((l, i) => {
      if (i <= header || l.trim() === "") return l;
      const cells = l.split(",");
      cells[wCol] = String(Number(cells[wCol]) * 9);
      return cells.join(",");
    });
    wrong = join(dir, "sim-weights-x9.csv");
    writeFileSync(wrong, edited.join("\n"));
  });

  it("the natural-weighted image noise equals the radiometer equation's σ_im", () => {
    const { json, stderr } = inspectJson(clean);
    // REFERENCES.md §6: σ_im = SEFD/(η_c sqrt(n_pol N(N−1) Δν t)), SEFD = 2kT/(η_a πD²/4),
    // N = 8, n_pol = 2, Δν = 2 GHz, t = integrations × 300 s. The weights are set from the same
    // equation, so only rounding differs → rtol 1e-9.
    const sefd = (2 * 1.380649e-23 * 80) / (0.7 * Math.PI * 36) / 1e-26;
    const t = json.time.distinctTimes * 300;
    const expected = sefd / (0.88 * Math.sqrt(2 * 8 * 7 * 2e9 * t));
    expectRel(json.naturalImageNoiseJyPerBeam, expected, 1e-9, "σ_im [Jy/beam]");
    // Weights right by construction: the scale estimate is 1 within its scatter. With ≈ 2400
    // values of z², the median's relative standard error is ≈ 1/(2 f(m) m sqrt(n)) ≈ 5 % (χ²₁
    // density f at its median m = 0.455; analytic) → 20 % is 4σ.
    expectAbs(json.weightScale.robust, 1, 0.2, "weight scale of correct weights");
    expect(json.warnings).toEqual([]);
    expect(stderr).not.toMatch(/warning/);
  });

  it("weights 9× too large: scale ≈ 1/9 and a loud warning naming --rescale-weights", () => {
    const { json, stderr } = inspectJson(wrong);
    expectRel(json.weightScale.robust, 1 / 9, 0.2, "weight scale (same 4σ bound as above)");
    expect(stderr).toMatch(/warning: weights look wrong by a factor 0\.1\d*.*use --rescale-weights in fit/);
    expect(json.warnings.length).toBe(1);
  });

  it("--rescale-weights multiplies the weights by the estimate: noise 3× larger, scale 1", () => {
    const plain = inspectJson(wrong).json;
    const { json } = inspectJson(wrong, ["--rescale-weights"]);
    // σ_im = 1/sqrt(Σ w) scales as 1/sqrt(factor) (analytic).
    expectRel(json.weightsRescaledBy, plain.weightScale.robust, 1e-12, "factor applied");
    expectRel(json.naturalImageNoiseJyPerBeam, plain.naturalImageNoiseJyPerBeam / Math.sqrt(json.weightsRescaledBy), 1e-9, "σ_im after rescaling");
    // The median of the rescaled z² is exactly the χ²₁ median, so the re-estimate is 1 to rounding.
    expectRel(json.weightScale.robust, 1, 1e-9, "scale after rescaling");
  });

  it("--out writes uv_coverage.png and amp_vs_uvdist.png, and the report is aligned text", () => {
    const out = join(dir, "plots");
    const r = runCli(["inspect", clean, "--out", out]);
    expectOk(r);
    for (const f of ["uv_coverage.png", "amp_vs_uvdist.png"]) {
      const bytes = readFileSync(join(out, f));
      expect([...bytes.subarray(0, 8)]).toEqual([137, 80, 78, 71, 13, 10, 26, 10]); // PNG signature
      expect(bytes.length).toBeGreaterThan(5000);
    }
    expect(r.stdout).toMatch(/weight scale\s+\d/);
    expect(r.stdout).toMatch(/primary beam FWHM\s+2\d\.\d+″/); // 1.13 λ/D at 230 GHz, D = 12 m: 25.3″
    const cols = readCsvColumns(clean);
    expect(r.stdout).toContain(`kept                       ${cols.u_lambda.length}`);
  });
});
