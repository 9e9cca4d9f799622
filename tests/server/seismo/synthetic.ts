/**
 * Synthetic picks for the location tests: arrival times from a known hypocentre computed with the
 * travel-time engine, plus Gaussian noise from a seeded generator (never Math.random, so every run
 * draws the same numbers).
 */
import { destinationPoint, greatCircleDistanceKm, type GeoPoint } from '@server/seismo/geodesy';
import type { LocatePick, LocateStation } from '@server/seismo/locate';
import { firstArrivalTimeS, prepareVelocityModel } from '@server/seismo/travel-time';
import type { VelocityModel, WaveType } from '@server/seismo/velocity-model';

/** mulberry32 (public-domain 32-bit generator, common practice for seeded tests) with Box–Muller normals. */
export function seededNormal(seed: number): () => number {
  let state = seed >>> 0;
  const uniform = (): number => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
  return () => {
    const u1 = Math.max(uniform(), 1e-300);
    const u2 = uniform();
    return Math.sqrt(-2 * Math.log(u1)) * Math.cos(2 * Math.PI * u2);
  };
}

/** Stations on rings around a centre: `count` stations at the given azimuths and distances. */
export function ringStations(centre: GeoPoint, placements: ReadonlyArray<readonly [azimuthDeg: number, distanceKm: number]>): LocateStation[] {
  return placements.map(([az, d], i) => ({ code: `T${String(i + 1).padStart(2, '0')}`, ...destinationPoint(centre, az, d) }));
}

/** A hypocentre: epicentre, depth (km) and origin time (s). */
export interface TrueHypocentre extends GeoPoint {
  depthKm: number;
  timeS: number;
}

/**
 * First-arrival picks of the given phases at every station from `truth`, with N(0, σ²) noise added
 * when `noise` is given (σ = the pick's uncertainty).
 */
export function synthesizePicks(
  stations: readonly LocateStation[],
  truth: TrueHypocentre,
  model: VelocityModel,
  phases: readonly WaveType[],
  sigma: Readonly<Record<WaveType, number>>,
  noise?: () => number,
): LocatePick[] {
  const m = prepareVelocityModel(model);
  const picks: LocatePick[] = [];
  for (const s of stations) {
    const d = greatCircleDistanceKm(truth, s);
    for (const ph of phases) {
      const t = truth.timeS + firstArrivalTimeS(m, ph, d, truth.depthKm) + (noise ? noise() * sigma[ph] : 0);
      picks.push({ id: `${s.code}.${ph}`, stationCode: s.code, phase: ph, timeS: t, uncertaintyS: sigma[ph] });
    }
  }
  return picks;
}
