import { and, asc, desc, eq, gt, gte, inArray, isNull, lt, lte, max, ne, sql } from 'drizzle-orm';
import { z } from 'zod';
import type { EventLabel } from '@shared/schemas/label';
import { defaultGroupingSettings, type GroupingSettings, type GroupLabelBody } from '@shared/schemas/supervisor';
import type { Database, DbOrTx } from '@server/db/client';
import { queueItems } from '@server/db/schema/queue-items';
import { stations } from '@server/db/schema/stations';
import { candidateEvents, itemArrivals } from '@server/db/schema/supervisor';
import { windows } from '@server/db/schema/uploads';
import { AppError, badRequest, notFound } from '@server/errors';
import { recordChange } from '@server/realtime/change-log';
import { claimItem, labelItem, type QueuePerson, type QueueServiceDeps } from '@server/features/queue/queue-transitions';
import { lowerLoneTrigger, raiseByCoincidence } from './coincidence';
import { channelResultSchema, detectionSchema, staLtaResultSchema, storedAnalysisSchema } from '@shared/schemas/analysis';

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

/** The fields of the stored analysis (shared/schemas/analysis.ts) the first trigger is read from. */
const arrivalAnalysisSchema = z.object({
  leadChannel: storedAnalysisSchema.shape.leadChannel.optional(),
  detection: detectionSchema.pick({ channel: true, onset: true }).nullable().optional(),
  channels: z
    .array(channelResultSchema.pick({ id: true, startTime: true }).extend({ staLta: staLtaResultSchema.pick({ triggers: true }) }))
    .min(1),
});

/**
 * The first trigger of an item's lead channel from the stored analysis (the engine's output):
 * channel `leadChannel`'s `startTime` + its first `staLta.triggers[].on` (s).
 * @returns ms since the epoch, or null when the lead channel has no trigger or the analysis does
 *   not have the engine's shape
 */
export function firstTriggerMs(analysis: unknown): number | null {
  const parsed = arrivalAnalysisSchema.safeParse(analysis);
  if (!parsed.success) return null;
  const { channels, leadChannel, detection } = parsed.data;
  if (detection) {
    // The engine's detection: the onset (AIC) of the earliest strong main trigger over all channels.
    const ch = channels.find((c) => c.id === detection.channel);
    const start = ch ? Date.parse(ch.startTime) : NaN;
    return Number.isNaN(start) ? null : start + detection.onset * 1000;
  }
  const lead = channels.find((c) => c.id === leadChannel) ?? channels[0];
  const first = lead?.staLta.triggers[0];
  if (!lead || !first) return null;
  const start = Date.parse(lead.startTime);
  if (Number.isNaN(start)) return null;
  return start + first.on * 1000;
}

// ---------------------------------------------------------------------------------------------
// Database part: arrivals are copied out of the analysis once; groups are kept in
// candidate_events (one row per anchor) and item_arrivals.candidate_event_id.
// ---------------------------------------------------------------------------------------------

/** What the database functions need. */
export interface CandidateDeps {
  db: Database;
  /** Wakes the live hub after a commit. */
  notify?: () => void;
  settings?: GroupingSettings;
}

/**
 * Copies the first trigger of each item into item_arrivals (items without a trigger are skipped;
 * items already there are left alone).
 * @returns the ids that got an arrival row
 */
export async function recordArrivals(db: Database, itemIds: readonly number[]): Promise<number[]> {
  if (itemIds.length === 0) return [];
  // Only the few fields the first trigger needs come out of the (~50 KB) analysis JSON.
  const rows = await db
    .select({
      itemId: queueItems.id,
      stationId: queueItems.stationId,
      known: itemArrivals.itemId,
      leadChannel: sql<unknown>`JSON_EXTRACT(${windows.analysis}, '$.leadChannel')`,
      ids: sql<unknown>`JSON_EXTRACT(${windows.analysis}, '$.channels[*].id')`,
      starts: sql<unknown>`JSON_EXTRACT(${windows.analysis}, '$.channels[*].startTime')`,
      staLta: sql<unknown>`JSON_EXTRACT(${windows.analysis}, '$.channels[*].staLta')`,
      detection: sql<unknown>`JSON_EXTRACT(${windows.analysis}, '$.detection')`,
    })
    .from(queueItems)
    .innerJoin(windows, eq(windows.id, queueItems.windowId))
    .leftJoin(itemArrivals, eq(itemArrivals.itemId, queueItems.id))
    .where(inArray(queueItems.id, [...itemIds]));
  const added: number[] = [];
  for (const r of rows) {
    if (r.known !== null) continue;
    const t = firstTriggerMs(analysisFromExtract(r));
    if (t === null) continue;
    await db.insert(itemArrivals).values({ itemId: r.itemId, stationId: r.stationId, arrivalAt: new Date(t) }).onDuplicateKeyUpdate({ set: { itemId: sql`item_id` } });
    added.push(r.itemId);
  }
  return added;
}

