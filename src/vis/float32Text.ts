/**
 * Shortest decimal text of a single-precision value: the fewest significant digits that read
 * back (parse to double, round to float32) to the same float32. Used for the float32 columns
 * of the CSV table (w, re, im), so a value read as "0.3" is written as "0.3" and not as the
 * double "0.30000001192092896" that the float32 nearest to 0.3 equals.
 *
 * Nine significant digits always suffice for float32 (IEEE 754-2008 §5.12.2: Pmin(binary32)
 * = 9). Whether p digits round-trip is monotone in p — a p-digit decimal that round-trips is
 * also a (p+1)-digit decimal, and the nearest (p+1)-digit decimal is no farther from x — so a
 * binary search over 1..9 finds the shortest in at most four `toPrecision` calls.
 *
 * Reference: IEEE Std 754-2008 §5.12.2 (decimal digits for round-trip conversion).
 */

/** Digits that always round-trip a binary32 value (IEEE 754-2008 §5.12.2). */
const FLOAT32_ROUND_TRIP_DIGITS = 9;

/**
 * Shortest decimal text that converts back to `x` in single precision.
 * @param x a float32 value (e.g. an element of a Float32Array) [any unit]; any other double is
 *   printed in full, as `String(x)` does
 * @returns decimal text as JavaScript prints numbers (e.g. "0.3", "1.5e-7", "-12", "NaN")
 * Reference: IEEE Std 754-2008 §5.12.2.
 */
export function float32Text(x: number): string {
  // A double that is not a float32 keeps its full text: nothing here may lose digits.
  if (!Number.isFinite(x) || x === 0 || Math.fround(x) !== x) return String(x);
  let lo = 1; // the answer is ≥ lo
  let hi = FLOAT32_ROUND_TRIP_DIGITS; // `hi` digits round-trip
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (Math.fround(Number(x.toPrecision(mid))) === x) hi = mid;
    else lo = mid + 1;
  }
  // Number → String: JavaScript's shortest form of that ≤ 9-digit decimal, without padding zeros.
  return String(Number(x.toPrecision(hi)));
}
