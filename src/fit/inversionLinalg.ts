/**
 * Dense linear algebra of the source inversion, on row-major K × K Float64Arrays: Cholesky
 * factorisation in place, triangular solves, log-determinant, the inverse of the factor (for the
 * diagonal of the covariance), and preconditioned conjugate gradients for large K.
 *
 * Reference: Golub & Van Loan, Matrix Computations, 4th ed., §4.2 (Cholesky, the dot-product
 * "Cholesky–Crout" ordering used here suits row-major storage), §3.1 (triangular systems), §11.3
 * (conjugate gradients) — from memory.
 */

/**
 * A = L Lᵀ in place: the lower triangle of `a` (row-major k × k) is overwritten by L; the strict
 * upper triangle is left untouched. Returns false when A is not (numerically) positive definite.
 * Rows are formed two at a time so that each row j of L read in the inner loop serves two dot
 * products (half the memory traffic of the plain loop).
 */
export function choleskyInPlace(a: Float64Array, k: number): boolean {
  let i = 0;
  for (; i + 1 < k; i += 2) {
    const r0 = i * k;
    const r1 = r0 + k;
    for (let j = 0; j <= i; j++) {
      const rj = j * k;
      let s0 = a[r0 + j];
      let s1 = a[r1 + j];
      let t0 = 0;
      let t1 = 0;
      let m = 0;
      for (; m + 1 < j; m += 2) {
        const x0 = a[rj + m];
        const x1 = a[rj + m + 1];
        s0 -= a[r0 + m] * x0;
        s1 -= a[r1 + m] * x0;
        t0 -= a[r0 + m + 1] * x1;
        t1 -= a[r1 + m + 1] * x1;
      }
      if (m < j) {
        const x0 = a[rj + m];
        s0 -= a[r0 + m] * x0;
        s1 -= a[r1 + m] * x0;
      }
      s0 += t0;
      s1 += t1;
      if (j === i) {
        if (!(s0 > 0)) return false;
        const d = Math.sqrt(s0);
        a[r0 + i] = d;
        a[r1 + i] = s1 / d;
      } else {
        const d = a[rj + j];
        a[r0 + j] = s0 / d;
        a[r1 + j] = s1 / d;
      }
    }
    // the diagonal of row i + 1
    let s = a[r1 + i + 1];
    for (let m = 0; m <= i; m++) s -= a[r1 + m] * a[r1 + m];
    if (!(s > 0)) return false;
    a[r1 + i + 1] = Math.sqrt(s);
  }
  if (i < k) {
    const r0 = i * k;
    for (let j = 0; j <= i; j++) {
      const rj = j * k;
      let s = a[r0 + j];
      for (let m = 0; m < j; m++) s -= a[r0 + m] * a[rj + m];
      if (j === i) {
        if (!(s > 0)) return false;
        a[r0 + i] = Math.sqrt(s);
      } else {
        a[r0 + j] = s / a[rj + j];
      }
    }
  }
  return true;
}

/** x ← L⁻¹ x (forward substitution with the factor of choleskyInPlace). */
export function forwardSubstitute(l: Float64Array, k: number, x: Float64Array): void {
  for (let i = 0; i < k; i++) {
    const r = i * k;
    let s = x[i];
    for (let m = 0; m < i; m++) s -= l[r + m] * x[m];
    x[i] = s / l[r + i];
  }
}

/** x ← L⁻ᵀ x (back substitution by rows of L, which keeps the access contiguous). */
export function backSubstituteTransposed(l: Float64Array, k: number, x: Float64Array): void {
  for (let i = k - 1; i >= 0; i--) {
    const r = i * k;
    const xi = x[i] / l[r + i];
    x[i] = xi;
    for (let m = 0; m < i; m++) x[m] -= l[r + m] * xi;
  }
}

/** x ← A⁻¹ x with A = L Lᵀ. */
export function choleskySolve(l: Float64Array, k: number, x: Float64Array): void {
  forwardSubstitute(l, k, x);
  backSubstituteTransposed(l, k, x);
}

/** log det A = 2 Σ log L_ii. */
export function choleskyLogDet(l: Float64Array, k: number): number {
  let s = 0;
  for (let i = 0; i < k; i++) s += Math.log(l[i * k + i]);
  return 2 * s;
}

