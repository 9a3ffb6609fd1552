/**
 * Non-negative least squares, min ‖A x − b‖² subject to x ≥ 0, by the Lawson–Hanson
 * active-set method, working on the normal equations (G = AᵀA, c = Aᵀb). The fitter already
 * holds G and c from gridded statistics, so that is the main entry point; the (A, b) form
 * builds them and calls it (squaring the condition number — fine for the small, well-scaled
 * systems met here, not for ill-conditioned A).
 *
 * Optimality (Karush–Kuhn–Tucker): with the dual w = c − G x (half the negative gradient),
 * x ≥ 0, w ≤ 0, and w_i = 0 wherever x_i > 0.
 *
 * Reference: Lawson & Hanson 1974, Solving Least Squares Problems, ch. 23 (algorithm NNLS).
 */
import { InputError } from "../errors.js";

export interface NnlsOptions {
  /** Maximum number of passive-set changes (default 3·n + 10). */
  maxIterations?: number;
  /** Relative tolerance on the dual w for optimality (default 1e-12·scale; see code). */
  relTolerance?: number;
}

export interface NnlsResult {
  /** Solution, length n, every entry ≥ 0. */
  x: Float64Array;
  /** Dual vector w = Aᵀb − AᵀA x (≤ 0 on the zero set at the optimum). */
  dual: Float64Array;
  /** ‖A x − b‖² when it can be computed (needs bᵀb in the normal form), else NaN. */
  residualSq: number;
  iterations: number;
  converged: boolean;
  /** Why the iteration stopped. */
  reason: string;
}

/**
 * NNLS from the normal equations.
 * @param ata AᵀA, n × n row-major, symmetric positive semi-definite
 * @param atb Aᵀb, length n
 * @param btb optional bᵀb, to report ‖A x − b‖²
 * Reference: Lawson & Hanson 1974, ch. 23.
 */
export function nnlsNormal(ata: Float64Array, atb: Float64Array, btb?: number, options: NnlsOptions = {}): NnlsResult {
  const n = atb.length;
  if (ata.length !== n * n) throw new InputError(`nnls: normal matrix has ${ata.length} entries; expected n² = ${n * n} for n = ${n}`);
  for (let i = 0; i < n * n; i++) if (!Number.isFinite(ata[i])) throw new InputError(`nnls: normal matrix entry ${i} is ${ata[i]}; must be finite`);
  for (let i = 0; i < n; i++) if (!Number.isFinite(atb[i])) throw new InputError(`nnls: right-hand side entry ${i} is ${atb[i]}; must be finite`);
  const maxIter = options.maxIterations ?? 3 * n + 10;
  const relTol = options.relTolerance ?? 1e-12;

  const x = new Float64Array(n);
  const s = new Float64Array(n);
  const w = new Float64Array(n);
  const passive = new Uint8Array(n);
  const blocked = new Uint8Array(n);
  const idx = new Int32Array(n);
  const sub = new Float64Array(n * n);
  const rhs = new Float64Array(n);

  let scale = 0;
  for (let i = 0; i < n; i++) scale = Math.max(scale, Math.abs(atb[i]), Math.abs(ata[i * n + i]));
  const dualTol = relTol * Math.max(scale, Number.MIN_VALUE) * Math.max(n, 1);

  let iterations = 0;
  let converged = false;
  let reason = "";
  dual(ata, atb, x, w, n);
  for (;;) {
    // choose the most positive dual among the zero set
    let j = -1;
    let wmax = 0;
    let xmax = 0;
    for (let i = 0; i < n; i++) xmax = Math.max(xmax, x[i]);
    const tol = dualTol * Math.max(1, xmax);
    for (let i = 0; i < n; i++) {
      if (!passive[i] && !blocked[i] && w[i] > tol && w[i] > wmax) {
        wmax = w[i];
        j = i;
      }
    }
    if (j < 0) {
      converged = true;
      reason = "KKT conditions met";
      break;
    }
    if (iterations >= maxIter) {
      reason = `stopped after ${maxIter} iterations`;
      break;
    }
    iterations++;
    passive[j] = 1;
    let first = true;
    for (;;) {
      const np = solvePassive(ata, atb, passive, idx, sub, rhs, s, n);
      let allPositive = true;
      for (let k = 0; k < np; k++) if (!(s[idx[k]] > 0)) allPositive = false;
      if (allPositive) {
        x.set(s);
        blocked.fill(0);
        break;
      }
      if (first && !(s[j] > 0)) {
        // Rounding made the new index's solution non-positive: undo, and do not pick it again
        // until x changes (Lawson & Hanson's safeguard against cycling).
        passive[j] = 0;
        blocked[j] = 1;
        break;
      }
      first = false;
      // step from x toward s until the first passive entry hits zero
      let alpha = Infinity;
      let iMin = -1;
      for (let k = 0; k < np; k++) {
        const i = idx[k];
        if (!(s[i] > 0)) {
          const a = x[i] / (x[i] - s[i]);
          if (a < alpha) {
            alpha = a;
            iMin = i;
          }
        }
      }
      for (let k = 0; k < np; k++) {
        const i = idx[k];
        x[i] += alpha * (s[i] - x[i]);
      }
      // the entry that set alpha is exactly zero (rounding may leave ±1 ulp); it and any
      // others that reached zero leave the passive set, so every pass makes progress
      x[iMin] = 0;
      for (let k = 0; k < np; k++) {
        const i = idx[k];
        if (x[i] <= 0) {
          x[i] = 0;
          passive[i] = 0;
        }
      }
      iterations++;
      if (iterations >= maxIter) break;
    }
    dual(ata, atb, x, w, n);
  }
  let residualSq = NaN;
  if (btb !== undefined) {
    // ‖Ax − b‖² = bᵀb − 2 xᵀc + xᵀ G x
    let xc = 0;
    let xgx = 0;
    for (let i = 0; i < n; i++) {
      xc += x[i] * atb[i];
      let gi = 0;
      for (let k = 0; k < n; k++) gi += ata[i * n + k] * x[k];
      xgx += x[i] * gi;
    }
    residualSq = Math.max(btb - 2 * xc + xgx, 0);
  }
  return { x, dual: w, residualSq, iterations, converged, reason };
}

