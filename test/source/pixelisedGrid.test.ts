import { describe, expect, it } from "vitest";
import { MappingMatrix } from "../../src/source/mapping.js";
import { AdaptiveSourceMesh, DelaunayTriangulation, selectMeshPixels } from "../../src/source/mesh.js";
import { RegularSourceGrid } from "../../src/source/pixelGrid.js";
import { Rng } from "../../src/random.js";
import { expectAbs, expectRel } from "../helpers.js";

describe("RegularSourceGrid", () => {
  it("weightsAt reproduces any bilinear function a + bx + cy + dxy exactly (analytic; 1e-12 for round-off)", () => {
    const g = new RegularSourceGrid(49);
    expect(g.side).toBe(7);
    g.setBounds(-0.4, 0.6, -0.3, 0.2);
    const f = (x: number, y: number) => 0.3 + 1.7 * x - 2.1 * y + 0.9 * x * y;
    const s = new Float64Array(g.cellCount);
    for (let i = 0; i < g.cellCount; i++) s[i] = f(g.xArcsec[i], g.yArcsec[i]);
    const idx = new Int32Array(4);
    const w = new Float64Array(4);
    const rng = new Rng(3);
    for (let t = 0; t < 200; t++) {
      const x = -0.4 + rng.uniform();
      const y = -0.3 + 0.5 * rng.uniform();
      const m = g.weightsAt(x, y, idx, w);
      expect(m).toBe(4);
      let v = 0;
      let sw = 0;
      for (let k = 0; k < m; k++) {
        v += w[k] * s[idx[k]];
        sw += w[k];
      }
      expectAbs(sw, 1, 1e-12, "weights sum");
      expectAbs(v, f(x, y), 1e-12, `bilinear at (${x}, ${y})`);
    }
    // square cells over the longer side (1″), centred on the box: y spans −0.55 … 0.45
    expectAbs(g.dyArcsec, g.dxArcsec, 1e-15, "square cells");
    expectAbs(g.yMinArcsec, -0.55, 1e-8, "centred square");
    // beyond the box the interpolant fades linearly to zero over one cell (implicit zero nodes):
    // a constant 1 is worth 1 − t at t cells outside, and nothing beyond one cell
    const one = new Float64Array(g.cellCount).fill(1);
    for (const t of [0.25, 0.5, 0.9]) {
      const m = g.weightsAt(g.xMaxArcsec + t * g.dxArcsec, 0, idx, w);
      let v = 0;
      for (let k = 0; k < m; k++) v += w[k] * one[idx[k]];
      expectAbs(v, 1 - t, 1e-12, `fade at ${t} cells beyond +x`);
      const mc = g.weightsAt(g.xMinArcsec - t * g.dxArcsec, g.yMinArcsec - t * g.dyArcsec, idx, w);
      let vc = 0;
      for (let k = 0; k < mc; k++) vc += w[k];
      expectAbs(vc, (1 - t) * (1 - t), 1e-12, `fade at the corner, ${t} cells out`);
    }
    expect(g.weightsAt(g.xMaxArcsec + 1.01 * g.dxArcsec, 0, idx, w)).toBe(0);
    expect(g.weightsAt(0, g.yMinArcsec - 1.01 * g.dyArcsec, idx, w)).toBe(0);
  });

  it("integrationWeights equal the integral of the interpolant with its fade ring (midpoint rule, 1e-6)", () => {
    const g = new RegularSourceGrid(36);
    g.setBounds(0, 2, -1, 1);
    const s = new Float64Array(g.cellCount);
    for (let i = 0; i < g.cellCount; i++) s[i] = 1 + g.xArcsec[i] * g.yArcsec[i] + g.xArcsec[i];
    const a = new Float64Array(g.cellCount);
    g.integrationWeights(a);
    let integral = 0;
    for (let i = 0; i < g.cellCount; i++) integral += a[i] * s[i];
    // brute force: the midpoint rule over the box widened by one cell on every side (the
    // interpolant is piecewise bilinear, so 20 points per cell leave an error ≪ 1e-6)
    const idx = new Int32Array(4);
    const w = new Float64Array(4);
    const per = 20;
    const h = g.dxArcsec / per;
    const nx = (g.side + 1) * per;
    let brute = 0;
    for (let j = 0; j < nx; j++) {
      for (let i = 0; i < nx; i++) {
        const m = g.weightsAt(g.xMinArcsec - g.dxArcsec + (i + 0.5) * h, g.yMinArcsec - g.dyArcsec + (j + 0.5) * h, idx, w);
        for (let k = 0; k < m; k++) brute += w[k] * s[idx[k]] * h * h;
      }
    }
    expectRel(integral, brute, 1e-6, "∫ interpolant");
  });
});

