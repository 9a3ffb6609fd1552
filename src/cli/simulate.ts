/**
 * `arcfringe simulate --sky SKY.json --config OBS.json --out FILE`: a mock observation of a
 * sky model (a model file; free parameters take their `init` as the truth) with the array,
 * track and correlator of an observation file, written as UVFITS, HDF5 or CSV by extension.
 *
 * Sky visibilities, internal sign convention (CONVENTIONS.md), primary beam a Gaussian of FWHM
 * 1.13 λ/D of the observation's dish (REFERENCES.md §7):
 * - No lens and only point/Gaussian sources: closed forms (src/sim/analytic.ts, REFERENCES.md
 *   §5), each component's flux multiplied by the beam response at its centre — exact for
 *   points; for a Gaussian of size σ the beam's variation across it is neglected, a relative
 *   error of order 4 ln2 σ²/FWHM² (1e-3 for σ = 0.5″ under a 25″ beam).
 * - Otherwise: extended components are ray-traced on a model grid (src/fit/field.ts chooses it
 *   from the track's largest |u|, |v| and the model's emission radius, or the model's `field`)
 *   with 4×4 sub-rays per pixel and refinement of undersampled pixels, rendered per channel,
 *   attenuated by the beam and transformed by NUFFT at tolerance 1e-9 with the pixel window
 *   divided out (src/fit/predict.ts). Point sources are not put on the grid, whose pixels
 *   would shift them by up to half a cell: their images are found by solving the lens
 *   equation (Newton, to 1e-10″) and each image adds F·|μ|·A(θ)·e^{−2πi(u·θx + v·θy)} exactly.
 * Noise and weights follow the radiometer equation (src/sim/simulate.ts, REFERENCES.md §6).
 * Reference: CONVENTIONS.md (measurement equation, pixel window), REFERENCES.md §5–7.
 */
import { InputError } from "../errors.js";
import type { NumericModel } from "../model/types.js";
import type { SkyVisibilityFn } from "../sim/analytic.js";
import { fluxText, fmt, note, out, printTable, withUnit } from "./output.js";
import type { CommandSpec } from "./spec.js";

export interface SimulateCliOptions {
  sky?: string;
  config?: string;
  out?: string;
  seed: number;
  noise: boolean;
  products: "stokes_i" | "linear" | "circular";
  debug?: boolean;
}

export const simulateCommand: CommandSpec<SimulateCliOptions> = {
  name: "simulate",
  args: "",
  summary: "mock observation of a sky model with an observation file's array and set-up",
  options: [
    { flags: "--sky <file>", description: "sky model (model-file JSON; free parameters use their init as the truth) (required)", kind: "string" },
    { flags: "--config <file>", description: "observation file (JSON: array, dish, site, track, band, T_sys) (required)", kind: "string" },
    { flags: "--out <file>", description: "output visibility file, format from the extension: .uvfits, .h5 or .csv (required)", kind: "string" },
    { flags: "--seed <n>", description: "seed of the noise and gain-error draws, 0 … 4294967295", kind: "int", min: 0, max: 4294967295, defaultValue: 1 },
    { flags: "--no-noise", description: "write the noiseless sky visibilities (weights still follow the radiometer equation)", kind: "flag" },
    {
      flags: "--products <stokes_i | linear | circular>", description: "correlations written: Stokes I, XX+YY, or RR+LL", kind: "string",
      choices: ["stokes_i", "linear", "circular"], defaultValue: "stokes_i",
    },
  ],
  examples: [
    { comment: "Simulate a lensed galaxy with a generated array, written as UVFITS", command: "arcfringe simulate --sky sky.json --config obs.json --out mock.uvfits" },
    { comment: "The same without noise, as a CSV table with XX and YY", command: "arcfringe simulate --sky sky.json --config obs.json --out mock.csv --no-noise --products linear" },
  ],
  action: runSimulate,
};

