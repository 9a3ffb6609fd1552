/**
 * Piecewise-polynomial evaluation of the ES kernel for the NUFFT hot loops.
 *
 * A point at fine-grid coordinate X touches the `width` cells l0 … l0 + w − 1 (l0 = ⌈X − w/2⌉);
 * with the fraction s = l0 − (X − w/2) ∈ [0, 1) the weight of cell l0 + m is
 * φ(z_m), z_m = 1 − (s + m)/(w/2) (kernel.ts). Each of the w weights is a smooth function of s
 * on its own piece, so it is replaced by a polynomial fitted once per width, and all w weights
 * of a point cost a few Horner steps instead of w exponentials and square roots.
 *
 * The end pieces (m = 0 and m = w − 1) contain z = ±1, where √(1 − z²) has a square-root
 * branch point: a polynomial in s converges slowly there. In r = √s (piece 0) and r = √(1 − s)
 * (piece w − 1) the kernel is analytic again, since 1 − z² = (2s/w)(2 − 2s/w) on piece 0, so
 * those two pieces are polynomials in r instead (one square root each per point and axis).
 *
 * Each polynomial is Chebyshev interpolation on its piece, converted to monomials in y ∈ [−1, 1];
 * the degree is the smallest that brings the largest error over a dense check grid below
 * `fitTarget(width)` = max(10⁻³·10^(1−w), 10⁻¹⁴), i.e. a thousandth of the accuracy the width
 * is chosen for (kernel.ts rule: w = ⌈log10 1/ε⌉ + 1), floored near double-precision round-off.
 * Widths above POLY_MAX_WIDTH keep the exact kernel: there the floor would be a visible part of
 * the tolerance, and those widths are only used for one-off sums where speed matters less.
 *
 * Reference: Barnett, Magland & af Klinteberg 2019, SIAM J. Sci. Comput. 41(5), C479, §5
 * (piecewise-polynomial kernel evaluation by Horner's rule); Trefethen, Approximation Theory and
 * Approximation Practice (2013), ch. 4 and 8 (Chebyshev interpolation, analytic convergence).
 */
import { esKernel } from "./kernel.js";

/** Widest kernel evaluated by polynomials; wider ones use exp/sqrt (see module comment). */
export const POLY_MAX_WIDTH = 13;
/** Highest polynomial degree tried before giving up on a width (never reached for w ≤ 13). */
const MAX_DEGREE = 28;
/** Check points per piece for the fit error (including both ends). */
const CHECK_POINTS = 400;

/** The fitted pieces of one ES kernel width. */
export interface EsKernelPoly {
  /** Kernel support [fine cells], integer in [2, 16]. */
  width: number;
  /** Shape parameter β of the kernel fitted. */
  beta: number;
  /** False when the width is above POLY_MAX_WIDTH: evaluate φ exactly instead. */
  polynomial: boolean;
  /** Degree of the interior pieces 1 … w − 2 (polynomials in y = 2s − 1). */
  degreeInner: number;
  /** Degree of the two end pieces (polynomials in y = 2r − 1, r = √s or √(1 − s)). */
  degreeEdge: number;
  /**
   * Interior coefficients: piece m (1 … w − 2) has its degreeInner + 1 monomial coefficients,
   * highest degree first, at (m − 1)·(degreeInner + 1).
   */
  inner: Float64Array;
  /** End-piece coefficients, highest degree first: piece 0 at 0, piece w − 1 at degreeEdge + 1. */
  edge: Float64Array;
  /** Largest |polynomial − φ| found on the check grid (dimensionless; φ(0) = 1). */
  maxError: number;
}

/**
 * Accuracy the polynomial of a width is fitted to (dimensionless, absolute; φ ≤ 1).
 * @param width kernel support [fine cells].
 */
export function fitTarget(width: number): number {
  return Math.max(1e-3 * 10 ** (1 - width), 1e-14);
}

/** Which variable a piece is fitted in: y = 2s − 1, y = 2√s − 1 (piece 0), y = 2√(1 − s) − 1 (piece w − 1). */
type PieceVar = "linear" | "sqrtS" | "sqrtOneMinusS";

/** s of a piece variable y ∈ [−1, 1]. */
function sOfY(y: number, kind: PieceVar): number {
  const r = 0.5 * (y + 1);
  if (kind === "sqrtS") return r * r;
  if (kind === "sqrtOneMinusS") return 1 - r * r;
  return r;
}

