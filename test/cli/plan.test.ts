/**
 * `arcfringe plan` end to end through the compiled executable: exit codes, the files DESIGN.md
 * promises (plan.csv, plan.md, PNG, plan.html), the help layout of STYLE.md §8, and one-line
 * errors. The numbers themselves are checked in test/sim/plan/ against analytic forms; here the
 * checks are that the outputs exist, agree with each other, and hold what the table says.
 */
import { existsSync, readFileSync } from "node:fs";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { formatNumber } from "../../src/io/planReport.js";
import { expectInputError, expectOk, runCli, scratch, writeJson } from "./cliHelpers.js";

function observation(dir: string, name: string, maxBaselineM: number): string {
  return writeJson(join(dir, `${name}.json`), {
    name,
    preset: "generic-12m-band7",
    array: { generate: "disc", n_ant: 8, max_baseline_m: maxBaselineM, seed: 3 },
    phase_centre_deg: [150, -23],
    hour_angle_h: [-1, 1],
    integration_s: 600,
    channels: 1,
  });
}

function lensSky(dir: string): string {
  return writeJson(join(dir, "sky.json"), {
    lens: [{ type: "sie", theta_E: { init: 0.5, min: 0.1, max: 2 }, q: { init: 0.8, min: 0.3, max: 1 }, pa: 30, x: 0, y: 0 }],
    source: [{ type: "sersic", flux: { init: 0.01, min: 0, max: 1 }, r_eff: { init: 0.1, min: 0.01, max: 1 }, n: 1, q: 0.7, pa: 60, x: 0.05, y: 0.02 }],
  });
}

const PNG_SIGNATURE = [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]; // PNG specification §5.2

