/**
 * A small simulated lens for the fit tests (invented, like the demo): an SIE + external shear
 * lensing a Sérsic source, observed by a 20-dish, 400 m array at 345 GHz for one hour, so that a
 * fit on a 54² model grid takes seconds. The data come from `arcfringe simulate` (4×4 sub-rays,
 * NUFFT at 1e-9, thermal noise from the radiometer equation), which the fit does not share:
 * the fit traces 2×2 sub-rays and uses gridded statistics.
 */
import { mkdtempSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { simulateCommand } from "../../src/cli/simulate.js";

export const TRUTH = {
  "lens[0].theta_E": 0.9,
  "lens[0].q": 0.75,
  "lens[0].pa": 40,
  "lens[0].x": 0.03,
  "lens[0].y": -0.02,
  "lens[1].gamma": 0.05,
  "lens[1].pa": 110,
  "source[0].flux": 0.006,
  "source[0].r_eff": 0.2,
  "source[0].n": 1.0,
  "source[0].q": 0.7,
  "source[0].pa": 60,
  "source[0].x": 0.08,
  "source[0].y": 0.05,
} as const;

const FIELD = { size_arcsec: 4.2, pixel_arcsec: 0.06 };

export const SKY = {
  lens: [
    { type: "sie", theta_E: 0.9, q: 0.75, pa: 40, x: 0.03, y: -0.02 },
    { type: "shear", gamma: 0.05, pa: 110 },
  ],
  source: [{ type: "sersic", flux: 0.006, r_eff: 0.2, n: 1.0, q: 0.7, pa: 60, x: 0.08, y: 0.05 }],
  field: FIELD,
};

export const OBS = {
  array: { generate: "disc", n_ant: 20, max_baseline_m: 400, seed: 3 },
  dish_m: 12,
  site_lat_deg: -30,
  phase_centre_deg: [150.0, -20.0],
  hour_angle_h: [-0.5, 0.5],
  integration_s: 120,
  freq_ghz: 345,
  bandwidth_ghz: 7.5,
  channels: 1,
  tsys_k: 150,
  aperture_efficiency: 0.7,
};

/** The fit model: wide uniform priors; init away from the truth. */
export function fitModel(init: Partial<Record<keyof typeof TRUTH, number>> = {}): unknown {
  const p = (name: keyof typeof TRUTH, def: number, min: number, max: number) => ({ init: init[name] ?? def, min, max });
  return {
    lens: [
      { type: "sie", theta_E: p("lens[0].theta_E", 1.0, 0.5, 1.5), q: p("lens[0].q", 0.85, 0.4, 1), pa: p("lens[0].pa", 20, 0, 180), x: p("lens[0].x", 0, -0.3, 0.3), y: p("lens[0].y", 0, -0.3, 0.3) },
      { type: "shear", gamma: p("lens[1].gamma", 0.02, 0, 0.15), pa: p("lens[1].pa", 90, 0, 180) },
    ],
    source: [
      {
        type: "sersic",
        flux: p("source[0].flux", 0.004, 0, 0.05),
        r_eff: p("source[0].r_eff", 0.25, 0.05, 0.6),
        n: p("source[0].n", 1.5, 0.5, 4),
        q: p("source[0].q", 0.8, 0.3, 1),
        pa: p("source[0].pa", 90, 0, 180),
        x: p("source[0].x", 0, -0.4, 0.4),
        y: p("source[0].y", 0, -0.4, 0.4),
      },
    ],
    field: FIELD,
  };
}

/** Truth as a model file's init values (a start at the truth). */
export function initAtTruth(): Partial<Record<keyof typeof TRUTH, number>> {
  return { ...TRUTH };
}

/** Run `simulate` on a sky and an observation (written into dir) quietly; returns the UVFITS path. */
export async function simulateFiles(dir: string, name: string, sky: unknown, obs: unknown, seed: number): Promise<string> {
  writeFileSync(join(dir, `${name}.sky.json`), JSON.stringify(sky));
  writeFileSync(join(dir, `${name}.obs.json`), JSON.stringify(obs));
  const vis = join(dir, `${name}.uvfits`);
  const write = process.stdout.write.bind(process.stdout);
  const writeErr = process.stderr.write.bind(process.stderr);
  // The simulator prints a summary: keep the test log quiet.
  process.stdout.write = (() => true) as typeof process.stdout.write;
  process.stderr.write = (() => true) as typeof process.stderr.write;
  try {
    const code = await simulateCommand.action([], { sky: join(dir, `${name}.sky.json`), config: join(dir, `${name}.obs.json`), out: vis, seed, noise: true, products: "stokes_i" });
    if (code !== 0) throw new Error(`simulate ${name} exited ${code}`);
  } finally {
    process.stdout.write = write;
    process.stderr.write = writeErr;
  }
  return vis;
}

/** Simulate the scenario with a noise seed into a fresh folder; returns the folder and the file. */
export async function simulateScenario(seed: number, dir = mkdtempSync(join(tmpdir(), "arcfringe-fit-"))): Promise<{ dir: string; vis: string }> {
  return { dir, vis: await simulateFiles(dir, `obs_${seed}`, SKY, OBS, seed) };
}