/** A JSON_EXTRACT result: parsed by the driver, or JSON text (a non-JSON string is a parsed string). */
function extracted(v: unknown): unknown {
  if (typeof v !== 'string') return v ?? null;
  try {
    return JSON.parse(v);
  } catch {
    return v;
  }
}

/** Rebuilds the part of the analysis `firstTriggerMs` reads from its extracted fields. */
function analysisFromExtract(r: { leadChannel: unknown; ids: unknown; starts: unknown; staLta: unknown; detection?: unknown }): unknown {
  const ids = extracted(r.ids);
  const single = !Array.isArray(ids);
  const col = (v: unknown): unknown[] => {
    const p = extracted(v);
    return single ? [p] : Array.isArray(p) ? p : [];
  };
  const starts = col(r.starts);
  const staLta = col(r.staLta);
  const list: readonly unknown[] = Array.isArray(ids) ? ids : [ids];
  const detection = r.detection === undefined ? undefined : extracted(r.detection);
  return { leadChannel: extracted(r.leadChannel), detection, channels: list.map((id, i) => ({ id, startTime: starts[i], staLta: staLta[i] })) };
}

async function loadArrivals(db: DbOrTx, fromMs: number, toMs: number): Promise<Array<Arrival & { candidateEventId: number | null }>> {
  const rows = await db
    .select({ itemId: itemArrivals.itemId, stationId: itemArrivals.stationId, arrivalAt: itemArrivals.arrivalAt, candidateEventId: itemArrivals.candidateEventId, latitude: stations.latitude, longitude: stations.longitude })
    .from(itemArrivals)
    .innerJoin(stations, eq(stations.id, itemArrivals.stationId))
    .where(and(gte(itemArrivals.arrivalAt, new Date(fromMs)), lte(itemArrivals.arrivalAt, new Date(toMs))));
  return rows.map((r) => ({ itemId: r.itemId, stationId: r.stationId, latitude: r.latitude, longitude: r.longitude, arrivalMs: r.arrivalAt.getTime(), candidateEventId: r.candidateEventId }));
}

/** The grouping horizon now: the largest allowed lag over every registered station pair, s. */
export async function networkHorizonS(db: DbOrTx, settings: GroupingSettings): Promise<number> {
  const all = await db.select({ latitude: stations.latitude, longitude: stations.longitude }).from(stations);
  return maxAllowedLagS(all, settings);
}

/**
 * Recomputes the group around one item and stores it (see the module comment): the component is
 * found from the arrivals within the horizon, widened until it no longer reaches the edge; when it
 * is a candidate event its row is the anchor's (created if new), and every stored group it absorbed
 * is folded into it.
 * @returns the candidate event id, or null when the item is in no candidate event
 */
