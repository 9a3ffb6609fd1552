import { describe, expect, it } from "vitest";
import {
  DifferentialEvolution,
  globalOptimise,
  levenbergMarquardt,
  nelderMead,
  scalarToBatch,
  type Box,
} from "../../src/fit/optimise.js";
import { InputError } from "../../src/errors.js";
import { Rng } from "../../src/random.js";
import { expectAbs, expectRel } from "../helpers.js";

/** Rosenbrock's function Σ 100(x_{i+1} − x_i²)² + (1 − x_i)²; global minimum 0 at (1, …, 1) (analytic). */
function rosenbrock(x: Float64Array): number {
  let s = 0;
  for (let i = 0; i + 1 < x.length; i++) s += 100 * (x[i + 1] - x[i] * x[i]) ** 2 + (1 - x[i]) ** 2;
  return s;
}

const box = (lo: number[], hi: number[], periodic?: Box["periodic"]): Box => ({
  lower: Float64Array.from(lo),
  upper: Float64Array.from(hi),
  periodic,
});

describe("globalOptimise (differential evolution + Nelder–Mead polish)", () => {
  it("finds the Rosenbrock minimum (1, 1) in [−5, 5]² without a start point", async () => {
    // Analytic minimum (1, 1), value 0. The polish stops when the simplex is 1e-6 of its start
    // size (≲ 1e-6 here) and values agree to 1e-9; near the minimum f ≈ ‖Δx‖²·O(100), so x is
    // good to ~1e-5. Tolerance 1e-4.
    const r = await globalOptimise(scalarToBatch(rosenbrock), { box: box([-5, -5], [5, 5]) }, new Rng(1));
    expect(r.converged, r.reason).toBe(true);
    expectAbs(r.x[0], 1, 1e-4, "x");
    expectAbs(r.x[1], 1, 1e-4, "y");
    expect(r.value).toBeLessThan(1e-8);
  });

  it("finds the 4-D Rosenbrock global minimum, not the local one near (−1, 1, 1, 1)", async () => {
    // For n = 4 Rosenbrock has a second, local minimum near (−0.78, 0.61, 0.38, 0.15) with
    // f ≈ 3.70 (from memory); the local search below, started at (−1, 1, 1, 1), confirms it is a
    // trap. Two DE starts from independent streams; tolerance 1e-3 (4-D polish is looser).
    const local = await nelderMead(scalarToBatch(rosenbrock), new Float64Array([-1, 1, 1, 1]), { initialStep: new Float64Array([0.1, 0.1, 0.1, 0.1]) });
    expectAbs(local.value, 3.70, 0.01, "local-minimum value");
    const r = await globalOptimise(
      scalarToBatch(rosenbrock),
      { box: box([-3, -3, -3, -3], [3, 3, 3, 3]), nStarts: 2, maxGenerations: 400 },
      new Rng(2),
    );
    for (let i = 0; i < 4; i++) expectAbs(r.x[i], 1, 1e-3, `x[${i}]`);
    expect(r.starts.length).toBe(2);
  });

  it("wraps a periodic coordinate: a minimum at 179° is found and reported in [0°, 180°)", async () => {
    // f = (Δφ/10)² + (y − 2)² with Δφ the wrapped difference to 179° (period 180°). Half the
    // basin lies across the seam, near 0°; analytic minimum (179°, 2).
    const f = (x: Float64Array): number => {
      let d = x[0] - 179;
      d -= 180 * Math.round(d / 180);
      return (d / 10) ** 2 + (x[1] - 2) ** 2;
    };
    const r = await globalOptimise(scalarToBatch(f), { box: box([0, -5], [180, 5], [{ dim: 0, period: 180 }]) }, new Rng(3));
    expectAbs(r.x[0], 179, 1e-3, "φ [deg]");
    expectAbs(r.x[1], 2, 1e-4, "y");
    expect(r.x[0]).toBeGreaterThanOrEqual(0);
    expect(r.x[0]).toBeLessThan(180);
  });

  it("rejects a periodic coordinate whose box width differs from its period", () => {
    expect(() => new DifferentialEvolution({ box: box([0], [90], [{ dim: 0, period: 180 }]) }, scalarToBatch(() => 0), new Rng(1))).toThrow(InputError);
    expect(() => new DifferentialEvolution({ box: box([0], [90], [{ dim: 0, period: 180 }]) }, scalarToBatch(() => 0), new Rng(1))).toThrow(
      /periodic coordinate 0 has period 180 but box width 90; set upper = lower \+ period/,
    );
  });
});

describe("DifferentialEvolution state", () => {
  it("resumes exactly: 10 generations + JSON state + 10 more equals 20 in one go", async () => {
    // The checkpoint contract: bit-identical populations (no tolerance).
    const f = scalarToBatch(rosenbrock);
    const b = box([-5, -5, -5], [5, 5, 5]);
    const full = new DifferentialEvolution({ box: b, maxGenerations: 20 }, f, new Rng(9));
    const rf = await full.run();
    const first = new DifferentialEvolution({ box: b, maxGenerations: 10 }, f, new Rng(9));
    await first.run();
    const second = new DifferentialEvolution({ box: b, maxGenerations: 10 }, f, new Rng(77));
    second.setState(JSON.parse(JSON.stringify(first.getState())));
    const rs = await second.run();
    expect(rs.iterations).toBe(20);
    expect(rs.value).toBe(rf.value);
    expect(Array.from(rs.x)).toEqual(Array.from(rf.x));
    expect(second.population.map((p) => Array.from(p))).toEqual(full.population.map((p) => Array.from(p)));
  });

  it("stops after an evaluation budget with converged = false", async () => {
    const de = new DifferentialEvolution({ box: box([-5, -5], [5, 5]), populationSize: 20 }, scalarToBatch(rosenbrock), new Rng(4));
    const r = await de.run({ maxEvaluations: 100 });
    // 20 for the initial population, then whole generations of 20 while they fit in 100
    expect(r.nEvaluations).toBe(100);
    expect(r.converged).toBe(false);
    expect(r.reason).toBe("evaluation budget used");
  });
});

