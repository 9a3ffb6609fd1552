/** One benchmark figure, as written to bench/results.json (DESIGN.md). */
export interface BenchResult {
  name: string;
  value: number;
  unit: string;
  params: Record<string, number | string>;
}

/** A benchmark module exports `run`, which measures and returns its figures. */
export type BenchModule = { run: () => Promise<BenchResult[]> };
