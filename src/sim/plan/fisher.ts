/**
 * The Fisher matrix of the uv-plane likelihood at the truth, by finite differences of model
 * visibilities.
 *
 * With χ² = Σ_k w_k [(Re d_k − Re m_k)² + (Im d_k − Im m_k)²] and Gaussian noise of variance
 * 1/w_k per part, the Fisher information of the parameters p is
 *   F_ij = Σ_k w_k [∂Re m_k/∂p_i · ∂Re m_k/∂p_j + ∂Im m_k/∂p_i · ∂Im m_k/∂p_j],
 * summed exactly over the stored visibilities (each stands for itself and its conjugate, which
 * carries no new information). The derivatives are taken of noise-free model visibilities; the
 * thermal noise enters only through the weights. A normal prior N(μ, s) on p_i adds its
 * curvature 1/s² to F_ii (kept apart in `priorMatrix`, since it does not grow with time); uniform
 * and log-uniform priors add none in the interior of their support.
 *
 * Steps. A central difference has truncation error h²·m'''/6 and rounding error ~ε_mach·|m|/h;
 * the model varies on the scale L = min(synthesised beam, source size), so h/L ≈ 10⁻³–10⁻² keeps
 * the truncation error near 10⁻⁵ relative and rounding negligible. The defaults, per unit:
 *   arcsec: h = 10⁻² × model cell (cell ≈ beam/6);   deg: h = 10⁻² deg (the pa of an ellipse
 *   changes the image on a scale of ~1 rad);  Jy (linear): h = 10⁻³ |p|;  other units and
 *   dimensionless parameters: h = 10⁻⁴ max(|p|, 0.1).
 * Where p ± h leaves the parameter's allowed range (q = 1, γ = 0, …) the one-sided second-order
 * formula f' ≈ ∓(3f(p) − 4f(p ∓ h) + f(p ∓ 2h))/(2h) is used instead.
 * The visibilities of the combination Σ c_i V(p_i) are computed in one transform (modelVis.ts),
 * so the NUFFT error is relative to the difference itself.
 * A parameter whose step changes the model by less than SENSITIVITY_FLOOR relative
 * (F_ii h_i² ≤ floor² Σ_k w_k |m_k|²) has a derivative indistinguishable from rounding (the pa of
 * a round lens, say): its row and column are set to zero, so it comes out unconstrained.
 * Reference: Tegmark, Taylor & Heavens 1997, ApJ 480, 22 (Fisher matrix of a Gaussian likelihood
 * whose covariance does not depend on the parameters; from memory, equation number not checked);
 * Abramowitz & Stegun 1964, §25.3 (central and one-sided difference formulas; from memory).
 */
import { componentDef, inDomain, type Domain } from "../../model/components.js";
import { toNumbers, type ModelSpec } from "../../model/parameters.js";
import { dotCompensated } from "../../fourier/sum.js";
import type { ModelVisibilityPlan } from "./modelVis.js";

/**
 * Relative change of the model visibilities per step below which a derivative counts as
 * rounding noise. Genuine steps change the model by h/L ≳ 1e-5 (see the step rule); rounding in
 * the rendering leaves ~1e-15: 1e-10 sits far from both.
 */
export const SENSITIVITY_FLOOR = 1e-10;

export type DifferenceScheme = "central" | "forward" | "backward";

export interface FisherOptions {
  /** Absolute steps per free parameter (file units), overriding the default rule. */
  steps?: Float64Array;
  /** Model cell [arcsec] for the arcsec step rule (default: the plan's grid cell, else 0.01″). */
  cellArcsec?: number;
}

export interface FisherMatrices {
  /** Free-parameter names, units and true values (file units: arcsec, deg, Jy, …). */
  names: string[];
  units: string[];
  truth: Float64Array;
  /** Finite-difference steps [parameter units] and the formula used for each. */
  steps: Float64Array;
  schemes: DifferenceScheme[];
  /** P × P row-major information from the visibilities [1/(unit_i·unit_j)]. */
  dataMatrix: Float64Array;
  /** True where the model does not respond to the parameter (row and column of F zeroed). */
  insensitive: boolean[];
  /** P × P row-major prior curvature (diagonal: 1/s² of normal priors). */
  priorMatrix: Float64Array;
  /** Model visibilities at the truth [Jy]. */
  modelRe: Float64Array;
  modelIm: Float64Array;
}

/** Default finite-difference step for one parameter (see the module comment). */
export function defaultStep(value: number, unit: string, cellArcsec: number): number {
  if (unit === "arcsec") return 1e-2 * cellArcsec;
  if (unit === "deg") return 1e-2;
  if (unit === "Jy") return 1e-3 * Math.max(Math.abs(value), 1e-9);
  return 1e-4 * Math.max(Math.abs(value), 0.1);
}

/** Allowed range of a free parameter (from the component table). */
function domainOf(spec: ModelSpec, k: number): Domain | undefined {
  const f = spec.free[k];
  const comp = spec.model[f.role][f.component];
  return componentDef(comp.type)?.params.find((d) => d.key === f.key)?.domain;
}