/** y of a fraction s for a piece variable. */
function yOfS(s: number, kind: PieceVar): number {
  if (kind === "sqrtS") return 2 * Math.sqrt(s) - 1;
  if (kind === "sqrtOneMinusS") return 2 * Math.sqrt(1 - s) - 1;
  return 2 * s - 1;
}

/**
 * Monomial coefficients (highest first) of the degree-d Chebyshev interpolant of f on [−1, 1].
 * Reference: Trefethen 2013, ch. 3–4 (interpolation at Chebyshev points of the first kind).
 */
function chebyshevMonomials(f: (y: number) => number, d: number): Float64Array {
  const n = d + 1;
  const values = new Float64Array(n);
  for (let i = 0; i < n; i++) values[i] = f(Math.cos((Math.PI * (i + 0.5)) / n));
  const cheb = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    let s = 0;
    for (let i = 0; i < n; i++) s += values[i] * Math.cos((Math.PI * k * (i + 0.5)) / n);
    cheb[k] = ((k === 0 ? 1 : 2) * s) / n;
  }
  // Σ a_k T_k(y) in monomials, with T_{k+1} = 2y·T_k − T_{k−1}.
  const mono = new Float64Array(n);
  let tPrev = new Float64Array(n);
  let tCur = new Float64Array(n);
  tPrev[0] = 1;
  mono[0] += cheb[0];
  if (n > 1) {
    tCur[1] = 1;
    mono[1] += cheb[1];
  }
  for (let k = 2; k < n; k++) {
    const tNext = new Float64Array(n);
    for (let j = 0; j < n; j++) tNext[j] = (j > 0 ? 2 * tCur[j - 1] : 0) - tPrev[j];
    for (let j = 0; j < n; j++) mono[j] += cheb[k] * tNext[j];
    tPrev = tCur;
    tCur = tNext;
  }
  const out = new Float64Array(n);
  for (let j = 0; j < n; j++) out[j] = mono[d - j];
  return out;
}

/** Horner evaluation of coefficients c[off … off + d] (highest first) at y. */
function horner(c: Float64Array, off: number, d: number, y: number): number {
  let acc = c[off];
  for (let j = 1; j <= d; j++) acc = acc * y + c[off + j];
  return acc;
}

/**
 * Fit the pieces of a group (interior or ends) with the smallest common degree that meets the
 * target, returning the coefficients and the error reached.
 */
function fitPieces(
  width: number,
  beta: number,
  pieces: readonly number[],
  kinds: readonly PieceVar[],
  target: number,
): { degree: number; coef: Float64Array; error: number } {
  const half = width / 2;
  const exact = (s: number, m: number) => esKernel(1 - (s + m) / half, beta);
  // Exact values on the check grid, computed once for every degree tried.
  const checkS = new Float64Array(CHECK_POINTS + 1);
  for (let i = 0; i <= CHECK_POINTS; i++) checkS[i] = i / CHECK_POINTS;
  const ref = pieces.map((m) => Float64Array.from(checkS, (s) => exact(s, m)));
  let best = { degree: 0, coef: new Float64Array(0), error: Infinity };
  for (let d = 1; d <= MAX_DEGREE; d++) {
    const coef = new Float64Array(pieces.length * (d + 1));
    let error = 0;
    for (let p = 0; p < pieces.length; p++) {
      const m = pieces[p];
      const kind = kinds[p];
      coef.set(chebyshevMonomials((y) => exact(sOfY(y, kind), m), d), p * (d + 1));
      for (let i = 0; i <= CHECK_POINTS; i++) {
        const e = Math.abs(horner(coef, p * (d + 1), d, yOfS(checkS[i], kind)) - ref[p][i]);
        if (e > error) error = e;
      }
    }
    if (error < best.error) best = { degree: d, coef, error };
    if (error <= target) break;
  }
  return best;
}

/**
 * Fit (or, above POLY_MAX_WIDTH, describe as exact) the ES kernel of one width.
 * Costs a few milliseconds; a plan does it once.
 * @param width kernel support [fine cells], integer in [2, 16]; @param beta shape parameter.
 * Reference: Barnett et al. 2019 §5 (piecewise polynomial kernel); module comment.
 */
