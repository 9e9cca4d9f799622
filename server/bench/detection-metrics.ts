/**
 * Metrics of a detector on labelled windows, for `npm run eval:detection` (pure, no I/O).
 */
import { median } from '@shared/math/median';

/** The three flags of the engine. */
export type Flag = 'likely event' | 'needs eyes' | 'likely noise';

/** One evaluated window: its label, the engine's flag and score, and the trigger error when known. */
export interface EvaluatedWindow {
  label: 'earthquake' | 'noise';
  flag: Flag;
  score: number;
  /** First trigger time − analyst's P, s (earthquakes with a trigger only; null otherwise). */
  triggerErrorS: number | null;
}

/** Counts of label × flag. */
export interface Confusion {
  earthquake: Record<Flag, number>;
  noise: Record<Flag, number>;
}

/** Label × flag counts. */
export function confusion(windows: readonly EvaluatedWindow[]): Confusion {
  const zero = (): Record<Flag, number> => ({ 'likely event': 0, 'needs eyes': 0, 'likely noise': 0 });
  const c: Confusion = { earthquake: zero(), noise: zero() };
  for (const w of windows) c[w.label][w.flag]++;
  return c;
}

/**
 * Recall and precision of "likely event" (an earthquake is the positive class; common practice):
 * recall = TP/(TP + FN) over earthquake windows, precision = TP/(TP + FP) where FP are noise windows
 * flagged "likely event"; NaN when undefined. `noiseCalledNoise` = share of noise windows flagged
 * "likely noise".
 */
export function flagRates(c: Confusion): { recall: number; precision: number; noiseCalledNoise: number } {
  const tp = c.earthquake['likely event'];
  const eq = c.earthquake['likely event'] + c.earthquake['needs eyes'] + c.earthquake['likely noise'];
  const fp = c.noise['likely event'];
  const no = c.noise['likely event'] + c.noise['needs eyes'] + c.noise['likely noise'];
  return {
    recall: eq > 0 ? tp / eq : NaN,
    precision: tp + fp > 0 ? tp / (tp + fp) : NaN,
    noiseCalledNoise: no > 0 ? c.noise['likely noise'] / no : NaN,
  };
}

/**
 * ROC AUC of a score (higher = more likely positive) as the Mann–Whitney statistic: the probability
 * that a random positive scores above a random negative, ties counting ½ (Hanley & McNeil 1982,
 * Radiology 143:29, eq. 1). NaN when either class is empty.
 */
export function rocAuc(positives: readonly number[], negatives: readonly number[]): number {
  if (positives.length === 0 || negatives.length === 0) return NaN;
  // Rank-sum form, O(n log n): AUC = (R₊ − n₊(n₊+1)/2)/(n₊·n₋) with mid-ranks for ties.
  const all = [...positives.map((v) => ({ v, p: true })), ...negatives.map((v) => ({ v, p: false }))].sort((a, b) => a.v - b.v);
  let rankSum = 0;
  for (let i = 0; i < all.length; ) {
    let j = i;
    while (j + 1 < all.length && (all[j + 1] as { v: number }).v === (all[i] as { v: number }).v) j++;
    const mid = (i + j) / 2 + 1;
    for (let k = i; k <= j; k++) if ((all[k] as { p: boolean }).p) rankSum += mid;
    i = j + 1;
  }
  const np = positives.length;
  return (rankSum - (np * (np + 1)) / 2) / (np * negatives.length);
}

/** Median, 90th percentile (nearest rank) and share ≤ `within` of |errors|; NaN when empty. */
export function errorStats(errors: readonly number[], within = 0.5): { median: number; p90: number; shareWithin: number; n: number } {
  const a = errors.map((e) => Math.abs(e)).sort((x, y) => x - y);
  if (a.length === 0) return { median: NaN, p90: NaN, shareWithin: NaN, n: 0 };
  const p90 = a[Math.min(a.length - 1, Math.ceil(0.9 * a.length) - 1)] as number;
  return { median: median(a), p90, shareWithin: a.filter((e) => e <= within).length / a.length, n: a.length };
}

/** Longest run of exactly equal consecutive samples, in samples (a padded or dead stretch). */
export function longestConstantRun(x: Float64Array): number {
  let best = x.length > 0 ? 1 : 0;
  let run = 1;
  for (let i = 1; i < x.length; i++) {
    run = x[i] === x[i - 1] ? run + 1 : 1;
    if (run > best) best = run;
  }
  return best;
}
