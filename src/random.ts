/**
 * Seeded pseudo-random numbers: xoshiro128** (Blackman & Vigna 2018) seeded by splitmix32,
 * with Box–Muller normals. Every stochastic step of the program takes an Rng so that a run
 * with the same seed is reproducible. Not for cryptography.
 */
/**
 * Complete generator state as a plain JSON-able object, for checkpoints: restoring it with
 * `Rng.setState` continues the exact same stream. `spareNormal` is null when no Box–Muller
 * value is cached (NaN does not survive JSON).
 */
export interface RngState {
  s: [number, number, number, number];
  spareNormal: number | null;
}

export class Rng {
  private s0: number;
  private s1: number;
  private s2: number;
  private s3: number;
  private spareNormal = NaN;

  constructor(seed: number) {
    let x = (seed >>> 0) ^ 0x9e3779b9;
    const next = (): number => {
      // splitmix32
      x = (x + 0x9e3779b9) | 0;
      let z = x;
      z = Math.imul(z ^ (z >>> 16), 0x85ebca6b);
      z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35);
      return (z ^ (z >>> 16)) >>> 0;
    };
    this.s0 = next();
    this.s1 = next();
    this.s2 = next();
    this.s3 = next();
  }

  /** Snapshot of the generator state (plain data; safe to JSON.stringify). */
  getState(): RngState {
    return {
      s: [this.s0 >>> 0, this.s1 >>> 0, this.s2 >>> 0, this.s3 >>> 0],
      spareNormal: Number.isNaN(this.spareNormal) ? null : this.spareNormal,
    };
  }

  /** Restore a snapshot from `getState`; the stream continues exactly where it was taken. */
  setState(state: RngState): void {
    const s = state?.s;
    if (!Array.isArray(s) || s.length !== 4 || !s.every((v) => Number.isInteger(v) && v >= 0 && v < 2 ** 32)) {
      throw new Error("Rng.setState: expected { s: four unsigned 32-bit integers, spareNormal }");
    }
    if (s.every((v) => v === 0)) throw new Error("Rng.setState: the all-zero state is invalid for xoshiro128**");
    this.s0 = s[0];
    this.s1 = s[1];
    this.s2 = s[2];
    this.s3 = s[3];
    this.spareNormal = state.spareNormal === null || state.spareNormal === undefined ? NaN : state.spareNormal;
  }

  /** Uniform 32-bit unsigned integer. */
  nextUint32(): number {
    const result = Math.imul(rotl(Math.imul(this.s1, 5), 7), 9) >>> 0;
    const t = this.s1 << 9;
    this.s2 ^= this.s0;
    this.s3 ^= this.s1;
    this.s1 ^= this.s2;
    this.s0 ^= this.s3;
    this.s2 ^= t;
    this.s3 = rotl(this.s3, 11);
    return result;
  }

  /** Uniform in [0, 1) with 53 random bits. */
  uniform(): number {
    const hi = this.nextUint32() >>> 5; // 27 bits
    const lo = this.nextUint32() >>> 6; // 26 bits
    return (hi * 67108864 + lo) / 9007199254740992;
  }

  /** Uniform integer in [0, n). */
  int(n: number): number {
    return Math.floor(this.uniform() * n);
  }

  /** Standard normal deviate (Box–Muller, both values used). */
  normal(): number {
    if (!Number.isNaN(this.spareNormal)) {
      const v = this.spareNormal;
      this.spareNormal = NaN;
      return v;
    }
    let u = 0;
    while (u === 0) u = this.uniform();
    const v = this.uniform();
    const r = Math.sqrt(-2 * Math.log(u));
    this.spareNormal = r * Math.sin(2 * Math.PI * v);
    return r * Math.cos(2 * Math.PI * v);
  }
}

function rotl(x: number, k: number): number {
  return ((x << k) | (x >>> (32 - k))) >>> 0;
}