export function fitEsKernelPoly(width: number, beta: number): EsKernelPoly {
  if (width > POLY_MAX_WIDTH) {
    return { width, beta, polynomial: false, degreeInner: 0, degreeEdge: 0, inner: new Float64Array(0), edge: new Float64Array(0), maxError: 0 };
  }
  const target = fitTarget(width);
  const interior: number[] = [];
  for (let m = 1; m < width - 1; m++) interior.push(m);
  const inner = fitPieces(width, beta, interior, interior.map(() => "linear"), target);
  const edge = fitPieces(width, beta, [0, width - 1], ["sqrtS", "sqrtOneMinusS"], target);
  return {
    width,
    beta,
    polynomial: true,
    degreeInner: interior.length > 0 ? inner.degree : 0,
    degreeEdge: edge.degree,
    inner: inner.coef,
    edge: edge.coef,
    maxError: Math.max(interior.length > 0 ? inner.error : 0, edge.error),
  };
}

/**
 * The w kernel weights of one point along one axis.
 * @param s fraction l0 − (X − w/2) ∈ [0, 1) (dimensionless, fine cells).
 * @param out receives φ(z_m) for m = 0 … w − 1 at out[off + m].
 * Reference: module comment; Barnett et al. 2019 §5.
 */
export function esKernelWeights(k: EsKernelPoly, s: number, out: Float64Array | Float32Array, off: number): void {
  const w = k.width;
  if (!k.polynomial) {
    const zScale = 2 / w;
    for (let m = 0; m < w; m++) {
      const z = 1 - (s + m) * zScale;
      const q = 1 - z * z;
      out[off + m] = q > 0 ? Math.exp(k.beta * (Math.sqrt(q) - 1)) : 0;
    }
    return;
  }
  const de = k.degreeEdge;
  const ce = k.edge;
  const y0 = 2 * Math.sqrt(s) - 1;
  const y1 = 2 * Math.sqrt(1 - s) - 1;
  let a0 = ce[0];
  let a1 = ce[de + 1];
  for (let j = 1; j <= de; j++) {
    a0 = a0 * y0 + ce[j];
    a1 = a1 * y1 + ce[de + 1 + j];
  }
  out[off] = a0;
  out[off + w - 1] = a1;
  const di = k.degreeInner;
  const ci = k.inner;
  const y = 2 * s - 1;
  let c = 0;
  for (let m = 1; m < w - 1; m++) {
    let acc = ci[c++];
    for (let j = 1; j <= di; j++) acc = acc * y + ci[c++];
    out[off + m] = acc;
  }
}

/** Writes the w weights of fraction s to out[off … off + w − 1] (see esKernelWeights). */
export type KernelEvaluator = (s: number, out: Float64Array | Float32Array, off: number) => void;

/**
 * A kernel evaluator specialised to one fitted width: the Horner steps written out with the
 * coefficients as literals, so the hot loops run no inner loops and load no coefficient arrays
 * (about twice as fast as `esKernelWeights`, same results to the last bit, since the operations
 * and their order are identical). The source text holds only numbers printed with their
 * shortest round-trip representation, so the generated code is exactly the fitted polynomial.
 * Above POLY_MAX_WIDTH it returns a wrapper of `esKernelWeights` (exact kernel).
 * Reference: Barnett et al. 2019 §5 (generated Horner code per width).
 */
export function makeKernelEvaluator(k: EsKernelPoly): KernelEvaluator {
  if (!k.polynomial) return (s, out, off) => esKernelWeights(k, s, out, off);
  const w = k.width;
  const poly = (c: Float64Array, off: number, d: number, v: string): string => {
    let e = literal(c[off]);
    for (let j = 1; j <= d; j++) e = `(${e}) * ${v} + ${literal(c[off + j])}`;
    return e;
  };
  const lines = [
    '"use strict";',
    "const y0 = 2 * Math.sqrt(s) - 1;",
    "const y1 = 2 * Math.sqrt(1 - s) - 1;",
    "const y = 2 * s - 1;",
    `out[off] = ${poly(k.edge, 0, k.degreeEdge, "y0")};`,
  ];
  for (let m = 1; m < w - 1; m++) {
    lines.push(`out[off + ${m}] = ${poly(k.inner, (m - 1) * (k.degreeInner + 1), k.degreeInner, "y")};`);
  }
  lines.push(`out[off + ${w - 1}] = ${poly(k.edge, k.degreeEdge + 1, k.degreeEdge, "y1")};`);
  return new Function("s", "out", "off", lines.join("\n")) as KernelEvaluator;
}

/** A finite number as source text that parses back to the same double. */
function literal(x: number): string {
  if (!Number.isFinite(x)) throw new Error(`kernel polynomial: non-finite coefficient ${x}`);
  return `(${String(x)})`;
}
