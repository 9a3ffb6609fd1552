/** Shared assertions for the test suite: relative and absolute closeness with clear messages. */
import { expect } from "vitest";

/** Assert |actual − expected| ≤ rtol·|expected|, printing all three on failure. */
export function expectRel(actual: number, expected: number, rtol: number, what = "value"): void {
  const err = Math.abs(actual - expected);
  const ok = err <= rtol * Math.abs(expected);
  expect(ok, `${what}: ${actual} should be within ${rtol} (relative) of ${expected}; off by ${err}`).toBe(true);
}

/** Assert |actual − expected| ≤ atol, printing all three on failure. */
export function expectAbs(actual: number, expected: number, atol: number, what = "value"): void {
  const err = Math.abs(actual - expected);
  expect(err <= atol, `${what}: ${actual} should be within ${atol} of ${expected}; off by ${err}`).toBe(true);
}

/** Relative ℓ2 error ‖a − b‖ / ‖b‖ over two equal-length arrays. */
export function relL2(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let num = 0;
  let den = 0;
  for (let i = 0; i < b.length; i++) {
    const d = a[i] - b[i];
    num += d * d;
    den += b[i] * b[i];
  }
  return Math.sqrt(num / den);
}

/** Path of the project's shared data folder (../shared beside the repository). */
export const SHARED_DIR = new URL("../../shared/", import.meta.url).pathname;
