/** Small timing helpers shared by the benchmark scripts (`npm run bench:*`). */

/** The nearest-rank `p`th percentile (0–100) of an ascending `sorted` list; NaN when empty. */
export function percentile(sorted: readonly number[], p: number): number {
  if (sorted.length === 0) return NaN;
  return sorted[Math.min(sorted.length - 1, Math.max(0, Math.ceil((p / 100) * sorted.length) - 1))] ?? NaN;
}

/** Runs `fn` `runs` times and returns each run's wall time, ms. */
export function timeRuns(runs: number, fn: () => void): number[] {
  const out: number[] = [];
  for (let i = 0; i < runs; i++) {
    const t0 = process.hrtime.bigint();
    fn();
    out.push(Number(process.hrtime.bigint() - t0) / 1e6);
  }
  return out;
}
