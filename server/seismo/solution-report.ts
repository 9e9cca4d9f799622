/**
 * The event solution as the JSON of `npm run -s locate -- … --json` (the contract), which the
 * API's location view reuses: times ISO 8601 UTC with milliseconds, distances km, angles degrees,
 * times of uncertainty s, amplitudes mm.
 */
import type { EventSolution } from './event-chain';

/** ISO 8601 UTC with milliseconds from µs since the epoch. */
export function isoMs(us: number): string {
  return new Date(Math.round(us / 1000)).toISOString();
}

/** The JSON contract of a located event. */
export interface SolutionReport {
  origin: {
    time: string;
    latitude: number;
    longitude: number;
    depthKm: number;
    depthFixed: boolean;
    depthFixedReason: string | null;
    uncertainty: { horizontalKm68: number; ellipse: { semiMajorKm: number; semiMinorKm: number; azimuthDeg: number }; depthKm: number | null; timeS: number };
    rmsS: number;
    azimuthalGapDeg: number;
    minimumDistanceKm: number;
    usedPhases: number;
    usedStations: number;
  };
  arrivals: { streamId: string; phase: 'P' | 'S'; modelPhase: string; time: string; residualS: number; distanceKm: number; azimuthDeg: number; weight: number }[];
  picks: { streamId: string; phase: 'P' | 'S'; time: string; uncertaintyS: number; onset: string | null; polarity: string | null; evaluationMode: 'manual' | 'automatic' }[];
  magnitude: { type: 'ML'; value: number; uncertainty: number | null; stationCount: number; method: string } | null;
  stationMagnitudes: { streamId: string; streamIds: string[]; value: number; amplitudeMm: number; periodS: number | null; distanceKm: number; hypocentralDistanceKm: number }[];
  amplitudes: { streamId: string; amplitudeMm: number; periodS: number | null; time: string; evaluationMode: 'manual' | 'automatic' }[];
  notes: string[];
}

/** Rounds to `digits` decimals (the JSON says no more than the data can). */
const r = (v: number, digits: number): number => Number(v.toFixed(digits));

/**
 * The report of a located solution; null when the solution has no origin (the caller reports the
 * refusal instead). Station magnitudes are named by their horizontals' common stream id with `?` for
 * the orientation (FDSN wildcard), e.g. `XX.KV01.00.HH?`.
 */
export function solutionReport(s: EventSolution): SolutionReport | null {
  const o = s.origin;
  if (!o) return null;
  return {
    origin: {
      time: isoMs(o.timeS * 1e6),
      latitude: r(o.latitudeDeg, 5),
      longitude: r(o.longitudeDeg, 5),
      depthKm: r(o.depthKm, 2),
      depthFixed: o.depthFixed,
      depthFixedReason: o.depthFixedReason,
      uncertainty: {
        horizontalKm68: r(o.uncertainty.horizontalKm68, 3),
        ellipse: { semiMajorKm: r(o.uncertainty.ellipse.semiMajorKm, 3), semiMinorKm: r(o.uncertainty.ellipse.semiMinorKm, 3), azimuthDeg: r(o.uncertainty.ellipse.azimuthDeg, 1) },
        depthKm: o.uncertainty.depthKm68 === null ? null : r(o.uncertainty.depthKm68, 3),
        timeS: r(o.uncertainty.timeS68, 4),
      },
      rmsS: r(o.rmsS, 4),
      azimuthalGapDeg: r(o.azimuthalGapDeg, 1),
      minimumDistanceKm: r(o.minimumDistanceKm, 3),
      usedPhases: o.usedPhaseCount,
      usedStations: o.usedStationCount,
    },
    arrivals: s.arrivals.map((a) => ({
      streamId: a.streamId,
      phase: a.phase,
      modelPhase: a.modelPhase,
      time: isoMs(a.timeUs),
      residualS: r(a.residualS, 4),
      distanceKm: r(a.distanceKm, 3),
      azimuthDeg: r(a.azimuthDeg, 1),
      weight: r(a.weight, 4),
    })),
    picks: s.picks.map((p) => ({ streamId: p.streamId, phase: p.phase, time: isoMs(p.timeUs), uncertaintyS: r(p.uncertaintyS, 4), onset: p.onset ?? null, polarity: p.polarity ?? null, evaluationMode: p.evaluationMode })),
    magnitude: s.magnitude
      ? { type: 'ML', value: r(s.magnitude.value, 2), uncertainty: s.magnitude.uncertainty === null ? null : r(s.magnitude.uncertainty, 2), stationCount: s.magnitude.stationCount, method: s.magnitude.method }
      : null,
    stationMagnitudes: s.stationMagnitudes.map((m) => ({
      streamId: `${(m.streamIds[0] ?? m.stationId).slice(0, -1)}?`,
      streamIds: m.streamIds,
      value: r(m.value, 2),
      amplitudeMm: Number(m.amplitudeMm.toPrecision(4)),
      periodS: m.periodS === null ? null : r(m.periodS, 3),
      distanceKm: r(m.distanceKm, 3),
      hypocentralDistanceKm: r(m.hypocentralDistanceKm, 3),
    })),
    amplitudes: s.amplitudes.map((a) => ({ streamId: a.streamId, amplitudeMm: Number(a.amplitudeMm.toPrecision(4)), periodS: a.periodS === null ? null : r(a.periodS, 3), time: isoMs(a.timeUs), evaluationMode: a.evaluationMode })),
    notes: s.notes,
  };
}