/**
 * NNLS from the design matrix.
 * @param a m × n row-major
 * @param b length m
 */
export function nnls(a: Float64Array, m: number, n: number, b: Float64Array, options: NnlsOptions = {}): NnlsResult {
  if (a.length !== m * n || b.length !== m) {
    throw new InputError(`nnls: A has ${a.length} entries and b ${b.length}; expected m·n = ${m * n} and m = ${m}`);
  }
  const ata = new Float64Array(n * n);
  const atb = new Float64Array(n);
  let btb = 0;
  for (let r = 0; r < m; r++) {
    const br = b[r];
    btb += br * br;
    for (let i = 0; i < n; i++) {
      const ai = a[r * n + i];
      atb[i] += ai * br;
      for (let k = i; k < n; k++) ata[i * n + k] += ai * a[r * n + k];
    }
  }
  for (let i = 0; i < n; i++) for (let k = 0; k < i; k++) ata[i * n + k] = ata[k * n + i];
  const res = nnlsNormal(ata, atb, btb, options);
  // recompute the residual directly (more accurate than the expanded form)
  let r2 = 0;
  for (let r = 0; r < m; r++) {
    let v = -b[r];
    for (let i = 0; i < n; i++) v += a[r * n + i] * res.x[i];
    r2 += v * v;
  }
  res.residualSq = r2;
  return res;
}

function dual(ata: Float64Array, atb: Float64Array, x: Float64Array, w: Float64Array, n: number): void {
  for (let i = 0; i < n; i++) {
    let g = atb[i];
    for (let k = 0; k < n; k++) g -= ata[i * n + k] * x[k];
    w[i] = g;
  }
}

/**
 * Solve G[P,P] s_P = c[P] by Cholesky; s = 0 off P. Returns |P| (indices in idx[0..|P|)).
 * A tiny diagonal jitter rescues a semi-definite block (collinear columns).
 */
function solvePassive(
  g: Float64Array,
  c: Float64Array,
  passive: Uint8Array,
  idx: Int32Array,
  l: Float64Array,
  y: Float64Array,
  s: Float64Array,
  n: number,
): number {
  let np = 0;
  for (let i = 0; i < n; i++) if (passive[i]) idx[np++] = i;
  s.fill(0);
  let jitter = 0;
  for (let attempt = 0; attempt < 4; attempt++) {
    if (choleskyInPlace(g, idx, np, l, n, jitter)) {
      for (let a = 0; a < np; a++) y[a] = c[idx[a]];
      choleskySolve(l, np, y);
      for (let a = 0; a < np; a++) s[idx[a]] = y[a];
      return np;
    }
    let tr = 0;
    for (let a = 0; a < np; a++) tr += g[idx[a] * n + idx[a]];
    jitter = jitter === 0 ? 1e-13 * (tr / np) : jitter * 1000;
  }
  throw new Error("nnls: passive-set normal matrix is not positive definite even with jitter (is AᵀA symmetric PSD?)");
}

/** Lower Cholesky factor of G[idx, idx] + jitter·I into l (np × np, stride np); false if not PD. */
function choleskyInPlace(g: Float64Array, idx: Int32Array, np: number, l: Float64Array, n: number, jitter: number): boolean {
  for (let a = 0; a < np; a++) {
    for (let b = 0; b <= a; b++) {
      let sum = g[idx[a] * n + idx[b]] + (a === b ? jitter : 0);
      for (let k = 0; k < b; k++) sum -= l[a * np + k] * l[b * np + k];
      if (a === b) {
        if (!(sum > 0)) return false;
        l[a * np + a] = Math.sqrt(sum);
      } else l[a * np + b] = sum / l[b * np + b];
    }
  }
  return true;
}

function choleskySolve(l: Float64Array, np: number, y: Float64Array): void {
  for (let a = 0; a < np; a++) {
    let v = y[a];
    for (let k = 0; k < a; k++) v -= l[a * np + k] * y[k];
    y[a] = v / l[a * np + a];
  }
  for (let a = np - 1; a >= 0; a--) {
    let v = y[a];
    for (let k = a + 1; k < np; k++) v -= l[k * np + a] * y[k];
    y[a] = v / l[a * np + a];
  }
}