async function runSimulate(_args: string[], opts: SimulateCliOptions): Promise<number> {
  for (const [flag, value, what] of [
    ["--sky", opts.sky, "the sky model file (JSON)"],
    ["--config", opts.config, "the observation file (JSON)"],
    ["--out", opts.out, "the output file (.uvfits, .h5 or .csv)"],
  ] as const) {
    if (value === undefined) throw new InputError(`${flag} is required: give ${what}`);
  }
  const skyPath = opts.sky!, obsPath = opts.config!, outPath = opts.out!;
  const { formatFromExtension, writeVisibilities, summariseVisibilities } = await import("../vis/index.js");
  const { existsSync, statSync } = await import("node:fs");
  const { dirname, basename } = await import("node:path");
  const format = formatFromExtension(outPath);
  if (!format) throw new InputError(`--out ${outPath}: cannot tell the format from the extension; use .uvfits, .h5 or .csv`);
  const dir = dirname(outPath);
  if (!existsSync(dir) || !statSync(dir).isDirectory()) throw new InputError(`--out ${outPath}: folder ${dir} does not exist; create it first`);

  const { loadSkyFile } = await import("../model/index.js");
  const { readObservationFile, runSimulation, summariseObservation } = await import("../sim/index.js");
  const { Rng } = await import("../random.js");
  const { truth } = loadSkyFile(skyPath);
  const obs = readObservationFile(obsPath);
  truth.source.forEach((s, k) => {
    if (s.type === "pixelised") {
      throw new InputError(`${skyPath}: source[${k}]: a pixelised source has no brightness to simulate; describe the sky with sersic, gaussian or point_source components`);
    }
  });

  // Notes are printed after success, so that a failure is one stderr line.
  const notes: string[] = [];
  const { fn, description } = await buildSkyFunction(truth, obs, skyPath, notes);
  notes.push(description);
  const sim = runSimulation(obs, fn, new Rng(opts.seed), { products: opts.products, noise: opts.noise });
  await writeVisibilities(outPath, sim.vis, { format });

  const os = summariseObservation(obs);
  const vs = summariseVisibilities(sim.vis, {
    format, entriesInFile: sim.vis.count, kept: sim.vis.count, droppedFlagged: 0, droppedNonFinite: 0, droppedAuto: 0, notes: [],
  });
  const b = vs.synthesizedBeamArcsec;
  const rows: [string, string][] = [
    ["wrote", `${outPath} (${format}), ${sim.vis.count} visibilities = ${sim.track.nTimes * sim.track.nBaselines} rows × ${sim.vis.channelFreqHz.length} channels × ${opts.products === "stokes_i" ? 1 : 2} correlations`],
    ["array", `${os.nAnt} antennas of ${obs.dishM} m (${obs.layoutSource}), ${os.nBaselines} baselines, ${withUnit(os.minBaselineM, "m")} – ${withUnit(os.maxBaselineM, "m")}`],
    ["track", `${sim.track.nTimes} integrations of ${obs.integrationS} s (${fmt(os.onSourceS / 3600, 4)} h on source), ${os.droppedLowElevation} below ${obs.elevationLimitDeg}° elevation dropped`],
    ["band", `${fmt(obs.freqHz / 1e9, 6)} GHz, ${fmt(obs.bandwidthHz / 1e9, 4)} GHz in ${obs.channels} channels`],
    ["σ per visibility", `${fluxText(sim.sigmaStokesIJy)} (Stokes I), ${fluxText(sim.sigmaCorrelationJy)} (one correlation), per real/imaginary part`],
    ["image noise", `${fluxText(os.imageSigmaJyPerBeam, "Jy/beam")} expected (natural weighting, Stokes I, whole band)`],
    ["beam", `${withUnit(b.naturalMajor, "″")} × ${withUnit(b.naturalMinor, "″")}, PA ${fmt(b.naturalPaDeg, 4)}° (natural, estimate); λ/B_max ${withUnit(os.resolutionArcsec, "″")}`],
    ["noise", opts.noise ? `thermal, seed ${opts.seed}` : "none (--no-noise)"],
  ];
  printTable(rows, 0);
  out("truth:");
  for (const line of truthLines(truth)) out(`  ${line}`);
  for (const n of notes) note(n);
  note(`simulated ${basename(skyPath)} with ${basename(obsPath)}`);
  return 0;
}

/** One line per component: `lens[0] sie: theta_E 0.85, q 0.75, …`. */
function truthLines(model: NumericModel): string[] {
  const lines: string[] = [];
  const describe = (c: object): string =>
    Object.entries(c)
      .filter(([k, v]) => k !== "type" && k !== "name" && v !== undefined)
      .map(([k, v]) => `${k} ${typeof v === "number" ? fmt(v, 6) : String(v)}`)
      .join(", ");
  model.lens.forEach((c, k) => lines.push(`lens[${k}] ${c.type}: ${describe(c)}`));
  model.source.forEach((c, k) => lines.push(`source[${k}] ${c.type}: ${describe(c)}`));
  if (model.redshift) lines.push(`redshift: lens ${model.redshift.lens}, source ${model.redshift.source}`);
  return lines;
}

/**
 * The simulator's sky callback for a numbers-only model (see the module comment).
 * @returns the callback and a one-line description of the method, for the user
 */
