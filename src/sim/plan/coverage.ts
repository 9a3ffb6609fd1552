/**
 * The uv coverage and weights of one array configuration, for forecasting: the simulator's
 * tracks and radiometer-equation weights with the noise switched off and a zero sky, so the
 * table carries only where the array samples and how well (w = 1/σ² per real/imaginary part).
 * The model visibilities are computed separately (modelVis.ts); thermal noise enters a
 * forecast only through these weights.
 * Reference: simulator (sim/simulate.ts): Thompson, Moran & Swenson 2017 §4.1, §6.2;
 * REFERENCES.md §6.
 */
import { Rng } from "../../random.js";
import type { Visibilities } from "../../vis/types.js";
import type { Observation } from "../observation.js";
import { runSimulation } from "../simulate.js";
import { summariseObservation, type ObservationSummary } from "../summary.js";

/** What an array configuration samples, without noise. */
export interface PlanCoverage {
  /** Stokes I entries with re = im = 0 and weights 1/σ_I² [Jy⁻²]. */
  vis: Visibilities;
  summary: ObservationSummary;
  /** σ of one Stokes I visibility per real/imaginary part [Jy]. */
  sigmaStokesIJy: number;
  /** Time on source [s]: kept integrations × integration time. */
  onSourceS: number;
  /** Largest and smallest projected uv distance sqrt(u² + v²) over all entries [λ]. */
  uvMaxRadialLambda: number;
  uvMinRadialLambda: number;
  /** Largest |u| or |v| over all entries [λ] (sets the model grid's Nyquist cell). */
  uvMaxAxisLambda: number;
  /** Σ_k w_k [Jy⁻²] over the stored entries (conjugates not counted). */
  sumWeights: number;
}

/** A sky of zero brightness: the coverage needs positions and weights only. */
function zeroSky(uLambda: Float64Array): { re: Float64Array; im: Float64Array } {
  return { re: new Float64Array(uLambda.length), im: new Float64Array(uLambda.length) };
}

/**
 * Simulate the uv tracks and weights of an observation without noise or gain errors.
 * @param obs validated observation
 * @returns coverage with uv extremes [λ] and the weight sum [Jy⁻²]
 * Reference: see the module comment.
 */
export function planCoverage(obs: Observation): PlanCoverage {
  // No noise and a zero sky: the generator is never consumed, but the simulator wants one.
  // Gain errors are switched off explicitly (a zero sky times any gain is still zero).
  const sim = runSimulation(obs, zeroSky, new Rng(0), {
    noise: false,
    gainErrors: { phaseRmsDeg: 0, amplitudeRms: 0, model: "constant" },
  });
  const vis = sim.vis;
  let uvMax = 0;
  let uvMin = Infinity;
  let axisMax = 0;
  let sumW = 0;
  for (let k = 0; k < vis.count; k++) {
    const u = vis.uLambda[k];
    const v = vis.vLambda[k];
    const r = Math.hypot(u, v);
    if (r > uvMax) uvMax = r;
    if (r > 0 && r < uvMin) uvMin = r;
    const a = Math.max(Math.abs(u), Math.abs(v));
    if (a > axisMax) axisMax = a;
    sumW += vis.weight[k];
  }
  const summary = summariseObservation(obs);
  return {
    vis,
    summary,
    sigmaStokesIJy: sim.sigmaStokesIJy,
    onSourceS: sim.track.nTimes * obs.integrationS,
    uvMaxRadialLambda: uvMax,
    uvMinRadialLambda: uvMin,
    uvMaxAxisLambda: axisMax,
    sumWeights: sumW,
  };
}
