import { z } from 'zod';
import { defaultGroupingSettings, type GroupingSettings } from '../../shared/schemas/supervisor';

/**
 * Candidate events: items from at least `minStations` distinct stations whose first triggers fall
 * within the time the stations' distances allow form one candidate event.
 *
 * The rule (pure part, this section of the file):
 * - An item's arrival time is its window start plus the first STA/LTA trigger-on of the lead
 *   (vertical) channel. Items without a trigger take no part.
 * - Two items of DIFFERENT stations are compatible when |tᵢ − tⱼ| ≤ dᵢⱼ / v + slack, with dᵢⱼ the
 *   great-circle distance of the two stations (haversine, Earth radius 6371 km — common practice),
 *   v = `velocityKmS` (default 3 km/s) and slack = `slackS` (default 2 s). Two items of the same
 *   station are never directly compatible (one station's repeated triggers are not extra stations).
 * - A group is a connected component of the compatibility graph; it is a candidate event when its
 *   members come from at least `minStations` distinct stations.
 * - A group's anchor is its earliest member (smallest arrival, then smallest item id).
 * Connected components do not depend on the order in which edges are discovered, so the grouping
 * is the same whatever order items arrive in; the tests shuffle arrivals with fast-check to show it.
 * Incrementally (the database part, below), each new item's component is recomputed from the items
 * within a horizon of the largest allowed lag around it, widened until the component no longer
 * reaches the horizon's edge, and the stored groups it touches are merged into the one of the anchor.
 */

/** Mean Earth radius, km (IUGG mean radius rounded, common practice for haversine distances). */
export const EARTH_RADIUS_KM = 6371;

/**
 * Great-circle distance by the haversine formula:
 * d = 2R·asin(√(sin²(Δφ/2) + cos φ₁ cos φ₂ sin²(Δλ/2))), R = 6371 km.
 * @param lat1Deg latitude of the first point, degrees north (−90…90)
 * @param lon1Deg longitude of the first point, degrees east
 * @returns distance in km
 * @throws RangeError for a non-finite coordinate or a latitude outside −90…90
 */
export function haversineKm(lat1Deg: number, lon1Deg: number, lat2Deg: number, lon2Deg: number): number {
  for (const [name, v] of [['lat1', lat1Deg], ['lon1', lon1Deg], ['lat2', lat2Deg], ['lon2', lon2Deg]] as const) {
    if (!Number.isFinite(v)) throw new RangeError(`${name} must be a finite number of degrees, got ${v}`);
  }
  if (Math.abs(lat1Deg) > 90 || Math.abs(lat2Deg) > 90) throw new RangeError('latitudes must lie within −90…90 degrees');
  const rad = Math.PI / 180;
  const dPhi = (lat2Deg - lat1Deg) * rad;
  const dLambda = (lon2Deg - lon1Deg) * rad;
  const h = Math.sin(dPhi / 2) ** 2 + Math.cos(lat1Deg * rad) * Math.cos(lat2Deg * rad) * Math.sin(dLambda / 2) ** 2;
  return 2 * EARTH_RADIUS_KM * Math.asin(Math.min(1, Math.sqrt(h)));
}

/** One item's first trigger, with its station's position. */
export interface Arrival {
  itemId: number;
  stationId: number;
  latitude: number;
  longitude: number;
  /** First trigger time, ms since the epoch (UTC). */
  arrivalMs: number;
}

/** A connected group of arrivals. */
export interface ArrivalGroup {
  /** Item id of the earliest member (smallest arrival, then smallest item id). */
  anchorItemId: number;
  /** Member item ids, ascending. */
  itemIds: number[];
  /** Distinct station ids, ascending. */
  stationIds: number[];
  /** Earliest arrival, ms since the epoch. */
  firstArrivalMs: number;
  /** Latest arrival, ms since the epoch. */
  lastArrivalMs: number;
}

/**
 * The longest lag two stations may show, s: d/v + slack.
 * @param distanceKm station separation, km
 * @throws RangeError for a negative distance or invalid settings
 */
export function allowedLagS(distanceKm: number, settings: GroupingSettings = defaultGroupingSettings): number {
  if (!(distanceKm >= 0)) throw new RangeError(`distance must be ≥ 0 km, got ${distanceKm}`);
  if (!(settings.velocityKmS > 0)) throw new RangeError(`velocityKmS must be > 0, got ${settings.velocityKmS}`);
  if (!(settings.slackS >= 0)) throw new RangeError(`slackS must be ≥ 0, got ${settings.slackS}`);
  return distanceKm / settings.velocityKmS + settings.slackS;
}

/** Whether two arrivals may belong to one event (different stations, lag within the allowance). */
export function compatible(a: Arrival, b: Arrival, settings: GroupingSettings = defaultGroupingSettings): boolean {
  if (a.stationId === b.stationId) return false;
  const lagS = Math.abs(a.arrivalMs - b.arrivalMs) / 1000;
  return lagS <= allowedLagS(haversineKm(a.latitude, a.longitude, b.latitude, b.longitude), settings);
}