describe("arcfringe plan", () => {
  it("compares two configurations: exit 0, plan.csv, plan.md, PNG figures and a self-contained plan.html", () => {
    const dir = scratch("plan");
    const sky = lensSky(dir);
    const a = observation(dir, "compact", 200);
    const b = observation(dir, "extended", 1200);
    const out = join(dir, "out");
    const r = runCli(["plan", "--sky", sky, "--config", a, "--config", b, "--out", out, "--threads", "1", "--time-to-reach", "lens[0].theta_E=0.002"]);
    expectOk(r);
    for (const f of ["plan.csv", "plan.md", "plan.html", "plan_coverage.png", "plan_sigma.png", "plan_dirty.png"]) {
      expect(existsSync(join(out, f)), f).toBe(true);
    }
    for (const f of ["plan_coverage.png", "plan_sigma.png", "plan_dirty.png"]) {
      expect(Array.from(readFileSync(join(out, f)).subarray(0, 8)), f).toEqual(PNG_SIGNATURE);
    }
    // plan.csv: long format, one row per configuration × quantity, the same quantities for both.
    const lines = readFileSync(join(out, "plan.csv"), "utf8").trim().split("\n");
    expect(lines[0]).toBe("configuration,quantity,value,unit,note");
    const rows = lines.slice(1).map((l) => l.split(","));
    const compact = rows.filter((c) => c[0] === "compact").map((c) => c[1]);
    const extended = rows.filter((c) => c[0] === "extended").map((c) => c[1]);
    expect(compact).toEqual(extended);
    for (const q of ["beam_natural_major", "beam_briggs_major", "largest_angular_scale", "point_source_sigma", "surface_brightness_sigma_k",
      "recovered_fraction", "peak_snr", "sigma:lens[0].theta_E", "sigma:source[0].r_eff", "time_to_reach:lens[0].theta_E"]) {
      expect(compact, q).toContain(q);
    }
    const value = (cfg: string, q: string) => Number(rows.find((c) => c[0] === cfg && c[1] === q)![2]);
    // The longer baselines resolve more: a smaller beam in the table (what the rows must show).
    expect(value("extended", "beam_natural_major")).toBeLessThan(value("compact", "beam_natural_major"));
    expect(Number.isFinite(value("compact", "sigma:lens[0].theta_E"))).toBe(true);
    // The terminal table carries the same σ(θ_E), as formatted for display (3 significant digits).
    const line = r.stdout.split("\n").find((l) => l.startsWith("σ lens[0].theta_E"));
    expect(line).toBeDefined();
    expect(line).toContain(formatNumber(value("compact", "sigma:lens[0].theta_E"), 3));
    expect(r.stdout).toMatch(/compact\s+extended/);
    const md = readFileSync(join(out, "plan.md"), "utf8");
    expect(md).toMatch(/\| quantity \| unit \| compact \| extended \|/);
    expect(md).toMatch(/!\[[^\]]*\]\(plan_coverage\.png\)/);
    const html = readFileSync(join(out, "plan.html"), "utf8");
    expect(html.match(/src="data:image\/png;base64,/g)?.length).toBe(3);
    expect(html).not.toMatch(/src="(?!data:)/); // nothing loaded from outside the page
  });

  it("--help shows Usage, Options and Examples in that order", () => {
    const r = runCli(["plan", "--help"]);
    expectOk(r);
    const u = r.stdout.indexOf("Usage: arcfringe plan"), o = r.stdout.indexOf("Options:"), e = r.stdout.indexOf("Examples:");
    expect(u).toBeGreaterThanOrEqual(0);
    expect(o).toBeGreaterThan(u);
    expect(e).toBeGreaterThan(o);
    for (const flag of ["--sky <file>", "--config <file>", "--out <dir>", "--time-to-reach <param=sigma>", "--trials <n>", "--seed <n>"]) {
      expect(r.stdout).toContain(flag);
    }
    const ex = r.stdout.slice(e).split("\n").slice(1).filter((l) => l.trim() !== "");
    for (let k = 0; k < ex.length; k += 2) {
      expect(ex[k].trim()).toMatch(/^# \S/);
      expect(ex[k + 1].trim()).toMatch(/^arcfringe plan\b/);
    }
  });

  it("--trials on a lensed sky: 20 lens fits give a scatter within [0.5, 1.6] × the Fisher σ for every parameter", () => {
    // The Monte-Carlo check of the forecast (issue 7): the Fisher σ is the Cramér–Rao bound,
    // which maximum-likelihood estimates reach when the noise is Gaussian and the model smooth
    // (Tegmark, Taylor & Heavens 1997, from memory). 20 trials put ±16% on the ratio, so
    // [0.5, 1.6] is a > 3 sd window.
    const dir = scratch("plan-trials");
    const out = join(dir, "out");
    const r = runCli(["plan", "--sky", lensSky(dir), "--config", observation(dir, "a", 200), "--out", out, "--threads", "1", "--trials", "20"]);
    expectOk(r);
    const csv = readFileSync(join(out, "plan.csv"), "utf8");
    for (const name of ["lens[0].theta_E", "lens[0].q", "source[0].flux", "source[0].r_eff"]) {
      const m = new RegExp(`^a,trial_scatter_over_sigma:${name.replace(/[[\].]/g, "\\$&")},([^,]+),`, "m").exec(csv);
      expect(m, `${name} missing from plan.csv`).not.toBeNull();
      expect(Number(m![1]), name).toBeGreaterThan(0.5);
      expect(Number(m![1]), name).toBeLessThan(1.6);
    }
  }, 600_000);

  it("--trials on a single point source runs the Monte-Carlo check and reports scatter/σ", () => {
    const dir = scratch("plan-point");
    const sky = writeJson(join(dir, "point.json"), {
      lens: [], source: [{ type: "point_source", flux: { init: 0.002, min: 0, max: 1 }, x: { init: 0, min: -1, max: 1 }, y: 0 }],
    });
    const out = join(dir, "out");
    const r = runCli(["plan", "--sky", sky, "--config", observation(dir, "a", 200), "--out", out, "--threads", "1", "--trials", "12"]);
    expectOk(r);
    const csv = readFileSync(join(out, "plan.csv"), "utf8");
    const m = /^a,trial_scatter_over_sigma:source\[0\]\.flux,([^,]+),/m.exec(csv);
    expect(m).not.toBeNull();
    // 12 trials: the ratio scatters by 1/sqrt(22) ≈ 0.21 (chi distribution); 0.3–2 is > 3 sd wide.
    expect(Number(m![1])).toBeGreaterThan(0.3);
    expect(Number(m![1])).toBeLessThan(2);
  });

  it("--trials --resume reuses the checkpointed trials and continues the same noise stream", () => {
    // A resumed run must equal an uninterrupted one: the trial noise is drawn from one seeded
    // stream whether a trial is fitted or taken from trials.json (common practice for
    // resumable Monte-Carlo runs, no source).
    const dir = scratch("plan-resume");
    const sky = writeJson(join(dir, "point.json"), {
      lens: [], source: [{ type: "point_source", flux: { init: 0.002, min: 0, max: 1 }, x: { init: 0, min: -1, max: 1 }, y: 0 }],
    });
    const obs = observation(dir, "a", 200);
    const resumed = join(dir, "resumed");
    expectOk(runCli(["plan", "--sky", sky, "--config", obs, "--out", resumed, "--threads", "1", "--trials", "4"]));
    const first = JSON.parse(readFileSync(join(resumed, "trials.json"), "utf8"));
    expect(first.results.a).toHaveLength(4);
    const r = runCli(["plan", "--sky", sky, "--config", obs, "--out", resumed, "--threads", "1", "--trials", "7", "--resume"]);
    expectOk(r);
    expect(r.stderr).toMatch(/4 trial\(s\) taken from/);
    const second = JSON.parse(readFileSync(join(resumed, "trials.json"), "utf8"));
    expect(second.results.a).toHaveLength(7);
    expect(second.results.a.slice(0, 4)).toEqual(first.results.a);
    const direct = join(dir, "direct");
    expectOk(runCli(["plan", "--sky", sky, "--config", obs, "--out", direct, "--threads", "1", "--trials", "7"]));
    const straight = JSON.parse(readFileSync(join(direct, "trials.json"), "utf8"));
    expect(second.results.a).toEqual(straight.results.a);
  });

  it("bad input is one line naming the option", () => {
    const dir = scratch("plan-bad");
    const sky = lensSky(dir);
    const a = observation(dir, "a", 200);
    expectInputError(runCli(["plan", "--sky", sky, "--config", a, "--out", join(dir, "o"), "--time-to-reach", "lens[0].gamma=0.01"]),
      /^arcfringe: --time-to-reach lens\[0\]\.gamma: not a free parameter of .*; free parameters are lens\[0\]\.theta_E, lens\[0\]\.q, source\[0\]\.flux, source\[0\]\.r_eff$/);
    expectInputError(runCli(["plan", "--sky", sky, "--out", join(dir, "o")]), /^arcfringe: --config is required/);
    expectInputError(runCli(["plan", "--sky", sky, "--config", a, "--out", join(dir, "o"), "--trials", "1"]), /^arcfringe: --trials 1: must lie in \[2, 100000\]/);
  });
});