describe("DelaunayTriangulation", () => {
  it("satisfies the empty-circumcircle property and Euler's count 2n − 2 − h (brute force, exact predicates on random points)", () => {
    const rng = new Rng(17);
    const n = 400;
    const x = new Float64Array(n);
    const y = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      x[i] = 0.05 + 0.9 * rng.uniform();
      y[i] = 0.05 + 0.9 * rng.uniform();
    }
    const d = new DelaunayTriangulation(n);
    expect(d.triangulate(x, y, n)).toBe(true);
    let real = 0;
    let violations = 0;
    for (let t = 0; t < d.nTri; t++) {
      const a = d.tv[3 * t];
      const b = d.tv[3 * t + 1];
      const c = d.tv[3 * t + 2];
      if (a >= n || b >= n || c >= n) continue;
      real++;
      // counter-clockwise
      const area2 = (x[b] - x[a]) * (y[c] - y[a]) - (y[b] - y[a]) * (x[c] - x[a]);
      if (!(area2 > 0)) violations++;
      // circumcentre and radius
      const dd = 2 * area2;
      const a2 = x[a] ** 2 + y[a] ** 2;
      const b2 = x[b] ** 2 + y[b] ** 2;
      const c2 = x[c] ** 2 + y[c] ** 2;
      const ux = (a2 * (y[b] - y[c]) + b2 * (y[c] - y[a]) + c2 * (y[a] - y[b])) / dd;
      const uy = (a2 * (x[c] - x[b]) + b2 * (x[a] - x[c]) + c2 * (x[b] - x[a])) / dd;
      const r2 = (x[a] - ux) ** 2 + (y[a] - uy) ** 2;
      for (let p = 0; p < n; p++) {
        if (p === a || p === b || p === c) continue;
        const dist2 = (x[p] - ux) ** 2 + (y[p] - uy) ** 2;
        if (dist2 < r2 * (1 - 1e-9)) violations++;
      }
    }
    expect(violations, "points strictly inside a circumcircle").toBe(0);
    // hull size by gift wrapping (brute force)
    let h = 0;
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < n; j++) {
        if (i === j) continue;
        let left = true;
        for (let k = 0; k < n && left; k++) {
          if (k === i || k === j) continue;
          if ((x[j] - x[i]) * (y[k] - y[i]) - (y[j] - y[i]) * (x[k] - x[i]) < 0) left = false;
        }
        if (left) h++;
      }
    }
    // Euler: a triangulation of n points with h on the hull has 2n − 2 − h triangles (analytic)
    expect(real).toBe(2 * n - 2 - h);
  });
});