const byArrival = (a: Arrival, b: Arrival): number => a.arrivalMs - b.arrivalMs || a.itemId - b.itemId;

/**
 * Groups arrivals into connected components of the compatibility graph (see the module comment).
 * Every arrival ends up in exactly one group (singletons included); filter with `isCandidateEvent`.
 * Sorted by arrival then id, each arrival is only compared with those within `maxLagS` after it,
 * so the cost is O(n·k) for k arrivals per horizon.
 * @param maxLagS an upper bound of `allowedLagS` over every station pair, s (arrivals further apart
 *   are never compared); pass `Infinity` to compare all pairs
 * @returns groups ordered by anchor (arrival, then item id)
 * @throws RangeError on duplicate item ids or a non-finite arrival time
 */
export function groupArrivals(arrivals: readonly Arrival[], settings: GroupingSettings = defaultGroupingSettings, maxLagS = Infinity): ArrivalGroup[] {
  const sorted = [...arrivals].sort(byArrival);
  const seen = new Set<number>();
  for (const a of sorted) {
    if (!Number.isFinite(a.arrivalMs)) throw new RangeError(`item ${a.itemId}: arrival time must be finite`);
    if (seen.has(a.itemId)) throw new RangeError(`item ${a.itemId} appears twice`);
    seen.add(a.itemId);
  }
  const parent = sorted.map((_, i) => i);
  const find = (i: number): number => {
    let r = i;
    while (parent[r] !== r) r = parent[r] as number;
    while (parent[i] !== r) {
      const next = parent[i] as number;
      parent[i] = r;
      i = next;
    }
    return r;
  };
  for (let i = 0; i < sorted.length; i++) {
    const a = sorted[i] as Arrival;
    for (let j = i + 1; j < sorted.length; j++) {
      const b = sorted[j] as Arrival;
      if ((b.arrivalMs - a.arrivalMs) / 1000 > maxLagS) break;
      if (compatible(a, b, settings)) {
        const ra = find(i);
        const rb = find(j);
        // The smaller index is the earlier arrival: it stays the root, so the root is the anchor.
        if (ra !== rb) parent[Math.max(ra, rb)] = Math.min(ra, rb);
      }
    }
  }
  const groups = new Map<number, Arrival[]>();
  for (let i = 0; i < sorted.length; i++) {
    const r = find(i);
    const list = groups.get(r) ?? [];
    list.push(sorted[i] as Arrival);
    groups.set(r, list);
  }
  return [...groups.entries()]
    .sort((x, y) => x[0] - y[0])
    .map(([root, members]) => {
      const anchor = sorted[root] as Arrival;
      return {
        anchorItemId: anchor.itemId,
        itemIds: members.map((m) => m.itemId).sort((p, q) => p - q),
        stationIds: [...new Set(members.map((m) => m.stationId))].sort((p, q) => p - q),
        firstArrivalMs: anchor.arrivalMs,
        lastArrivalMs: Math.max(...members.map((m) => m.arrivalMs)),
      };
    });
}

/** Whether a group has enough distinct stations to be a candidate event. */
export function isCandidateEvent(group: ArrivalGroup, settings: GroupingSettings = defaultGroupingSettings): boolean {
  return group.stationIds.length >= settings.minStations;
}

/**
 * The largest allowed lag over every pair of the given stations, s (the grouping horizon).
 * With fewer than two stations it is the slack alone.
 */
export function maxAllowedLagS(stations: ReadonlyArray<{ latitude: number; longitude: number }>, settings: GroupingSettings = defaultGroupingSettings): number {
  let maxKm = 0;
  for (let i = 0; i < stations.length; i++) {
    for (let j = i + 1; j < stations.length; j++) {
      const a = stations[i] as { latitude: number; longitude: number };
      const b = stations[j] as { latitude: number; longitude: number };
      maxKm = Math.max(maxKm, haversineKm(a.latitude, a.longitude, b.latitude, b.longitude));
    }
  }
  return allowedLagS(maxKm, settings);
}

const storedAnalysisSchema = z.object({
  leadChannel: z.string().optional(),
  channels: z
    .array(
      z.object({
        id: z.string(),
        startTime: z.string(),
        staLta: z.object({ triggers: z.array(z.object({ on: z.number(), off: z.number().nullable() })) }),
      }),
    )
    .min(1),
});

/**
 * The first trigger of an item's lead channel from the stored analysis (the engine's output):
 * channel `leadChannel`'s `startTime` + its first `staLta.triggers[].on` (s).
 * @returns ms since the epoch, or null when the lead channel has no trigger or the analysis does
 *   not have the engine's shape
 */
export function firstTriggerMs(analysis: unknown): number | null {
  const parsed = storedAnalysisSchema.safeParse(analysis);
  if (!parsed.success) return null;
  const { channels, leadChannel } = parsed.data;
  const lead = channels.find((c) => c.id === leadChannel) ?? channels[0];
  const first = lead?.staLta.triggers[0];
  if (!lead || !first) return null;
  const start = Date.parse(lead.startTime);
  if (Number.isNaN(start)) return null;
  return start + first.on * 1000;
}