describe("nelderMead", () => {
  it("minimises a quadratic to its analytic minimum", async () => {
    // f = (x − 3)² + 10(y + 1)² + (x − 3)(y + 1), positive definite; minimum (3, −1) (analytic).
    // Stopping rule: simplex within 1e-6 of its 0.5 start size → x good to ~1e-6; tolerance 1e-5.
    const f = (x: Float64Array): number => (x[0] - 3) ** 2 + 10 * (x[1] + 1) ** 2 + (x[0] - 3) * (x[1] + 1);
    const r = await nelderMead(scalarToBatch(f), new Float64Array([0, 0]), { initialStep: new Float64Array([0.5, 0.5]) });
    expect(r.converged, r.reason).toBe(true);
    expectAbs(r.x[0], 3, 1e-5, "x");
    expectAbs(r.x[1], -1, 1e-5, "y");
  });

  it("crosses the seam of a periodic coordinate", async () => {
    // Minimum at φ = 2° (analytic), start at 170°: going up through 180° ≡ 0° is the short way
    // (12°); a clamped search would stop at the 180° edge, where f = 4.
    const f = (x: Float64Array): number => {
      let d = x[0] - 2;
      d -= 180 * Math.round(d / 180);
      return d * d;
    };
    const r = await nelderMead(scalarToBatch(f), new Float64Array([170]), {
      box: box([0], [180], [{ dim: 0, period: 180 }]),
      initialStep: new Float64Array([5]),
    });
    expectAbs(r.x[0], 2, 1e-4, "φ [deg]");
  });
});

describe("levenbergMarquardt", () => {
  it("recovers an exponential decay A e^{−t/τ} + c from exact data", async () => {
    // Exact data from A = 3, τ = 2.5, c = 0.5 (the analytic answer); with noiseless data the
    // residual can reach rounding level, so the parameters are checked to 1e-7 relative.
    const t = Float64Array.from({ length: 40 }, (_, i) => i * 0.25);
    const y = t.map((ti) => 3 * Math.exp(-ti / 2.5) + 0.5);
    const res = (p: Float64Array, out: Float64Array): void => {
      for (let i = 0; i < t.length; i++) out[i] = y[i] - (p[0] * Math.exp(-t[i] / p[1]) + p[2]);
    };
    const r = await levenbergMarquardt(res, new Float64Array([1, 1, 0]), { nResiduals: t.length });
    expect(r.converged, r.reason).toBe(true);
    expectRel(r.x[0], 3, 1e-7, "A");
    expectRel(r.x[1], 2.5, 1e-7, "τ");
    expectRel(r.x[2], 0.5, 1e-7, "c");
    expect(r.value).toBeLessThan(1e-18);
  });

  it("JᵀJ at the solution gives the textbook covariance of a straight-line fit", async () => {
    // y = a + b t with unit σ: covariance (JᵀJ)⁻¹ with JᵀJ = [[n, Σt], [Σt, Σt²]] (analytic,
    // linear least squares). Forward-difference Jacobian of a linear model is exact to
    // rounding (~1e-8 relative with √ε steps); tolerance 1e-6.
    const t = [0, 1, 2, 3, 4, 5];
    const y = [1.1, 2.9, 5.2, 7.1, 8.8, 11.2];
    const res = (p: Float64Array, out: Float64Array): void => {
      for (let i = 0; i < t.length; i++) out[i] = y[i] - (p[0] + p[1] * t[i]);
    };
    const r = await levenbergMarquardt(res, new Float64Array([0, 0]), { nResiduals: 6 });
    const st = t.reduce((a, b) => a + b, 0);
    const st2 = t.reduce((a, b) => a + b * b, 0);
    expectRel(r.jtj[0], 6, 1e-6, "JᵀJ[0][0]");
    expectRel(r.jtj[1], st, 1e-6, "JᵀJ[0][1]");
    expectRel(r.jtj[3], st2, 1e-6, "JᵀJ[1][1]");
    // ordinary least-squares slope Σ(t − t̄)(y − ȳ)/Σ(t − t̄)² (analytic)
    const tb = st / 6;
    const yb = y.reduce((a, b) => a + b, 0) / 6;
    let num = 0;
    let den = 0;
    for (let i = 0; i < 6; i++) {
      num += (t[i] - tb) * (y[i] - yb);
      den += (t[i] - tb) ** 2;
    }
    expectRel(r.x[1], num / den, 1e-8, "slope");
  });

  it("respects a bound by clamping: the constrained optimum sits on the bound", async () => {
    // Data y = 2t, model y = a t with a ∈ [0, 1]: the unconstrained optimum a = 2 is outside, so
    // the constrained minimum is a = 1 exactly (the cost is monotone in a on [0, 1]; analytic).
    const t = [1, 2, 3];
    const res = (p: Float64Array, out: Float64Array): void => {
      for (let i = 0; i < 3; i++) out[i] = 2 * t[i] - p[0] * t[i];
    };
    const r = await levenbergMarquardt(res, new Float64Array([0.2]), { nResiduals: 3, box: box([0], [1]) });
    expect(r.x[0]).toBe(1);
    expectAbs(r.value, 14, 1e-12, "Σr² = Σ t² at a = 1");
  });
});