export async function regroupAround(deps: CandidateDeps, itemId: number): Promise<number | null> {
  const settings = deps.settings ?? defaultGroupingSettings;
  const [own] = await deps.db.select({ arrivalAt: itemArrivals.arrivalAt }).from(itemArrivals).where(eq(itemArrivals.itemId, itemId));
  if (!own) return null;
  const horizonMs = (await networkHorizonS(deps.db, settings)) * 1000;
  let from = own.arrivalAt.getTime() - horizonMs;
  let to = own.arrivalAt.getTime() + horizonMs;
  let component: ArrivalGroup | undefined;
  let loaded: Array<Arrival & { candidateEventId: number | null }> = [];
  for (let round = 0; round < 50; round++) {
    loaded = await loadArrivals(deps.db, from, to);
    component = groupArrivals(loaded, settings, horizonMs / 1000).find((g) => g.itemIds.includes(itemId));
    if (!component) break;
    const needFrom = component.firstArrivalMs - horizonMs;
    const needTo = component.lastArrivalMs + horizonMs;
    if (needFrom >= from && needTo <= to) break;
    from = Math.min(from, needFrom);
    to = Math.max(to, needTo);
  }
  const lone = async (): Promise<null> => {
    const [me] = await deps.db.select({ stationId: itemArrivals.stationId }).from(itemArrivals).where(eq(itemArrivals.itemId, itemId));
    if (me && (await deps.db.transaction((tx) => lowerLoneTrigger(tx, itemId, me.stationId, own.arrivalAt, horizonMs / 1000, new Date())))) deps.notify?.();
    return null;
  };
  if (!component) return lone();
  const group = component;
  const members = loaded.filter((a) => group.itemIds.includes(a.itemId));
  const oldIds = [...new Set(members.map((m) => m.candidateEventId).filter((v): v is number => v !== null))];
  if (!isCandidateEvent(group, settings)) return lone();
  const now = new Date();
  const id = await deps.db.transaction(async (tx) => {
    const [existing] = await tx.select().from(candidateEvents).where(eq(candidateEvents.anchorItemId, group.anchorItemId)).for('update');
    let eventId: number;
    let version: number;
    const values = { firstArrivalAt: new Date(group.firstArrivalMs), lastArrivalAt: new Date(group.lastArrivalMs), stationCount: group.stationIds.length, memberCount: group.itemIds.length, updatedAt: now };
    if (existing) {
      const same = existing.memberCount === values.memberCount && existing.stationCount === values.stationCount && oldIds.length === 1 && oldIds[0] === existing.id && members.every((m) => m.candidateEventId === existing.id);
      if (same) return existing.id;
      eventId = existing.id;
      version = existing.version + 1;
      await tx.update(candidateEvents).set({ ...values, version }).where(eq(candidateEvents.id, eventId));
    } else {
      const [ins] = await tx.insert(candidateEvents).values({ ...values, anchorItemId: group.anchorItemId, version: 1, createdAt: now }).$returningId();
      if (!ins) throw new Error('candidate event insert returned no id');
      eventId = ins.id;
      version = 1;
    }
    const absorbed = oldIds.filter((o) => o !== eventId);
    // Who saw an absorbed event (a viewer of one of its members' stations) hears of its end.
    const absorbedStations = absorbed.length > 0 ? await tx.select({ eventId: itemArrivals.candidateEventId, stationId: itemArrivals.stationId }).from(itemArrivals).where(inArray(itemArrivals.candidateEventId, absorbed)) : [];
    await tx.update(itemArrivals).set({ candidateEventId: eventId }).where(inArray(itemArrivals.itemId, group.itemIds));
    await raiseByCoincidence(tx, eventId, group.itemIds, group.stationIds.length, now);
    if (absorbed.length > 0) await tx.delete(candidateEvents).where(inArray(candidateEvents.id, absorbed));
    for (const a of absorbed) {
      const stationIds = [...new Set(absorbedStations.filter((r) => r.eventId === a).map((r) => r.stationId))];
      await recordChange(tx, { resource: 'candidate_event', resourceId: a, kind: 'deleted', version: 0, summary: { mergedInto: eventId }, audience: { action: 'queue.view', stationIds } });
    }
    await recordChange(tx, {
      resource: 'candidate_event',
      resourceId: eventId,
      kind: existing ? 'updated' : 'created',
      version,
      summary: { anchorItemId: group.anchorItemId, itemIds: group.itemIds, stationCount: group.stationIds.length, firstArrival: new Date(group.firstArrivalMs).toISOString() },
      // As GET /api/supervisor/candidate-events/:id: seen by whoever sees one member's station,
      // who is told only of the members at stations they may see.
      audience: { action: 'queue.view', stationIds: group.stationIds, itemStations: members.map((m) => [m.itemId, m.stationId] as [number, number]) },
    });
    return eventId;
  });
  deps.notify?.();
  return id;
}

/**
 * For items stored without an arrival row (catch-up, tests): copies their arrivals out of the
 * stored analysis and regroups around each. Ingest writes the arrival in its own transaction and
 * calls `regroupArrivals` after the commit. Safe to call twice for the same items.
 * @returns the candidate event ids touched
 */
export async function onItemsCreated(deps: CandidateDeps, itemIds: readonly number[]): Promise<number[]> {
  return regroupArrivals(deps, await recordArrivals(deps.db, itemIds));
}

/**
 * Regroups around items whose arrival rows are already stored (ingest writes them in its own
 * transaction, from the analysis it has in memory).
 * @returns the candidate event ids touched
 */
export async function regroupArrivals(deps: CandidateDeps, itemIds: readonly number[]): Promise<number[]> {
  const touched = new Set<number>();
  for (const id of itemIds) {
    const ev = await regroupAround(deps, id);
    if (ev !== null) touched.add(ev);
  }
  return [...touched];
}

