import { existsSync, readdirSync, readFileSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import h5wasm from "h5wasm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { fitModel, initAtTruth, simulateScenario } from "../fit/scenario.js";
import { cleanScratch, expectOk, runCli, scratch, writeJson } from "./cliHelpers.js";

// The `fit` command end to end: result.json contract (DESIGN.md), exit codes (0 clean, 1 with
// warnings, 2 bad input with one line and nothing written), and --resume continuing a chain.

let vis = "";
let dir = "";

/** A quick model: lens and source shape fixed at the truth except θ_E, the flux and r_eff. */
function quickModel(overrides: Record<string, unknown> = {}): unknown {
  const m = fitModel(initAtTruth()) as { lens: Record<string, unknown>[]; source: Record<string, unknown>[] };
  const fix = (c: Record<string, unknown>, keep: string[]) => {
    for (const k of Object.keys(c)) {
      const v = c[k] as { init?: number };
      if (k !== "type" && !keep.includes(k) && v && typeof v === "object") c[k] = v.init;
    }
  };
  fix(m.lens[0], ["theta_E"]);
  fix(m.lens[1], []);
  fix(m.source[0], ["flux", "r_eff"]);
  return { ...m, ...overrides };
}

beforeAll(async () => {
  dir = scratch("fit");
  ({ vis } = await simulateScenario(5, dir));
});
afterAll(cleanScratch);

describe("arcfringe fit", () => {
  it("writes result.json with every field of the DESIGN.md contract and exits 0 on a clean fit", () => {
    const out = join(dir, "clean");
    const model = writeJson(join(dir, "quick.json"), quickModel());
    const r = runCli(["fit", vis, "--model", model, "--out", out, "--quiet", "--local-only"]);
    expectOk(r);
    const res = JSON.parse(readFileSync(join(out, "result.json"), "utf8"));
    for (const key of ["parameters", "model", "chi2", "n_vis", "reduced_chi2", "noise_scale", "derived", "warnings", "command", "version", "seed", "uncertainty_method"]) {
      expect(res, `result.json lacks ${key}`).toHaveProperty(key);
    }
    expect(Object.keys(res.parameters).sort()).toEqual(["lens[0].theta_E", "source[0].flux", "source[0].r_eff"]);
    for (const p of Object.values(res.parameters) as { value: number; sigma: number; lo: number; hi: number }[]) {
      expect(p.sigma).toBeGreaterThan(0);
      expect(p.lo).toBeLessThan(p.value);
      expect(p.hi).toBeGreaterThan(p.value);
    }
    expect(res.uncertainty_method).toBe("hessian");
    // reduced χ² = χ² / (2·n_vis − n_free) (DESIGN.md)
    expect(res.reduced_chi2).toBeCloseTo(res.chi2 / (2 * res.n_vis - 3), 10);
    expect(res.model.lens[0].type).toBe("sie");
    for (const f of ["model_sky.fits", "source.fits", "data_dirty.fits", "residual_dirty.fits", "report.html", "dirty_comparison.png"]) {
      expect(existsSync(join(out, f)), f).toBe(true);
    }
  });

  it("exits 1 and flags the parameter when the maximum sits at a prior bound", () => {
    const out = join(dir, "bound");
    const m = quickModel() as { lens: Record<string, unknown>[] };
    // truth θ_E = 0.9″: a prior that stops at 0.8″ forces the fit onto its edge
    m.lens[0].theta_E = { init: 0.75, min: 0.5, max: 0.8 };
    const model = writeJson(join(dir, "bound.json"), m);
    const r = runCli(["fit", vis, "--model", model, "--out", out, "--quiet", "--local-only"]);
    expect(r.code, r.stderr).toBe(1);
    expect(r.stderr).toMatch(/WARNING: this fit has \d+ problem/);
    const res = JSON.parse(readFileSync(join(out, "result.json"), "utf8"));
    expect(res.warnings.join("\n")).toMatch(/lens\[0\]\.theta_E = .* sits at its upper bound/);
    expect(res.parameters["lens[0].theta_E"].at_bound).toBe("upper");
  });

  it("rejects a malformed model file with one line naming the path, exit 2, and writes nothing", () => {
    const src = [{ type: "point_source", flux: { init: 0.01, min: 0, max: 1 }, x: 0, y: 0 }];
    const cases: [unknown, RegExp][] = [
      [{ lens: [{ type: "sie", theta_E: 1, q: 1.4, pa: 0, x: 0, y: 0 }], source: src }, /lens\[0\]\.q/],
      [{ lens: [{ type: "sie", theta_E: "1", q: 0.8, pa: 0, x: 0, y: 0 }], source: src }, /lens\[0\]\.theta_E/],
      [{ lens: [{ type: "sie", theta_E: { init: 2, min: 0.5, max: 1.5 }, q: 0.8, pa: 0, x: 0, y: 0 }], source: src }, /lens\[0\]\.theta_E/],
      [{ lens: [{ type: "blob", size: 1 }], source: src }, /lens\[0\]/],
      [{ lens: [{ type: "shear", gamma: 0.1, pa: { same_as: "lens[3].pa" } }], source: src }, /lens\[0\]\.pa/],
      [{ lens: [{ type: "sie", theta_E: 1, q: 0.8, pa: 0, x: 0, y: 0 }], source: [] }, /source/],
    ];
    cases.forEach(([model, message], k) => {
      const out = join(dir, `bad${k}`);
      const path = writeJson(join(dir, `bad${k}.json`), model);
      const r = runCli(["fit", vis, "--model", path, "--out", out, "--quiet"]);
      expect(r.code, r.stderr).toBe(2);
      expect(r.stderr).toMatch(message);
      expect(r.stderr.trim().split("\n")).toHaveLength(1);
      expect(r.stderr).not.toMatch(/\bat .*\.js:\d+/); // no stack trace
      expect(existsSync(out)).toBe(false);
    });
    writeFileSync(join(dir, "broken.json"), '{"lens": [ {"type": "sie", ');
    const r = runCli(["fit", vis, "--model", join(dir, "broken.json"), "--out", join(dir, "badjson"), "--quiet"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/broken\.json/);
  });

  it("rejects a missing visibility file and a bad --noise-scale with exit 2", () => {
    const model = writeJson(join(dir, "quick2.json"), quickModel());
    let r = runCli(["fit", join(dir, "nope.uvfits"), "--model", model, "--out", join(dir, "o1"), "--quiet"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/nope\.uvfits/);
    r = runCli(["fit", vis, "--model", model, "--out", join(dir, "o2"), "--noise-scale", "-3", "--quiet"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/--noise-scale -3/);
  });

  it("--resume continues the checkpointed chain: the first steps are identical and the total grows", async () => {
    const out = join(dir, "resume");
    const model = writeJson(join(dir, "quick3.json"), quickModel());
    const base = ["fit", vis, "--model", model, "--out", out, "--quiet", "--local-only", "--sample", "--walkers", "16"];
    let r = runCli([...base, "--sample-steps", "60"]);
    expect([0, 1]).toContain(r.code); // a 60-step chain is (rightly) reported as not converged
    const first = await readChain(join(out, "chain.h5"));
    expect(first.steps).toBe(60);
    const cp = JSON.parse(readFileSync(join(out, "checkpoint.json"), "utf8"));
    expect(cp.ensemble.nSteps).toBe(60);
    r = runCli([...base, "--sample-steps", "120", "--resume"]);
    expect([0, 1]).toContain(r.code);
    const second = await readChain(join(out, "chain.h5"));
    expect(second.steps).toBe(120);
    const n = first.data.length;
    expect(Array.from(second.data.subarray(0, n))).toEqual(Array.from(first.data));
    const res = JSON.parse(readFileSync(join(out, "result.json"), "utf8"));
    expect(res.sampler.steps).toBe(120);
    expect(res.uncertainty_method).toBe("ensemble");
    expect(readdirSync(out).some((f) => f.endsWith(".tmp"))).toBe(false);
  });
});

async function readChain(path: string): Promise<{ steps: number; data: Float64Array }> {
  const { FS } = await h5wasm.ready;
  const bytes = readFileSync(path);
  const name = `/chain-${Math.random().toString(36).slice(2)}.h5`;
  FS.writeFile(name, new Uint8Array(bytes));
  const f = new h5wasm.File(name, "r");
  try {
    const ds = f.get("chain") as unknown as { shape: number[]; value: Float64Array };
    return { steps: ds.shape[0], data: Float64Array.from(ds.value) };
  } finally {
    f.close();
    FS.unlink(name);
  }
}
