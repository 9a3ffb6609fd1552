/**
 * Per-call cost of the parameter-vector maps the search calls once per likelihood evaluation:
 * toNumbers (vector → numbers-only model), logPrior and priorTransform, on a 16-parameter
 * EPL + shear + two-Gaussian model with ties and all three prior kinds.
 */
import { initialVector, logPrior, parseModel, priorTransform, toNumbers } from "../src/model/index.js";
import { Rng } from "../src/random.js";
import type { BenchResult } from "./types.js";

const MODEL = {
  lens: [
    { type: "epl", theta_E: { init: 1.1, prior: { normal: [1.1, 0.2] }, min: 0.5, max: 2 }, slope: { init: 2, prior: { normal: [2, 0.15] } },
      q: { init: 0.8, min: 0.4, max: 1 }, pa: { init: 120, min: 0, max: 180 }, x: { init: 0, min: -0.2, max: 0.2 }, y: { init: 0, min: -0.2, max: 0.2 } },
    { type: "shear", gamma: { init: 0.03, min: 0, max: 0.15 }, pa: { init: 10, min: 0, max: 180 } },
  ],
  source: [
    { type: "gaussian", flux: { init: 0.004, min: 0, max: 0.1 }, sigma: { init: 0.03, prior: { loguniform: [0.005, 0.3] } },
      q: { init: 0.9, min: 0.3, max: 1 }, pa: { init: 30, min: 0, max: 180 }, x: { init: 0.08, min: -0.4, max: 0.4 }, y: { init: 0.02, min: -0.4, max: 0.4 } },
    { type: "gaussian", flux: { init: 0.01, min: 0, max: 0.2 }, sigma: { init: 0.2, prior: { loguniform: [0.02, 1] } },
      q: 1, pa: 0, x: { same_as: "source[0].x" }, y: { same_as: "source[0].y" } },
  ],
};

function perCallNs(n: number, body: (i: number) => void): number {
  for (let i = 0; i < Math.min(n, 2000); i++) body(i); // warm-up
  const t0 = process.hrtime.bigint();
  for (let i = 0; i < n; i++) body(i);
  return Number(process.hrtime.bigint() - t0) / n;
}

export async function run(): Promise<BenchResult[]> {
  const spec = parseModel(MODEL, "bench");
  const nFree = spec.free.length;
  const v = initialVector(spec);
  const rng = new Rng(1);
  const cubes = Array.from({ length: 64 }, () => Float64Array.from({ length: nFree }, () => rng.uniform()));
  const out = new Float64Array(nFree);
  let sink = 0;
  const n = 200_000;
  const tNumbers = perCallNs(n, () => { sink += toNumbers(spec, v).lens.length; });
  const tPrior = perCallNs(n, () => { sink += logPrior(spec, v); });
  const tTransform = perCallNs(n, (i) => { priorTransform(spec, cubes[i & 63], out); sink += out[0]; });
  if (Number.isNaN(sink)) throw new Error("bench/model: NaN sink");
  const params = { n_free: nFree, calls: n };
  return [
    { name: "model.toNumbers", value: tNumbers, unit: "ns/call", params },
    { name: "model.logPrior", value: tPrior, unit: "ns/call", params },
    { name: "model.priorTransform", value: tTransform, unit: "ns/call", params },
  ];
}