/**
 * A window that arrives after a neighbour's lone trigger may be the quiet neighbour that lowers it
 * (`lowerLoneTrigger`): re-checks the `likely event` items of other stations, still waiting for an
 * analyst and in no candidate event, whose arrival lies inside one of the new windows with the
 * network horizon to spare on both sides.
 * @param spans the new windows: station and time range
 * @returns the ids lowered
 */
export async function recheckLoneTriggers(deps: CandidateDeps, spans: readonly { stationId: number; start: Date; end: Date }[]): Promise<number[]> {
  if (spans.length === 0) return [];
  const settings = deps.settings ?? defaultGroupingSettings;
  const horizonS = await networkHorizonS(deps.db, settings);
  const lowered: number[] = [];
  for (const span of spans) {
    const from = new Date(span.start.getTime() + horizonS * 1000);
    const to = new Date(span.end.getTime() - horizonS * 1000);
    if (from > to) continue;
    const lone = await deps.db
      .select({ itemId: itemArrivals.itemId, stationId: itemArrivals.stationId, arrivalAt: itemArrivals.arrivalAt })
      .from(itemArrivals)
      .innerJoin(queueItems, eq(queueItems.id, itemArrivals.itemId))
      .where(and(ne(itemArrivals.stationId, span.stationId), isNull(itemArrivals.candidateEventId), gte(itemArrivals.arrivalAt, from), lte(itemArrivals.arrivalAt, to), eq(queueItems.flag, 'likely event'), eq(queueItems.state, 'new')));
    for (const l of lone) {
      if (lowered.includes(l.itemId)) continue;
      if (await deps.db.transaction((tx) => lowerLoneTrigger(tx, l.itemId, l.stationId, l.arrivalAt, horizonS, new Date()))) lowered.push(l.itemId);
    }
  }
  if (lowered.length > 0) deps.notify?.();
  return lowered;
}

/** Per database handle: the highest queue item id this process has looked at for arrivals. */
const processedUpTo = new WeakMap<Database, number>();

/**
 * Catches up on items this process has not looked at yet (ids above a high-water mark that starts
 * at the newest item with an arrival row), at most `limit` per call in id order, so groups stand
 * even for items stored without one (rows written before ingest stored arrivals itself, or by
 * other writers). Each item's analysis is read once per process.
 * @returns the number of items looked at
 */
export async function catchUpArrivals(deps: CandidateDeps, limit = 500): Promise<number> {
  let mark = processedUpTo.get(deps.db);
  if (mark === undefined) {
    const [hw] = await deps.db.select({ maxId: max(itemArrivals.itemId) }).from(itemArrivals);
    mark = hw?.maxId ?? 0;
  }
  const rows = await deps.db
    .select({ id: queueItems.id })
    .from(queueItems)
    .where(gt(queueItems.id, mark))
    .orderBy(asc(queueItems.id))
    .limit(limit);
  const last = rows[rows.length - 1];
  if (!last) {
    processedUpTo.set(deps.db, mark);
    return 0;
  }
  await onItemsCreated(deps, rows.map((r) => r.id));
  processedUpTo.set(deps.db, Math.max(mark, last.id));
  return rows.length;
}

/** One member of a candidate event as the screens show it. */
export interface CandidateMember {
  itemId: number;
  station: string;
  stationId: number;
  arrival: string;
  state: string;
  flag: string;
  score: number;
  labelType: string | null;
  version: number;
}

/** A candidate event with its members. */
export interface CandidateEventView {
  id: number;
  anchorItemId: number;
  firstArrival: string;
  lastArrival: string;
  stationCount: number;
  members: CandidateMember[];
}

/** Candidate events whose first arrival falls in [from, to), newest first (at most `limit`). */
export async function listCandidateEvents(db: Database, period: { from: Date; to: Date }, limit = 200): Promise<CandidateEventView[]> {
  const evs = await db
    .select()
    .from(candidateEvents)
    .where(and(gte(candidateEvents.firstArrivalAt, period.from), lt(candidateEvents.firstArrivalAt, period.to)))
    .orderBy(desc(candidateEvents.firstArrivalAt))
    .limit(limit);
  return withMembers(db, evs);
}

/** One candidate event, or null. */
export async function getCandidateEvent(db: Database, id: number): Promise<CandidateEventView | null> {
  const evs = await db.select().from(candidateEvents).where(eq(candidateEvents.id, id));
  return (await withMembers(db, evs))[0] ?? null;
}