async function buildSkyFunction(
  truth: NumericModel,
  obs: import("../sim/observation.js").Observation,
  skyPath: string,
  notes: string[],
): Promise<{ fn: SkyVisibilityFn; description: string }> {
  const { analyticSkyVisibilities, channelFrequenciesHz, buildUvTrack } = await import("../sim/index.js");
  const { primaryBeamResponse } = await import("../fourier/primaryBeam.js");
  const { ARCSEC_TO_RAD, C_M_PER_S, DEG_TO_RAD } = await import("../units.js");
  const beam = { dishDiameterM: obs.dishM, shape: "gaussian" as const, fwhmFactor: 1.13 };
  const where = `${skyPath}: source`;

  const analytic = truth.lens.length === 0 && truth.source.every((s) => s.type === "point_source" || s.type === "gaussian");
  if (analytic) {
    const base = truth.source as unknown as import("../sim/analytic.js").AnalyticComponent[];
    analyticSkyVisibilities(base, where); // validate now, before any work
    const perFreq = new Map<number, SkyVisibilityFn>();
    const fn: SkyVisibilityFn = (u, v, freqHz) => {
      let g = perFreq.get(freqHz);
      if (!g) {
        const scaled = base.map((c) => ({ ...c, flux: c.flux * primaryBeamResponse(Math.hypot(c.x, c.y) * ARCSEC_TO_RAD, freqHz, beam) }));
        g = analyticSkyVisibilities(scaled, where);
        perFreq.set(freqHz, g);
      }
      return g(u, v, freqHz);
    };
    return { fn, description: "sky: closed-form visibilities of the point/Gaussian components, primary beam applied at each component's centre" };
  }

  // Model grid from the track's largest |u|, |v| (at the highest channel frequency).
  const track = buildUvTrack(obs.layout, {
    siteLatRad: obs.siteLatDeg * DEG_TO_RAD,
    decRad: obs.phaseCentreDeg[1] * DEG_TO_RAD,
    hourAngleStartRad: obs.hourAngleH[0] * 15 * DEG_TO_RAD,
    hourAngleEndRad: obs.hourAngleH[1] * 15 * DEG_TO_RAD,
    integrationS: obs.integrationS,
    elevationLimitRad: obs.elevationLimitDeg * DEG_TO_RAD,
  });
  const freqs = channelFrequenciesHz(obs);
  let fMax = 0;
  for (const f of freqs) fMax = Math.max(fMax, f);
  let uvMaxM = 0;
  for (let r = 0; r < track.uM.length; r++) uvMaxM = Math.max(uvMaxM, Math.abs(track.uM[r]), Math.abs(track.vM[r]));
  const uvMaxLambda = (uvMaxM * fMax) / C_M_PER_S;

  const { chooseField, emissionRadiusArcsec } = await import("../fit/field.js");
  const { LensedSky } = await import("../fit/sky.js");
  const { predictVisibilities } = await import("../fit/predict.js");
  const field = chooseField(uvMaxLambda, emissionRadiusArcsec(truth), truth.field);
  for (const n of field.notes) notes.push(`model grid: ${n}`);

  const extended = truth.source.filter((s) => s.type === "sersic" || s.type === "gaussian");
  const points = truth.source.filter((s) => s.type === "point_source") as import("../model/types.js").PointSourceNumbers[];
  const sky = new LensedSky({ n: field.n, cellArcsec: field.cellArcsec, supersample: 4, refineFactor: 4 });
  sky.setModel({ ...truth, source: extended });

  // Images of each point source, found once: positions [rad] and |μ|.
  const images = points.map((p) => {
    const im = sky.plan.pointImages(p.x, p.y);
    const refHz = p.ref_freq_ghz !== undefined ? p.ref_freq_ghz * 1e9 : NaN;
    return {
      fluxJy: p.flux, alpha: p.spectral_index ?? 0, refHz,
      xRad: im.xArcsec.map((x) => x * ARCSEC_TO_RAD), yRad: im.yArcsec.map((y) => y * ARCSEC_TO_RAD),
      absMu: im.magnification.map((m) => Math.abs(m)),
    };
  });
  images.forEach((im, k) => {
    if (im.xRad.length === 0) notes.push(`point source ${k}: no image inside the ${fmt(field.sizeArcsec, 4)}″ model field`);
  });

  const fn: SkyVisibilityFn = (u, v, freqHz) => {
    const m = u.length;
    const re = new Float64Array(m);
    const im = new Float64Array(m);
    if (extended.length > 0) {
      predictVisibilities(sky, u, v, new Uint8Array(m), Float64Array.of(freqHz), re, im, { tolerance: 1e-9, beam });
    }
    for (const p of images) {
      const spectral = p.alpha !== 0 ? Math.pow(freqHz / p.refHz, p.alpha) : 1;
      for (let t = 0; t < p.xRad.length; t++) {
        const x = p.xRad[t], y = p.yRad[t];
        const amp = p.fluxJy * spectral * p.absMu[t] * primaryBeamResponse(Math.hypot(x, y), freqHz, beam);
        const twoPiX = 2 * Math.PI * x, twoPiY = 2 * Math.PI * y;
        for (let k = 0; k < m; k++) {
          const phase = -(twoPiX * u[k] + twoPiY * v[k]);
          re[k] += amp * Math.cos(phase);
          im[k] += amp * Math.sin(phase);
        }
      }
    }
    return { re, im };
  };
  const parts: string[] = [];
  if (extended.length > 0) parts.push(`${extended.length} extended component(s) ray-traced on a ${field.n}² grid of ${fmt(field.cellArcsec, 4)}″ cells (4×4 sub-rays), NUFFT at 1e-9`);
  if (points.length > 0) parts.push(`${points.length} point source(s) from their exact lensed images`);
  return { fn, description: `sky: ${parts.join("; ")}; Gaussian primary beam 1.13 λ/D` };
}
