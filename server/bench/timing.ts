/** Small timing helpers shared by the benchmark scripts (`npm run bench:*`). */

/** The median of `v` (the mean of the two middle values for an even count); NaN when empty. */
export function median(v: readonly number[]): number {
  if (v.length === 0) return NaN;
  const s = [...v].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? (s[m] as number) : ((s[m - 1] as number) + (s[m] as number)) / 2;
}

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