/**
 * Overwrite the lower triangle of L (from choleskyInPlace) by X = L⁻¹, row by row:
 * X_i· = −(1/L_ii) Σ_{m<i} L_im X_m· and X_ii = 1/L_ii (contiguous row combinations).
 * @param row scratch of length ≥ k
 */
export function invertLowerInPlace(l: Float64Array, k: number, row: Float64Array): void {
  for (let i = 0; i < k; i++) {
    const r = i * k;
    row.fill(0, 0, i);
    for (let m = 0; m < i; m++) {
      const c = l[r + m];
      if (c === 0) continue;
      const rm = m * k;
      for (let j = 0; j <= m; j++) row[j] += c * l[rm + j];
    }
    const inv = 1 / l[r + i];
    for (let j = 0; j < i; j++) l[r + j] = -row[j] * inv;
    l[r + i] = inv;
  }
}

/** out_i = Σ_{k ≥ i} X_ki²: the diagonal of (L Lᵀ)⁻¹ = Xᵀ X, X = L⁻¹ from invertLowerInPlace. */
export function inverseDiagonal(x: Float64Array, k: number, out: Float64Array): void {
  out.fill(0, 0, k);
  for (let r = 0; r < k; r++) {
    const o = r * k;
    for (let i = 0; i <= r; i++) out[i] += x[o + i] * x[o + i];
  }
}

/** out = A x for a full (both triangles stored) symmetric row-major k × k matrix. */
export function denseMatVec(a: Float64Array, k: number, x: Float64Array, out: Float64Array): void {
  for (let i = 0; i < k; i++) {
    const r = i * k;
    let s = 0;
    for (let j = 0; j < k; j++) s += a[r + j] * x[j];
    out[i] = s;
  }
}

/** Work vectors of conjugateGradient (4 × k). */
export class CgWorkspace {
  r = new Float64Array(0);
  z = new Float64Array(0);
  p = new Float64Array(0);
  q = new Float64Array(0);
  ensure(k: number): void {
    if (this.r.length >= k) return;
    this.r = new Float64Array(k);
    this.z = new Float64Array(k);
    this.p = new Float64Array(k);
    this.q = new Float64Array(k);
  }
}

/**
 * Solve A x = b (A symmetric positive definite, full storage) by conjugate gradients with the
 * Jacobi (diagonal) preconditioner, from x = 0, until ‖r‖ ≤ tolerance·‖b‖.
 * @returns iterations used (maxIterations + 1 if not converged).
 */
export function conjugateGradient(
  a: Float64Array,
  k: number,
  b: Float64Array,
  x: Float64Array,
  tolerance: number,
  maxIterations: number,
  ws: CgWorkspace,
): number {
  ws.ensure(k);
  const { r, z, p, q } = ws;
  let bNorm = 0;
  for (let i = 0; i < k; i++) {
    x[i] = 0;
    r[i] = b[i];
    bNorm += b[i] * b[i];
  }
  bNorm = Math.sqrt(bNorm);
  if (bNorm === 0) return 0;
  let rz = 0;
  for (let i = 0; i < k; i++) {
    z[i] = r[i] / a[i * k + i];
    p[i] = z[i];
    rz += r[i] * z[i];
  }
  for (let it = 1; it <= maxIterations; it++) {
    denseMatVec(a, k, p, q);
    let pq = 0;
    for (let i = 0; i < k; i++) pq += p[i] * q[i];
    const alpha = rz / pq;
    let rNorm = 0;
    for (let i = 0; i < k; i++) {
      x[i] += alpha * p[i];
      r[i] -= alpha * q[i];
      rNorm += r[i] * r[i];
    }
    if (Math.sqrt(rNorm) <= tolerance * bNorm) return it;
    let rzNew = 0;
    for (let i = 0; i < k; i++) {
      z[i] = r[i] / a[i * k + i];
      rzNew += r[i] * z[i];
    }
    const beta = rzNew / rz;
    rz = rzNew;
    for (let i = 0; i < k; i++) p[i] = z[i] + beta * p[i];
  }
  return maxIterations + 1;
}