describe("AdaptiveSourceMesh", () => {
  it("barycentric weightsAt reproduces linear functions exactly everywhere inside the box (analytic; 1e-12)", () => {
    const rng = new Rng(5);
    const n = 300;
    const x = new Float64Array(n);
    const y = new Float64Array(n);
    // clustered points, as a magnified source would give
    for (let i = 0; i < n; i++) {
      const r = 0.3 * Math.sqrt(rng.uniform()) * (i % 3 === 0 ? 1 : 0.3);
      const a = 2 * Math.PI * rng.uniform();
      x[i] = 0.1 + r * Math.cos(a);
      y[i] = -0.2 + r * Math.sin(a);
    }
    const mesh = new AdaptiveSourceMesh(n);
    mesh.build(x, y, n, -0.3, 0.45, -0.55, 0.15);
    expect(mesh.cellCount).toBe(n + 4);
    const f = (u: number, v: number) => 2 - 3 * u + 0.5 * v;
    const s = new Float64Array(mesh.cellCount);
    for (let i = 0; i < mesh.cellCount; i++) s[i] = f(mesh.xArcsec[i], mesh.yArcsec[i]);
    const idx = new Int32Array(3);
    const w = new Float64Array(3);
    for (let t = 0; t < 500; t++) {
      const u = -0.3 + 0.75 * rng.uniform();
      const v = -0.55 + 0.7 * rng.uniform();
      const m = mesh.weightsAt(u, v, idx, w);
      expect(m, `point (${u}, ${v}) inside the box must be inside the mesh`).toBe(3);
      let val = 0;
      for (let k = 0; k < 3; k++) val += w[k] * s[idx[k]];
      expectAbs(val, f(u, v), 1e-12, "linear interpolation");
    }
    // the hat functions integrate to the box area (analytic)
    const a = new Float64Array(mesh.cellCount);
    mesh.integrationWeights(a);
    let area = 0;
    for (let i = 0; i < mesh.cellCount; i++) area += a[i];
    expectRel(area, (mesh.xMaxArcsec - mesh.xMinArcsec) * (mesh.yMaxArcsec - mesh.yMinArcsec), 1e-12, "mesh area");
  });

  it("moveNodes keeps the triangles: the interpolant moves continuously, still reproduces linear functions, and refuses a turned-over triangle (analytic)", () => {
    const rng = new Rng(9);
    const n = 200;
    const x = new Float64Array(n);
    const y = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      x[i] = 0.05 + 0.9 * rng.uniform();
      y[i] = 0.05 + 0.9 * rng.uniform();
    }
    const mesh = new AdaptiveSourceMesh(n);
    mesh.build(x, y, n, 0, 1, 0, 1);
    const triangles = Array.from(mesh.triangulation.tv.subarray(0, 3 * mesh.triangulation.nTri));
    const value = (s: Float64Array, px: number, py: number): number => {
      const idx = new Int32Array(3);
      const w = new Float64Array(3);
      const m = mesh.weightsAt(px, py, idx, w);
      let v = 0;
      for (let k = 0; k < m; k++) v += w[k] * s[idx[k]];
      return v;
    };
    // node values of a fixed random source (indexed by node, so they move with the nodes)
    const s = Float64Array.from({ length: mesh.cellCount }, () => rng.uniform());
    const probe: Array<[number, number]> = Array.from({ length: 50 }, () => [0.1 + 0.8 * rng.uniform(), 0.1 + 0.8 * rng.uniform()]);
    const before = probe.map(([px, py]) => value(s, px, py));
    // a small smooth displacement: same triangles, and S at fixed points changes by O(displacement)
    const eps = 1e-7;
    const x2 = Float64Array.from(x, (v, i) => v + eps * Math.sin(3 * v + y[i]));
    const y2 = Float64Array.from(y, (v, i) => v + eps * Math.cos(2 * x[i] - v));
    expect(mesh.moveNodes(x2, y2, n, 0, 1, 0, 1)).toBe(true);
    expect(Array.from(mesh.triangulation.tv.subarray(0, 3 * mesh.triangulation.nTri))).toEqual(triangles);
    const after = probe.map(([px, py]) => value(s, px, py));
    // continuous: |ΔS| ≤ |∇S| · 1e-7 ≲ 1e-4 (node values within 1 over edges ≳ 1e-3 long), where a
    // re-triangulation would change S at a probe by O(0.1)
    for (let k = 0; k < probe.length; k++) expect(Math.abs(after[k] - before[k])).toBeLessThan(1e-2);
    // barycentric weights on the moved (no longer Delaunay-checked) triangles still reproduce linear functions
    const f = (u: number, v: number) => 1.5 + 2 * u - 0.7 * v;
    const lin = Float64Array.from({ length: mesh.cellCount }, (_, i) => f(mesh.xArcsec[i], mesh.yArcsec[i]));
    for (const [px, py] of probe) expectAbs(value(lin, px, py), f(px, py), 1e-12, "linear after moveNodes");
    // swapping two distant nodes turns triangles over: refused
    const x3 = Float64Array.from(x);
    const y3 = Float64Array.from(y);
    [x3[0], x3[1], y3[0], y3[1]] = [x[1], x[0], y[1], y[0]];
    const far = Math.hypot(x[0] - x[1], y[0] - y[1]) > 0.3;
    expect(far).toBe(true);
    expect(mesh.moveNodes(x3, y3, n, 0, 1, 0, 1)).toBe(false);
    // a different number of points: refused
    expect(mesh.moveNodes(x, y, n - 1, 0, 1, 0, 1)).toBe(false);
  });

  it("selectMeshPixels takes min(cells, masked) masked pixels evenly spaced in raster order (definition)", () => {
    const masked = Int32Array.from({ length: 1000 }, (_, i) => 3 * i);
    const sel = selectMeshPixels(masked, 250);
    expect(sel.length).toBe(250);
    expect(sel[1]).toBe(masked[4]);
    // 1447 masked pixels and 1000 cells: 1000 nodes, not all 1447 (a whole-number stride of 1 took them all)
    const many = Int32Array.from({ length: 1447 }, (_, i) => i);
    const picked = selectMeshPixels(many, 1000);
    expect(picked.length).toBe(1000);
    expect(new Set(picked).size).toBe(1000);
    expect(picked[999]).toBe(Math.floor((999 * 1447) / 1000));
    expect(selectMeshPixels(many, 5000).length).toBe(1447);
  });
});

