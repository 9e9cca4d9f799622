import { compareCodes } from '@client/lib/text-order';

/**
 * The record section's model, kept pure so it can be tested without a browser: absolute times,
 * which channels a component mode shows, the station order and the amplitude scaling. Times are
 * s since the Unix epoch (float; 1e-7 s resolution near 2026, enough for picks given to 1 µs
 * in ISO strings by `epochToIso`).
 */

/** Which components the record section shows. */
export type ComponentMode = 'Z' | 'NE' | 'ZNE';
/** How the stations are ordered. */
export type OrderMode = 'distance' | 'arrival';
/** Per-trace normalisation, or one scale for every trace (true relative amplitude). */
export type ScaleMode = 'trace' | 'relative';

/**
 * s since the epoch of an ISO 8601 UTC time with up to microseconds (Date.parse keeps only ms).
 * @throws RangeError when the string is not an ISO time.
 */
export function isoToEpoch(iso: string): number {
  const m = /^(\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2})(?:\.(\d{1,9}))?Z$/.exec(iso);
  if (!m) throw new RangeError(`not an ISO 8601 UTC time: ${iso}`);
  const whole = Date.parse(`${m[1] as string}Z`) / 1000;
  return whole + (m[2] ? Number(`0.${m[2]}`) : 0);
}

/** ISO 8601 UTC with microseconds of s since the epoch (rounded to the µs). */
export function epochToIso(s: number): string {
  const us = Math.round(s * 1e6);
  const wholeS = Math.floor(us / 1e6);
  const frac = us - wholeS * 1e6;
  return `${new Date(wholeS * 1000).toISOString().slice(0, 19)}.${String(frac).padStart(6, '0')}Z`;
}

/** The component letter of a stream id's channel (Z, N, E; 1 and 2 count as N and E; common practice). */
export function componentOf(streamId: string): 'Z' | 'N' | 'E' | '?' {
  const c = streamId.slice(-1).toUpperCase();
  if (c === 'Z') return 'Z';
  if (c === 'N' || c === '1') return 'N';
  if (c === 'E' || c === '2') return 'E';
  return '?';
}

/** NET.STA of a stream id NET.STA.LOC.CHA. */
export function stationOf(streamId: string): string {
  return streamId.split('.').slice(0, 2).join('.');
}

/** Whether a component mode shows a channel. */
export function showsChannel(mode: ComponentMode, streamId: string): boolean {
  const c = componentOf(streamId);
  if (mode === 'Z') return c === 'Z';
  if (mode === 'NE') return c === 'N' || c === 'E';
  return c !== '?';
}

/** One station as the order needs it. */
export type StationKey = { station: string; distanceKm: number | null; firstArrival: number | null };

/**
 * Stations in display order: by epicentral distance from the current origin (`distance`, when every
 * station has one), else by first arrival (the earliest pick or, lacking any, the window start),
 * the station code breaking ties. Stations without the ordering value go last.
 */
export function orderStations<T extends StationKey>(stations: readonly T[], mode: OrderMode): T[] {
  const useDistance = mode === 'distance' && stations.every((s) => s.distanceKm !== null);
  const key = (s: T): number => (useDistance ? (s.distanceKm as number) : (s.firstArrival ?? Infinity));
  return [...stations].sort((a, b) => key(a) - key(b) || compareCodes(a.station, b.station));
}

/** Largest |value| of a trace (0 for an empty one). */
export function peakAbs(values: ArrayLike<number>): number {
  let m = 0;
  for (let i = 0; i < values.length; i++) {
    const v = Math.abs(values[i] as number);
    if (v > m && Number.isFinite(v)) m = v;
  }
  return m;
}

/**
 * The factor each trace is multiplied by so it fits its row (half-height 0.45 of a row):
 * `trace` → 0.45 / own peak; `relative` → 0.45 / the largest peak among traces of the same unit,
 * so amplitudes compare between stations (traces in counts and in m/s are never put on one scale).
 * A flat trace gets 0.
 */
export function rowScales(traces: readonly { peak: number; units: string }[], mode: ScaleMode): number[] {
  const byUnit = new Map<string, number>();
  for (const t of traces) byUnit.set(t.units, Math.max(byUnit.get(t.units) ?? 0, t.peak));
  return traces.map((t) => {
    const ref = mode === 'trace' ? t.peak : (byUnit.get(t.units) ?? 0);
    return ref > 0 ? 0.45 / ref : 0;
  });
}

/** Uncertainty steps a key moves through, s (common practice: tens of ms for clear local P, up to a second for emergent S). */
export const uncertaintyStepsS = [0.01, 0.02, 0.05, 0.1, 0.2, 0.3, 0.5, 1, 2] as const;

/** The next uncertainty step above (`dir` 1) or below (−1) `s`. */
export function stepUncertainty(s: number, dir: 1 | -1): number {
  if (dir > 0) return uncertaintyStepsS.find((x) => x > s + 1e-9) ?? (uncertaintyStepsS[uncertaintyStepsS.length - 1] as number);
  const below = uncertaintyStepsS.filter((x) => x < s - 1e-9);
  return below[below.length - 1] ?? uncertaintyStepsS[0];
}

/** The default uncertainty of a new pick, s (common practice for local events: P sharper than S). */
export function defaultUncertaintyS(phase: 'P' | 'S'): number {
  return phase === 'P' ? 0.05 : 0.1;
}
