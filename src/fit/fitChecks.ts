/**
 * The checks a user must see after a fit, as warnings: search not converged, parameters at a
 * prior bound, residuals against the data's own scatter (or reduced χ²), flux at the field edge or
 * outside the primary beam, the neglected w-term, point sources, and for pixelised sources
 * barely resolved arcs.
 * Reference: common practice in model fitting, no source; thresholds are given beside each check.
 */
import { isAtBound } from "../model/parameters.js";
import { borderFluxFraction, wTermPhaseRad } from "./assemble.js";
import type { FitDataset } from "./dataset.js";
import type { FitProblem } from "./problem.js";
import type { LensedSky } from "./sky.js";

/** What the checks look at. */
export interface BestFitState {
  /** False when the search stopped before converging (true after a resume from a checkpoint). */
  searchConverged: boolean;
  searchReason: string;
  problem: FitProblem;
  /** Maximum a posteriori (full vector). */
  map: Float64Array;
  datasets: readonly FitDataset[];
  noiseScale: "fit" | number;
  /** Noise scale and χ² per dataset. */
  noise: Float64Array;
  chi2: Float64Array;
  /** Best-fit lensed sky [Jy/pixel], N². */
  modelSkyData: Float64Array;
  field: { n: number; sizeArcsec: number };
  sky: LensedSky;
}

/** The warnings of a finished fit (empty when all is well). */
export function bestFitWarnings(c: BestFitState): string[] {
  const out: string[] = [];
  if (!c.searchConverged) out.push(`the search for the maximum did not converge (${c.searchReason}); rerun with more --search-seconds or a better start`);
  for (let i = 0; i < c.problem.nModel; i++) {
    const at = isAtBound(c.problem.spec, c.problem.spec.free[i].name, c.map[i]);
    if (at) out.push(`${c.problem.spec.free[i].name} = ${fmt(c.map[i])} sits at its ${at === "min" ? "lower" : "upper"} bound: the data want it beyond the prior range; widen the range or check the model`);
  }
  c.datasets.forEach((d, i) => {
    const ws = d.weightScaleEstimate;
    if (c.noiseScale === "fit" && Number.isFinite(ws) && ws > 0) {
      // Residual variance relative to the scatter of the data themselves.
      const ratio = c.noise[i] * c.noise[i] * (d.weightsRescaled ? 1 : ws);
      if (ratio > 1.5) out.push(`${d.name}: the residuals are ${Math.sqrt(ratio).toFixed(2)}× larger than the noise in the data: the model misses real structure (try a more flexible source or lens)`);
      if (ratio < 0.67) out.push(`${d.name}: the residuals are ${Math.sqrt(ratio).toFixed(2)}× the noise in the data: over-fitting, or noise correlated between integrations`);
    } else if (c.noiseScale !== "fit") {
      const red = c.chi2[i] / (c.noise[i] * c.noise[i]) / Math.max(1, 2 * d.vis.count - c.problem.names.length);
      if (red > 1.25 || red < 0.8) out.push(`${d.name}: reduced χ² after noise scaling is ${red.toFixed(3)}, far from 1: the weights or the model are wrong; try --noise-scale fit`);
    }
  });
  const border = borderFluxFraction(c.modelSkyData, c.field.n);
  // Half a per cent lost at the edge biases the fluxes by about that much; below it, no warning.
  if (border > 5e-3) out.push(`${(100 * border).toFixed(2)}% of the model's lensed flux lies at the edge of the ${c.field.sizeArcsec.toPrecision(3)}″ field: the source extends beyond it; set a larger field.size_arcsec`);
  const beamWarn = outsideBeamWarning(c.datasets[0], c.modelSkyData, c.field.n);
  if (beamWarn) out.push(beamWarn);
  const wPhase = wTermPhaseRad(c.datasets[0], (c.field.sizeArcsec / 2) * Math.SQRT2);
  if (wPhase > 0.01) out.push(`the neglected w-term reaches ${wPhase.toFixed(3)} rad at the field edge (> 0.01): model fields this wide need a w-correction, which arcfringe does not apply`);
  if (c.sky.source.components.some((comp) => comp.profile.type === "point_source")) {
    out.push("the model has point sources: their images are deposited into single pixels, so χ² is not smooth in their positions and the curvature σ of those positions are unreliable");
  }
  return out;
}

function fmt(v: number): string {
  return Math.abs(v) >= 1e4 || (Math.abs(v) < 1e-3 && v !== 0) ? v.toExponential(4) : v.toPrecision(6);
}

/**
 * A warning for a pixelised source when the synthesized beam's geometric-mean FWHM exceeds a
 * third of the Einstein radius (barely resolved arcs), or undefined. The threshold sits between
 * our simulations at beam ≈ θ_E/2 (degenerate) and θ_E/6 (recovered within 3σ).
 */
export function barelyResolvedWarning(beam: { bmajArcsec: number; bminArcsec: number } | undefined, thetaEArcsec: number | null | undefined): string | undefined {
  if (!beam || typeof thetaEArcsec !== "number" || !(thetaEArcsec > 0)) return undefined;
  if (!(Math.sqrt(beam.bmajArcsec * beam.bminArcsec) > thetaEArcsec / 3)) return undefined;
  return (
    `the synthesized beam (${beam.bmajArcsec.toPrecision(2)}″ × ${beam.bminArcsec.toPrecision(2)}″) is more than a third of the Einstein radius ` +
    `(${thetaEArcsec.toPrecision(3)}″): the arcs are barely resolved, and with a pixelised source the axis ratio, shear and Einstein radius are then ` +
    "nearly degenerate (in our simulations at beam ≈ θ_E/2 the curvature was flat, or its σ hid a 3-10σ bias); use a parametric source, or sample"
  );
}

/** A warning when bright model emission falls where the first group's primary beam is below half power. */
export function outsideBeamWarning(ds: FitDataset, image: Float64Array, n: number): string | undefined {
  const beam = ds.beams?.[0];
  if (!beam) return undefined;
  let peak = 0;
  for (let p = 0; p < image.length; p++) peak = Math.max(peak, image[p]);
  let count = 0;
  for (let p = 0; p < image.length; p++) if (image[p] > 0.01 * peak && beam[p] < 0.5) count++;
  return count > 0
    ? `${ds.name}: ${count} pixels of lensed emission lie outside the primary beam's half-power circle; their flux depends strongly on the beam model`
    : undefined;
}