describe("MappingMatrix", () => {
  it("rows hold Δ²/s² × Σ weights: a uniform source of 1 Jy/arcsec² gives Δ² × (fraction of sub-rays inside) per pixel (definition, CONVENTIONS.md)", () => {
    const g = new RegularSourceGrid(16);
    g.setBounds(0, 1, 0, 1);
    // 3 pixels × 4 sub-rays; pixel 1 has one ray outside the grid
    const bx = new Float64Array([0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 1.5, 0.9, 0.95, 0.05, 0.01]);
    const by = new Float64Array([0.1, 0.9, 0.5, 0.5, 0.5, 0.5, 0.5, 0.5, 0.1, 0.2, 0.3, 0.4]);
    const L = new MappingMatrix(3, 4, 4, g.cellCount);
    const area = 0.04;
    L.build(g, bx, by, 4, new Int32Array([0, 1, 2]), area);
    expect(L.raysOutside).toBe(1);
    const ones = new Float64Array(g.cellCount).fill(1);
    const out = new Float64Array(3);
    L.apply(ones, out);
    expectRel(out[0], area, 1e-12, "pixel 0");
    expectRel(out[1], 0.75 * area, 1e-12, "pixel 1 (3 of 4 rays inside)");
    expectRel(out[2], area, 1e-12, "pixel 2");
    // CSC agrees with CSR: ⟨v, L s⟩ = ⟨Lᵀ v, s⟩ (adjointness)
    const rng = new Rng(2);
    const s = Float64Array.from({ length: g.cellCount }, () => rng.normal());
    const v = Float64Array.from({ length: 3 }, () => rng.normal());
    L.apply(s, out);
    const lt = new Float64Array(g.cellCount);
    L.applyTranspose(v, lt);
    let a1 = 0;
    let a2 = 0;
    for (let r = 0; r < 3; r++) a1 += v[r] * out[r];
    for (let c = 0; c < g.cellCount; c++) a2 += lt[c] * s[c];
    expectRel(a1, a2, 1e-12, "⟨v, Ls⟩ = ⟨Lᵀv, s⟩");
  });
});
