import { describe, expect, it } from "vitest";
import { esKernel, esKernelForTolerance, esKernelForWidth, esKernelFourier, gaussLegendre } from "../../src/fourier/kernel.js";
import { InputError } from "../../src/errors.js";
import { expectAbs, expectRel } from "../helpers.js";

describe("esKernel", () => {
  it("matches the REFERENCES.md §9 check values at β = 16.1", () => {
    // φ(0) = 1, φ(1) = e^{−β} = 1.0182604e-7, φ(0.5) = 0.11567266 (REFERENCES.md §9, computed);
    // the table gives 8 significant digits → rtol 1e-7.
    expectRel(esKernel(0, 16.1), 1, 1e-15, "φ(0)");
    expectRel(esKernel(1, 16.1), 1.0182604e-7, 1e-7, "φ(1)");
    expectRel(esKernel(0.5, 16.1), 0.11567266, 1e-7, "φ(0.5)");
    expect(esKernel(1.0001, 16.1)).toBe(0);
  });

  it("esKernelForTolerance follows w = ceil(log10 1/ε) + 1, β = 2.30 w", () => {
    // Rule of Barnett et al. 2019 §3 (REFERENCES.md §9, from memory there).
    expect(esKernelForTolerance(1e-6)).toEqual({ width: 7, beta: 2.3 * 7 });
    expect(esKernelForTolerance(1e-3).width).toBe(4);
    expect(esKernelForTolerance(3e-7).width).toBe(8);
    expect(esKernelForTolerance(1e-12).width).toBe(13);
    expect(() => esKernelForTolerance(0)).toThrow(/tolerance: got 0; it must lie in/);
    expect(() => esKernelForWidth(17)).toThrow(InputError);
  });
});

describe("gaussLegendre", () => {
  it("integrates polynomials of degree 2n − 1 exactly on [−1, 1]", () => {
    // ∫_{−1}^{1} x^k dx = 2/(k+1) for even k, 0 for odd k (analytic); round-off level → 1e-14.
    const rule = gaussLegendre(10);
    for (let k = 0; k <= 19; k++) {
      let s = 0;
      for (let i = 0; i < 10; i++) s += rule.weights[i] * rule.nodes[i] ** k;
      expectAbs(s, k % 2 === 0 ? 2 / (k + 1) : 0, 1e-14, `∫x^${k}`);
    }
  });
});

describe("esKernelFourier", () => {
  it("gives 2 sin k / k for β = 0 (φ = 1 on [−1, 1])", () => {
    // Analytic: ∫_{−1}^{1} cos(kz) dz = 2 sin(k)/k. Smooth integrand → quadrature exact to round-off.
    const ks = [0.001, 0.5, 3, 10];
    const out = new Float64Array(ks.length);
    esKernelFourier(ks, 0, out);
    ks.forEach((k, i) => expectRel(out[i], (2 * Math.sin(k)) / k, 1e-13, `Φ(${k})`));
  });

  it("agrees with a brute-force midpoint sum at β = 16.1", () => {
    // Independent reference: midpoint rule with 2·10⁶ cells; its error ~ 1e-12 relative
    // (O(h²) away from the kink at |z| = 1, where φ ≈ 1e-7) → rtol 1e-9.
    const beta = 16.1;
    const ks = [0, 1.3, 4.2];
    const out = new Float64Array(ks.length);
    esKernelFourier(ks, beta, out);
    const cells = 2_000_000;
    for (let i = 0; i < ks.length; i++) {
      let s = 0;
      for (let c = 0; c < cells; c++) {
        const z = -1 + (2 * (c + 0.5)) / cells;
        s += esKernel(z, beta) * Math.cos(ks[i] * z);
      }
      expectRel(out[i], (s * 2) / cells, 1e-9, `Φ(${ks[i]})`);
    }
  });
});