/**
 * Fisher matrices of the free parameters of `spec` at its `init` values (the truth).
 * @param spec model spec of the sky file
 * @param plan model-visibility plan over the configuration's uv points
 * @param weight w_k = 1/σ_k² per entry [Jy⁻²]
 * @returns data and prior matrices, steps, and the truth visibilities
 * Reference: see the module comment.
 */
export function fisherMatrices(spec: ModelSpec, plan: ModelVisibilityPlan, weight: Float64Array, options: FisherOptions = {}): FisherMatrices {
  const nPar = spec.free.length;
  const m = plan.count;
  if (weight.length !== m) throw new Error(`fisherMatrices: ${weight.length} weights for ${m} entries`);
  const truth = new Float64Array(nPar);
  for (let i = 0; i < nPar; i++) truth[i] = spec.free[i].init;
  const truthModel = toNumbers(spec, truth);
  const modelRe = new Float64Array(m);
  const modelIm = new Float64Array(m);
  plan.visibilities(truthModel, modelRe, modelIm);

  const cell = options.cellArcsec ?? plan.field?.cellArcsec ?? 0.01;
  const steps = new Float64Array(nPar);
  const schemes: DifferenceScheme[] = [];
  const sqrtW = new Float64Array(m);
  for (let k = 0; k < m; k++) sqrtW[k] = Math.sqrt(weight[k]);
  // √w-scaled derivatives, interleaved (Re, Im): F_ij is then one dot product of two rows.
  const deriv: Float64Array[] = [];
  const dRe = new Float64Array(m);
  const dIm = new Float64Array(m);
  for (let i = 0; i < nPar; i++) {
    const p0 = truth[i];
    let h = options.steps ? options.steps[i] : defaultStep(p0, spec.free[i].unit, cell);
    if (!(h > 0) || !Number.isFinite(h)) throw new Error(`fisherMatrices: step ${h} for ${spec.free[i].name}`);
    h = p0 + h - p0; // the step actually representable at p0
    steps[i] = h;
    const dom = domainOf(spec, i);
    const ok = (x: number): boolean => (dom ? inDomain(x, dom) : true);
    let scheme: DifferenceScheme = "central";
    if (!ok(p0 + h) && ok(p0 - h) && ok(p0 - 2 * h)) scheme = "backward";
    else if (!ok(p0 - h) && ok(p0 + h) && ok(p0 + 2 * h)) scheme = "forward";
    else if (!ok(p0 + h) || !ok(p0 - h)) throw new Error(`fisherMatrices: no finite-difference stencil fits ${spec.free[i].name} = ${p0} with step ${h}`);
    schemes.push(scheme);
    const at = (dx: number) => {
      const v = truth.slice();
      v[i] = p0 + dx;
      return toNumbers(spec, v);
    };
    if (scheme === "central") plan.combine([at(h), at(-h)], [1 / (2 * h), -1 / (2 * h)], dRe, dIm);
    else if (scheme === "forward") plan.combine([truthModel, at(h), at(2 * h)], [-3 / (2 * h), 4 / (2 * h), -1 / (2 * h)], dRe, dIm);
    else plan.combine([truthModel, at(-h), at(-2 * h)], [3 / (2 * h), -4 / (2 * h), 1 / (2 * h)], dRe, dIm);
    const row = new Float64Array(2 * m);
    for (let k = 0; k < m; k++) {
      row[2 * k] = sqrtW[k] * dRe[k];
      row[2 * k + 1] = sqrtW[k] * dIm[k];
    }
    deriv.push(row);
  }
  const dataMatrix = new Float64Array(nPar * nPar);
  for (let i = 0; i < nPar; i++) {
    for (let j = i; j < nPar; j++) {
      const f = dotCompensated(deriv[i], deriv[j]);
      dataMatrix[i * nPar + j] = f;
      dataMatrix[j * nPar + i] = f;
    }
  }
  let sumWM2 = 0;
  for (let k = 0; k < m; k++) sumWM2 += weight[k] * (modelRe[k] * modelRe[k] + modelIm[k] * modelIm[k]);
  const insensitive: boolean[] = [];
  for (let i = 0; i < nPar; i++) {
    const flat = !(dataMatrix[i * nPar + i] * steps[i] * steps[i] > SENSITIVITY_FLOOR * SENSITIVITY_FLOOR * sumWM2);
    insensitive.push(flat);
    if (!flat) continue;
    for (let j = 0; j < nPar; j++) {
      dataMatrix[i * nPar + j] = 0;
      dataMatrix[j * nPar + i] = 0;
    }
  }
  const priorMatrix = new Float64Array(nPar * nPar);
  for (let i = 0; i < nPar; i++) {
    const prior = spec.free[i].prior;
    if (prior.kind === "normal") priorMatrix[i * nPar + i] = 1 / (prior.sd * prior.sd);
  }
  return {
    names: spec.free.map((f) => f.name),
    units: spec.free.map((f) => f.unit),
    truth, steps, schemes, dataMatrix, insensitive, priorMatrix, modelRe, modelIm,
  };
}
