import type { DisplayUnits } from '@shared/schemas/queue';

/**
 * What the review screen's stacked traces show, chosen on the fly (nothing here changes a stored
 * number: the flag's numbers come from the engine's causal bands, whatever is displayed).
 */

/** The trace drawn on every channel: the engine's curves, or the analyst's own filter. */
export const traceViews = ['trace', 'low', 'high', 'sta/lta', 'filter'] as const;
/** One trace view. */
export type TraceView = (typeof traceViews)[number];

/** The views' names on screen. */
export const traceViewNames: Record<TraceView, string> = {
  trace: 'Pre-processed',
  low: 'Low band',
  high: 'High band',
  'sta/lta': 'STA/LTA',
  filter: 'Your filter',
};

/** The analyst's display filter: band (null = none), phase, units. */
export interface DisplayFilter {
  band: readonly [number, number] | null;
  phase: 'causal' | 'zero-phase';
  units: DisplayUnits;
}

/** Band presets of the display filter, Hz (common practice ranges for local events and microseism). */
export const bandPresets: ReadonlyArray<{ name: string; band: readonly [number, number] | null }> = [
  { name: 'none', band: null },
  { name: '1–5 Hz', band: [1, 5] },
  { name: '2–10 Hz', band: [2, 10] },
  { name: '5–20 Hz', band: [5, 20] },
  { name: '0.5–2 Hz', band: [0.5, 2] },
  { name: '0.1–1 Hz', band: [0.1, 1] },
];

/** The units' names on screen. */
export const unitNames: Record<DisplayUnits, string> = {
  counts: 'counts',
  velocity: 'velocity',
  displacement: 'displacement',
  'wood-anderson': 'Wood-Anderson',
};

/** The next (step +1) or previous (−1) entry of `list` after `current`, wrapping around. */
export function cycle<T>(list: readonly T[], current: T, step: 1 | -1): T {
  const i = list.indexOf(current);
  const next = (((i < 0 ? 0 : i + step) % list.length) + list.length) % list.length;
  return list[next] as T;
}

/** Gain steps, ×: the amplitude axis spans peak ÷ gain (clipped beyond). */
export const gainSteps = [0.25, 0.5, 1, 2, 4, 8, 16, 32] as const;

/** The next gain up (+1) or down (−1), staying within `gainSteps`. */
export function stepGain(gain: number, step: 1 | -1): number {
  const i = gainSteps.findIndex((g) => g === gain);
  const at = i < 0 ? 2 : i;
  return gainSteps[Math.max(0, Math.min(gainSteps.length - 1, at + step))] ?? 1;
}

/**
 * The half-range of one trace's amplitude axis: its own peak (normalised per trace) or the largest
 * peak of all the channels shown (true relative amplitude), divided by the gain. Never 0.
 */
export function amplitudeHalfRange(ownPeak: number, allPeak: number, normalise: boolean, gain: number): number {
  const ref = normalise ? ownPeak : allPeak;
  const h = ref / (gain > 0 ? gain : 1);
  return h > 0 && Number.isFinite(h) ? h : 1;
}

/**
 * S–P time, s, from the picks of one station's window: the earliest S minus the earliest P (on any
 * component; both are arrivals at the same station), or null without both or when S is not after P.
 */
export function sMinusP(picks: ReadonlyArray<{ phase: 'P' | 'S'; seconds: number }>): number | null {
  const first = (ph: 'P' | 'S') => picks.filter((p) => p.phase === ph).reduce<number | null>((m, p) => (m === null || p.seconds < m ? p.seconds : m), null);
  const p = first('P');
  const s = first('S');
  if (p === null || s === null || !(s > p)) return null;
  return s - p;
}

/**
 * Rough hypocentral distance from S–P, km: d ≈ (S−P) · Vp·Vs/(Vp − Vs) with Vp 6.0 and Vs 3.46 km/s
 * (Vp/Vs 1.73), about 8 km per second of S–P (crustal rule of thumb, common practice; a hint, not a
 * location).
 */
export function distanceFromSMinusP(sp: number): number {
  const vp = 6.0;
  const vs = vp / 1.73;
  return (sp * vp * vs) / (vp - vs);
}
