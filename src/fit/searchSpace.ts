/**
 * The coordinates the optimisers move in. Axis ratio and shear come in polar pairs (q or γ,
 * with a position angle); near q = 1 or γ = 0 the angle is undefined and a polar search stalls
 * at the bound (a fit can then trade shear for ellipticity and stop there). The optimisers
 * therefore move in Cartesian components
 *   e₁ = ε cos 2φ,  e₂ = ε sin 2φ,   ε = (1 − q)/(1 + q) for an axis ratio, ε = γ for a shear,
 * with φ the position angle (180°-periodic), and every other coordinate as it is. The map is a
 * change of coordinates only: the objective (the log posterior of the model's own parameters)
 * is unchanged. Reference: common practice in lens modelling (ellipticity components), e.g.
 * Schneider, Ehlers & Falco 1992 §2.3 for the complex shear; no single source.
 */
import { DEG_TO_RAD, RAD_TO_DEG } from "../units.js";
import type { Box } from "./optimise.js";
import type { FitProblem } from "./problem.js";

interface PolarPair {
  /** Search-vector index of the magnitude (q or γ) and of the angle. */
  mag: number;
  angle: number;
  kind: "axis_ratio" | "shear";
  /** Allowed range of ε. */
  epsMin: number;
  epsMax: number;
}

export class SearchSpace {
  /** Box of the optimiser's coordinates. */
  readonly box: Box;
  private readonly pairs: PolarPair[];
  private readonly searchBox: Box;

  constructor(problem: FitProblem) {
    this.searchBox = problem.searchBox();
    const sb = this.searchBox;
    const periodicDims = new Set((sb.periodic ?? []).map((p) => p.dim));
    const pairs: PolarPair[] = [];
    const spec = problem.spec;
    const sIndexOf = new Map<number, number>();
    problem.searchIndex.forEach((fi, s) => sIndexOf.set(fi, s));
    // Pair each full-period position angle with its component's q or γ, both free.
    spec.free.forEach((f, fi) => {
      if (f.key !== "pa" || f.periodic !== 180) return;
      const a = sIndexOf.get(fi);
      if (a === undefined || !periodicDims.has(a)) return;
      const magKey = spec.free.findIndex((g) => g.role === f.role && g.component === f.component && (g.key === "q" || g.key === "gamma"));
      if (magKey < 0) return;
      const m = sIndexOf.get(magKey);
      if (m === undefined) return;
      const kind = spec.free[magKey].key === "q" ? "axis_ratio" : "shear";
      const lo = sb.lower[m];
      const hi = sb.upper[m];
      const eps = (v: number): number => (kind === "axis_ratio" ? (1 - v) / (1 + v) : v);
      const e1 = eps(lo);
      const e2 = eps(hi);
      pairs.push({ mag: m, angle: a, kind, epsMin: Math.max(0, Math.min(e1, e2)), epsMax: Math.max(e1, e2) });
    });
    this.pairs = pairs;
    const lower = Float64Array.from(sb.lower);
    const upper = Float64Array.from(sb.upper);
    const paired = new Set<number>();
    for (const p of pairs) {
      lower[p.mag] = -p.epsMax;
      upper[p.mag] = p.epsMax;
      lower[p.angle] = -p.epsMax;
      upper[p.angle] = p.epsMax;
      paired.add(p.angle);
    }
    this.box = { lower, upper, periodic: (sb.periodic ?? []).filter((p) => !paired.has(p.dim)) };
  }

  /** Optimiser coordinates → search vector (q/γ and pa). Returns false outside the prior's ε range. */
  toSearch(z: Float64Array, out: Float64Array): boolean {
    out.set(z);
    let inside = true;
    for (const p of this.pairs) {
      const e1 = z[p.mag];
      const e2 = z[p.angle];
      const eps = Math.hypot(e1, e2);
      if (eps < p.epsMin - 1e-12 || eps > p.epsMax + 1e-12) inside = false;
      out[p.mag] = p.kind === "axis_ratio" ? (1 - eps) / (1 + eps) : eps;
      let phi = 0.5 * Math.atan2(e2, e1) * RAD_TO_DEG;
      const lo = this.searchBox.lower[p.angle];
      phi = lo + ((((phi - lo) % 180) + 180) % 180);
      out[p.angle] = phi;
    }
    return inside;
  }

  /** Search vector → optimiser coordinates. */
  fromSearch(x: Float64Array): Float64Array {
    const z = Float64Array.from(x);
    for (const p of this.pairs) {
      const v = x[p.mag];
      const eps = p.kind === "axis_ratio" ? (1 - v) / (1 + v) : v;
      const twoPhi = 2 * x[p.angle] * DEG_TO_RAD;
      z[p.mag] = eps * Math.cos(twoPhi);
      z[p.angle] = eps * Math.sin(twoPhi);
    }
    return z;
  }

  /** Number of polar pairs mapped to components. */
  get pairCount(): number {
    return this.pairs.length;
  }
}
