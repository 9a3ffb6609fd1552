/**
 * Compensated sums for long sums whose terms cancel (χ², ⟨J, D⟩, Σ w|d|²).
 * Neumaier's variant of Kahan summation: the running error is kept whichever of the running
 * sum and the new term is larger, so the result is accurate to a few ulps of Σ|x|.
 *
 * Reference: Neumaier 1974, Z. Angew. Math. Mech. 54, 39 ("Rundungsfehleranalyse einiger
 * Verfahren zur Summation endlicher Summen").
 */

/** Σ a_i·b_i over the first n entries, compensated. */
export function dotCompensated(a: Float64Array, b: Float64Array, n = a.length): number {
  let s = 0;
  let c = 0;
  for (let i = 0; i < n; i++) {
    const x = a[i] * b[i];
    const t = s + x;
    if (Math.abs(s) >= Math.abs(x)) c += s - t + x;
    else c += x - t + s;
    s = t;
  }
  return s + c;
}

/** Running compensated sum; `add` terms, read `value`. Allocate once, `reset` to reuse. */
export class CompensatedSum {
  private s = 0;
  private c = 0;

  add(x: number): void {
    const t = this.s + x;
    if (Math.abs(this.s) >= Math.abs(x)) this.c += this.s - t + x;
    else this.c += x - t + this.s;
    this.s = t;
  }

  get value(): number {
    return this.s + this.c;
  }

  reset(): void {
    this.s = 0;
    this.c = 0;
  }
}
