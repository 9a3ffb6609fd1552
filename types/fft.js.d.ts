// Minimal typings for fft.js (radix-4 complex FFT; interleaved re/im arrays).
declare module "fft.js" {
  export default class FFT {
    constructor(size: number);
    readonly size: number;
    createComplexArray(): number[];
    toComplexArray(input: ArrayLike<number>, storage?: number[]): number[];
    fromComplexArray(complex: ArrayLike<number>, storage?: number[]): number[];
    /** Forward transform, sign e^{-2πi jk/N}; `out` and `data` interleaved re/im, length 2N. */
    transform(out: ArrayLike<number> & { [i: number]: number }, data: ArrayLike<number>): void;
    realTransform(out: ArrayLike<number> & { [i: number]: number }, data: ArrayLike<number>): void;
    completeSpectrum(spectrum: ArrayLike<number> & { [i: number]: number }): void;
    /** Inverse transform, sign e^{+2πi jk/N}, scaled by 1/N. */
    inverseTransform(out: ArrayLike<number> & { [i: number]: number }, data: ArrayLike<number>): void;
  }
}