async function withMembers(db: Database, evs: Array<typeof candidateEvents.$inferSelect>): Promise<CandidateEventView[]> {
  if (evs.length === 0) return [];
  const rows = await db
    .select({
      eventId: itemArrivals.candidateEventId,
      itemId: itemArrivals.itemId,
      arrivalAt: itemArrivals.arrivalAt,
      network: stations.network,
      code: stations.code,
      stationId: stations.id,
      state: queueItems.state,
      flag: queueItems.flag,
      score: queueItems.score,
      labelType: queueItems.labelType,
      version: queueItems.version,
    })
    .from(itemArrivals)
    .innerJoin(queueItems, eq(queueItems.id, itemArrivals.itemId))
    .innerJoin(stations, eq(stations.id, itemArrivals.stationId))
    .where(inArray(itemArrivals.candidateEventId, evs.map((e) => e.id)))
    .orderBy(asc(itemArrivals.arrivalAt), asc(itemArrivals.itemId));
  return evs.map((e) => ({
    id: e.id,
    anchorItemId: e.anchorItemId,
    firstArrival: e.firstArrivalAt.toISOString(),
    lastArrival: e.lastArrivalAt.toISOString(),
    stationCount: e.stationCount,
    members: rows
      .filter((r) => r.eventId === e.id)
      .map((r) => ({ itemId: r.itemId, station: `${r.network}.${r.code}`, stationId: r.stationId, arrival: r.arrivalAt.toISOString(), state: r.state, flag: r.flag, score: r.score, labelType: r.labelType, version: r.version })),
  }));
}

/** The outcome of labelling a candidate event, per member. */
export interface GroupLabelOutcome {
  itemId: number;
  result: 'labelled' | 'skipped';
  /** Why a member was skipped (already settled, claimed by someone else, changed meanwhile). */
  reason?: string;
}

/**
 * The label a member gets from "label the whole group": the event type only. The certainty stays at
 * "suspected", there are no picks, and the note says where the type came from instead of copying
 * the analyst's note: nobody has looked at this member's traces yet.
 */
export function groupMemberLabel(eventId: number, eventType: EventLabel['eventType'], fromItemId: number | null): EventLabel {
  return {
    eventType,
    certainty: 'suspected',
    distanceClass: null,
    picks: [],
    note: `Type set for the whole event group #${eventId}${fromItemId === null ? '' : ` from item ${fromItemId}`}; this item's traces not yet reviewed on their own.`,
  };
}

/**
 * Labels every member of a candidate event through the queue's own transitions (claim, then label).
 * `current` (the member the analyst is on) gets its whole label; every other member gets the event
 * type only (groupMemberLabel). Members already settled or claimed by someone else are skipped and
 * say why; each member stays individually correctable.
 * @throws 404 when there is no such event; 400 when `current` names an item outside it
 */
export async function labelCandidateEvent(
  deps: QueueServiceDeps,
  actor: QueuePerson,
  eventId: number,
  body: GroupLabelBody,
): Promise<GroupLabelOutcome[]> {
  const ev = await getCandidateEvent(deps.db, eventId);
  if (!ev) throw notFound(`Candidate event ${eventId}`);
  const current = body.current ?? null;
  if (current && !ev.members.some((m) => m.itemId === current.itemId)) {
    throw badRequest(`current.itemId: item ${current.itemId} is not a member of event group #${eventId}`, { issues: [{ path: 'current.itemId', message: 'not a member of this event group' }] });
  }
  const out: GroupLabelOutcome[] = [];
  for (const m of ev.members) {
    const memberLabel = current && m.itemId === current.itemId ? current.label : groupMemberLabel(eventId, body.eventType, current?.itemId ?? null);
    try {
      let version = m.version;
      if (m.state === 'new' || m.state === 'returned') version = (await claimItem(deps, actor, m.itemId, version)).version;
      else if (m.state !== 'in review') {
        out.push({ itemId: m.itemId, result: 'skipped', reason: `already ${m.state}` });
        continue;
      }
      await labelItem(deps, actor, m.itemId, version, memberLabel);
      out.push({ itemId: m.itemId, result: 'labelled' });
    } catch (err) {
      if (err instanceof AppError && (err.status === 409 || err.status === 404)) out.push({ itemId: m.itemId, result: 'skipped', reason: err.message });
      else throw err;
    }
  }
  return out;
}
