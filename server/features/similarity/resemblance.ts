import type { Flag } from '@shared/schemas/flags';

/**
 * What a window's matches against its station's templates do to its flag, score and reasons
 * (issue 19). Pure.
 *
 * - Matches with C ≥ `resemblesAt` count. The best one's label names the group the reason speaks of:
 *   "resembles 14 quarry blasts at KV02, best match 0.93 (2026-03-11 11:58)"; other labels among the
 *   counted matches are added ("also 2 earthquakes, best 0.74"). Unlabelled templates count as
 *   "earlier windows not yet labelled".
 * - A near-identical match (C ≥ `nearIdenticalAt`) to a template labelled as a known repeating
 *   source — any event type but an earthquake or an induced event, or a dismissal as noise — keeps
 *   the window from rising as a new event: the score is quartered (when positive) and `likely event`
 *   becomes `needs eyes` (blasts and other man-made sources: the analyst confirms the label) or
 *   `likely noise` (a match to a dismissed window). A repeating earthquake is still news: its match
 *   only adds the reason.
 * The reason comes first, so the queue shows it.
 */

/** One match with what the rule needs to know about its template. */
export interface ResolvedMatch {
  value: number;
  /** The template's item's label: a QuakeML event type, `noise`, or null (not labelled yet). */
  labelType: string | null;
  /** The template's window start. */
  windowStart: Date;
}

/** Thresholds of the rule. */
export interface ResemblanceThresholds {
  resemblesAt: number;
  nearIdenticalAt: number;
}

/** The flag, score and reasons after the rule, and what it found. */
export interface ResemblanceOutcome {
  score: number;
  flag: Flag;
  reasons: string[];
  /** The counted group of the best match, or null when nothing resembles. */
  resembles: { labelType: string | null; count: number; best: number; bestAt: string; heldBack: boolean } | null;
}

/** Event types that are earthquakes (a repeat is still an event to report). */
const EARTHQUAKE_TYPES = new Set(['earthquake', 'induced or triggered event']);

/** The label's words, singular or plural. */
export function labelWords(labelType: string | null, count: number): string {
  if (labelType === null) return count === 1 ? 'earlier window not yet labelled' : 'earlier windows not yet labelled';
  if (labelType === 'noise') return count === 1 ? 'window dismissed as noise' : 'windows dismissed as noise';
  if (count === 1) return labelType;
  if (labelType.endsWith('ch') || labelType.endsWith('sh') || labelType.endsWith('s')) return `${labelType}es`;
  return `${labelType}s`;
}

/** `2026-03-11 11:58` (UTC, minutes). */
export function minuteUtc(d: Date): string {
  return d.toISOString().slice(0, 16).replace('T', ' ');
}

/**
 * Applies the rule (see the module comment) to the engine's `score`, `flag` and `reasons` for a
 * window of station `stationCode`. `matches` in any order.
 */
export function applyResemblance(
  engine: { score: number; flag: Flag; reasons: readonly string[] },
  matches: readonly ResolvedMatch[],
  stationCode: string,
  t: ResemblanceThresholds,
): ResemblanceOutcome {
  const counted = matches.filter((m) => m.value >= t.resemblesAt).sort((a, b) => b.value - a.value);
  const best = counted[0];
  if (!best) return { score: engine.score, flag: engine.flag, reasons: [...engine.reasons], resembles: null };
  const groups = new Map<string | null, ResolvedMatch[]>();
  for (const m of counted) groups.set(m.labelType, [...(groups.get(m.labelType) ?? []), m]);
  const main = groups.get(best.labelType) ?? [best];
  const fmt = (v: number) => v.toFixed(2);
  let reason = `resembles ${main.length} ${labelWords(best.labelType, main.length)} at ${stationCode}, best match ${fmt(best.value)} (${minuteUtc(best.windowStart)})`;
  const others = [...groups.entries()].filter(([label]) => label !== best.labelType);
  if (others.length > 0) reason += `; also ${others.map(([label, ms]) => `${ms.length} ${labelWords(label, ms.length)}, best ${fmt(ms[0]?.value ?? 0)}`).join('; ')}`;
  const knownRepeat = best.value >= t.nearIdenticalAt && best.labelType !== null && !EARTHQUAKE_TYPES.has(best.labelType);
  let { score, flag } = engine;
  if (knownRepeat) {
    score = score > 0 ? score / 4 : score;
    if (flag === 'likely event') flag = best.labelType === 'noise' ? 'likely noise' : 'needs eyes';
    reason += best.labelType === 'noise' ? ': a near-identical repeat of dismissed noise, not raised as an event' : ': a near-identical repeat of a known source, not raised as a new event (confirm the label)';
  }
  return {
    score,
    flag,
    reasons: [reason, ...engine.reasons],
    resembles: { labelType: best.labelType, count: main.length, best: best.value, bestAt: best.windowStart.toISOString(), heldBack: knownRepeat },
  };
}
