/**
 * On-source time a configuration needs to reach a target σ on one parameter.
 *
 * At fixed uv coverage the weights grow in proportion to the integration time, so the data's
 * Fisher information scales as s = t/t₀ while normal priors do not:
 *   F(s) = s·F_data + F_prior,   σ_i(s) = sqrt((F(s)⁻¹)_ii),
 * which gives σ ∝ t^(−1/2) when the priors are negligible. σ_i(s) decreases monotonically in s
 * (F(s) grows in the Loewner order), so the s with σ_i(s) = σ_target is found by bisection in
 * log s. The scaling holds only while the coverage stays the same: it describes repeating the
 * same hour-angle range. A longer single track adds new hour angles (other uv points), and a
 * shorter one loses Earth-rotation coverage; both change F beyond a factor.
 * Reference: radiometer equation (weights ∝ τ, REFERENCES.md §6); Loewner order and matrix
 * inversion, Horn & Johnson 2013, Matrix Analysis, 2nd ed., §7.7 (from memory).
 */
import { InputError } from "../../errors.js";
import { summariseFisher } from "./covariance.js";
import type { ConfigForecast } from "./forecast.js";

export interface TimeTarget {
  /** Free-parameter name, e.g. `lens[0].theta_E`. */
  name: string;
  /** Target 1σ in the parameter's unit. */
  sigma: number;
}

export interface TimeToReach {
  /** Required on-source time [s]; Infinity when no time suffices. */
  timeS: number;
  /** t/t₀ relative to the simulated on-source time. */
  scale: number;
  /** Where the σ ∝ t^(−1/2) scaling fails or needs care. */
  notes: string[];
}

/**
 * Parse `name=sigma` (e.g. `lens[0].theta_E=0.005`).
 * @param option the flag, for messages
 * @throws InputError with the expected form
 */
export function parseTimeTarget(text: string, option = "--time-to-reach"): TimeTarget {
  const m = /^\s*((?:lens|source)\[\d+\]\.\w+)\s*=\s*([^\s]+)\s*$/.exec(text);
  if (!m) {
    throw new InputError(`${option} ${JSON.stringify(text)}: expected PARAMETER=SIGMA, e.g. 'lens[0].theta_E=0.005' (σ in the parameter's unit)`);
  }
  const sigma = Number(m[2]);
  if (!(sigma > 0) || !Number.isFinite(sigma)) {
    throw new InputError(`${option} ${JSON.stringify(text)}: the target σ must be a positive number in the parameter's unit; got ${m[2]}`);
  }
  return { name: m[1], sigma };
}

/** Largest and smallest time factors searched. */
const MAX_SCALE = 1e12;
const MIN_SCALE = 1e-9;

/**
 * Time to reach `target` with the coverage of `forecast`.
 * @returns time [s], scale t/t₀, notes
 * @throws InputError if the parameter is not free in the sky file
 * Reference: see the module comment.
 */
export function timeToReach(forecast: ConfigForecast, target: TimeTarget, option = "--time-to-reach"): TimeToReach {
  const names = forecast.fisher.names;
  const i = names.indexOf(target.name);
  if (i < 0) {
    throw new InputError(
      `${option} ${target.name}: not a free parameter of the sky file; free parameters are ${names.length > 0 ? names.join(", ") : "(none)"}`,
    );
  }
  const nPar = names.length;
  const sigmaAt = (s: number): number => summariseFisher(forecast.fisher.dataMatrix, forecast.fisher.priorMatrix, nPar, s).sigma[i];
  const t0 = forecast.onSourceS;
  const notes: string[] = [];
  const hasPrior = forecast.parameters.some((p) => p.priorSd !== undefined);
  if (hasPrior) notes.push("normal priors do not grow with time; they are kept fixed in the scaling");
  if (!(sigmaAt(MAX_SCALE) <= target.sigma)) {
    notes.push(`σ(${target.name}) cannot reach ${target.sigma} at any time with this coverage (the parameter is degenerate or limited by the priors)`);
    return { timeS: Infinity, scale: Infinity, notes };
  }
  let lo: number, hi: number;
  if (sigmaAt(1) > target.sigma) {
    lo = 1;
    hi = 2;
    while (sigmaAt(hi) > target.sigma) {
      lo = hi;
      hi *= 4;
    }
  } else {
    hi = 1;
    lo = 0.5;
    while (sigmaAt(lo) <= target.sigma && lo > MIN_SCALE) {
      hi = lo;
      lo /= 4;
    }
    if (lo <= MIN_SCALE) {
      notes.push(`σ(${target.name}) is below ${target.sigma} even at ${MIN_SCALE} of the simulated time (the priors alone reach it)`);
      return { timeS: 0, scale: 0, notes };
    }
  }
  // Bisection in log s to 1e-6 relative.
  for (let it = 0; it < 200 && hi / lo > 1 + 1e-6; it++) {
    const mid = Math.sqrt(lo * hi);
    if (sigmaAt(mid) > target.sigma) lo = mid;
    else hi = mid;
  }
  const scale = hi;
  const [h0, h1] = forecast.obs.hourAngleH;
  const trackH = h1 - h0;
  if (scale > 1) {
    notes.push(
      `assumes the hour-angle range [${h0}, ${h1}] h is observed ${Math.ceil(scale * (1 - 1e-5))} times (weights scaled by ${scale.toPrecision(3)}); a single longer track samples other hour angles, so its coverage and σ differ`,
    );
  } else {
    notes.push(
      `less than the simulated ${trackH.toPrecision(3)} h track: assumes the same uv coverage at lower sensitivity; a shorter track covers less Earth rotation, so the coverage itself changes and this time is likely optimistic`,
    );
  }
  return { timeS: scale * t0, scale, notes };
}
