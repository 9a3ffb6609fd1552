/**
 * The reference direct transform between a model grid and sampled visibilities, O(N²·M):
 * slow and obviously right, the yardstick for the NUFFT in the tests.
 *
 * Grid convention (CONVENTIONS.md "Model grids"): nx × ny pixels of cell Δ [rad], column i at
 * x_i = (nx/2 − i)·Δ (East), row j at y_j = (j − ny/2)·Δ (North), pixel p = j·nx + i.
 * Forward:  M_k = Σ_p J_p e^{−2πi(u_k x_p + v_k y_p)}  (CONVENTIONS.md measurement equation).
 * Adjoint:  a_p = Σ_k c_k e^{+2πi(u_k x_p + v_k y_p)}.
 *
 * Reference: Thompson, Moran & Swenson 2017, eq. 3.7 (without the w-term); REFERENCES.md §5.
 */
import { pixelWindow } from "./window.js";

/** Geometry of a model grid. */
export interface GridGeometry {
  /** Pixels along x (columns, East → West); even. */
  nx: number;
  /** Pixels along y (rows, South → North); even. */
  ny: number;
  /** Cell size Δ [rad]. */
  cellRad: number;
}

/**
 * Direct forward transform M_k = Σ_p J_p e^{−2πi(u_k x_p + v_k y_p)}.
 * @param image J [Jy/pixel], row-major nx·ny.
 * @param uLambda, vLambda baseline coordinates [wavelengths].
 * @param outRe, outIm receive Re and Im of M_k [Jy] (or of M_k/h_k if `divideByWindow`).
 * @param divideByWindow divide by the pixel window h_k = sinc(u_kΔ)·sinc(v_kΔ), giving the model
 *   visibility of a pixel-mean image (CONVENTIONS.md).
 */
export function directForward(
  geometry: GridGeometry,
  image: Float64Array,
  uLambda: Float64Array,
  vLambda: Float64Array,
  outRe: Float64Array,
  outIm: Float64Array,
  divideByWindow = false,
): void {
  const { nx, ny, cellRad } = geometry;
  // Per-axis phase factors e^{−2πi u x_i} and e^{−2πi v y_j}: the sum factorises per row.
  const exRe = new Float64Array(nx);
  const exIm = new Float64Array(nx);
  const eyRe = new Float64Array(ny);
  const eyIm = new Float64Array(ny);
  for (let k = 0; k < uLambda.length; k++) {
    const u = uLambda[k];
    const v = vLambda[k];
    for (let i = 0; i < nx; i++) {
      const ph = -2 * Math.PI * u * (nx / 2 - i) * cellRad;
      exRe[i] = Math.cos(ph);
      exIm[i] = Math.sin(ph);
    }
    for (let j = 0; j < ny; j++) {
      const ph = -2 * Math.PI * v * (j - ny / 2) * cellRad;
      eyRe[j] = Math.cos(ph);
      eyIm[j] = Math.sin(ph);
    }
    let sRe = 0;
    let sIm = 0;
    for (let j = 0; j < ny; j++) {
      let rRe = 0;
      let rIm = 0;
      const row = j * nx;
      for (let i = 0; i < nx; i++) {
        const J = image[row + i];
        rRe += J * exRe[i];
        rIm += J * exIm[i];
      }
      sRe += rRe * eyRe[j] - rIm * eyIm[j];
      sIm += rRe * eyIm[j] + rIm * eyRe[j];
    }
    const scale = divideByWindow ? 1 / pixelWindow(u, v, cellRad) : 1;
    outRe[k] = sRe * scale;
    outIm[k] = sIm * scale;
  }
}

/**
 * Direct adjoint a_p = Σ_k c_k e^{+2πi(u_k x_p + v_k y_p)}, complex.
 * Its real part is the exact adjoint of `directForward` (real image → complex visibilities)
 * under the real inner product ⟨a, b⟩ = Σ Re(a* b).
 * @param re, im c_k [Jy or any unit]; `im` may be null for real c_k.
 * @param outRe, outIm receive Re and Im of a_p (outIm may be null), row-major nx·ny.
 */
export function directAdjoint(
  geometry: GridGeometry,
  uLambda: Float64Array,
  vLambda: Float64Array,
  re: Float64Array,
  im: Float64Array | null,
  outRe: Float64Array,
  outIm: Float64Array | null = null,
): void {
  const { nx, ny, cellRad } = geometry;
  outRe.fill(0, 0, nx * ny);
  if (outIm) outIm.fill(0, 0, nx * ny);
  const exRe = new Float64Array(nx);
  const exIm = new Float64Array(nx);
  for (let k = 0; k < uLambda.length; k++) {
    const u = uLambda[k];
    const v = vLambda[k];
    const cRe = re[k];
    const cIm = im ? im[k] : 0;
    for (let i = 0; i < nx; i++) {
      const ph = 2 * Math.PI * u * (nx / 2 - i) * cellRad;
      exRe[i] = Math.cos(ph);
      exIm[i] = Math.sin(ph);
    }
    for (let j = 0; j < ny; j++) {
      const ph = 2 * Math.PI * v * (j - ny / 2) * cellRad;
      // c_k · e^{+2πi v y_j}, then times e^{+2πi u x_i} per column.
      const ey = Math.cos(ph);
      const eyi = Math.sin(ph);
      const aRe = cRe * ey - cIm * eyi;
      const aIm = cRe * eyi + cIm * ey;
      const row = j * nx;
      for (let i = 0; i < nx; i++) {
        outRe[row + i] += aRe * exRe[i] - aIm * exIm[i];
        if (outIm) outIm[row + i] += aRe * exIm[i] + aIm * exRe[i];
      }
    }
  }
}
