import { and, eq, gte, inArray, lte, ne, sql } from 'drizzle-orm';
import { queueItems } from '@server/db/schema/queue-items';
import { itemArrivals } from '@server/db/schema/supervisor';
import { windows } from '@server/db/schema/uploads';
import { loadQueueRow } from '@server/features/queue/queue-rows';
import { itemAudience, recordChange } from '@server/realtime/change-log';
import type { DbOrTx } from '@server/db/client';

/**
 * Network coincidence: one station's flag weighed by what the neighbours recorded (common practice:
 * a network detection needs several stations within travel-time limits).
 *
 * - Raise: a member of a candidate event (≥ minStations stations with travel-time consistent
 *   arrivals) that the engine left at `needs eyes` although its own trigger was strong (robust z of
 *   the STA/LTA peak ≥ RAISE_MIN_Z) and free of data problems becomes `likely event`, with the reason.
 *   A member the engine called `likely noise` (its trigger no stronger than a noisy station's
 *   ordinary noise: a road, a river) becomes `needs eyes`: the network recorded an event at the
 *   moment it triggered, so a person should look.
 * - Lower: a `likely event` whose arrival joined no candidate event while at least
 *   LONE_MIN_QUIET_STATIONS other stations recorded that moment (their windows cover the arrival
 *   ± the allowed lag) without an arrival of their own becomes `needs eyes`, with the reason.
 * Only items still waiting for an analyst (`new`) change; each change is a new item version,
 * recorded in the change log like any other, so every open queue sees it live.
 */

/** The robust z of the STA/LTA peak a member needs before coincidence raises it (the profile's default eventZ). */
export const RAISE_MIN_Z = 3;
/** How many quiet neighbours it takes to lower a lone trigger. */
export const LONE_MIN_QUIET_STATIONS = 2;

const DATA_PROBLEM_WORDS = /quality problem|data problem/;

async function reflag(tx: DbOrTx, item: { id: number; version: number; score: number; reasons: string[] }, flag: 'likely event' | 'needs eyes', reason: string, scoreDelta: number, now: Date): Promise<boolean> {
  const [res] = await tx
    .update(queueItems)
    .set({ flag, reasons: [...item.reasons, reason], score: Math.round((item.score + scoreDelta) * 10) / 10, version: sql`${queueItems.version} + 1`, updatedAt: now })
    .where(and(eq(queueItems.id, item.id), eq(queueItems.version, item.version), eq(queueItems.state, 'new')));
  if (res.affectedRows !== 1) return false;
  const fresh = await loadQueueRow(tx, eq(queueItems.id, item.id));
  if (fresh) await recordChange(tx, { resource: 'item', resourceId: item.id, kind: 'updated', version: fresh.version, summary: fresh, audience: itemAudience(fresh.stationId) });
  return true;
}

/**
 * Raises the members of candidate event `eventId` that the engine left at `needs eyes` with a strong,
 * clean trigger to `likely event`, and those it left at `likely noise` to `needs eyes` (see the
 * module comment). Runs inside the transaction that stores the group.
 * @returns the ids raised
 */
export async function raiseByCoincidence(tx: DbOrTx, eventId: number, itemIds: readonly number[], stationCount: number, now: Date): Promise<number[]> {
  if (itemIds.length === 0) return [];
  const rows = await tx
    .select({ id: queueItems.id, version: queueItems.version, score: queueItems.score, reasons: queueItems.reasons, flag: queueItems.flag, z: sql<unknown>`JSON_EXTRACT(${windows.analysis}, '$.zStaLtaPeak')` })
    .from(queueItems)
    .innerJoin(windows, eq(windows.id, queueItems.windowId))
    .where(and(inArray(queueItems.id, [...itemIds]), inArray(queueItems.flag, ['needs eyes', 'likely noise']), eq(queueItems.state, 'new')));
  const raised: number[] = [];
  for (const r of rows) {
    if (r.reasons.some((x) => DATA_PROBLEM_WORDS.test(x))) continue;
    const group = `network coincidence: part of event group #${eventId} — ${stationCount} stations with arrivals within travel-time limits`;
    if (r.flag === 'likely noise') {
      if (await reflag(tx, r, 'needs eyes', `${group}; raised from likely noise: this station's own noise hides its trigger, the network does not`, 1, now)) raised.push(r.id);
      continue;
    }
    const z = Number(typeof r.z === 'string' ? JSON.parse(r.z) : r.z);
    if (!(z >= RAISE_MIN_Z)) continue;
    if (await reflag(tx, r, 'likely event', `${group}; raised from needs eyes`, 2, now)) raised.push(r.id);
  }
  return raised;
}

/**
 * Lowers item `itemId` from `likely event` to `needs eyes` when its arrival joined no candidate event
 * and at least LONE_MIN_QUIET_STATIONS other stations recorded that moment without an arrival
 * within `lagS` of it (see the module comment).
 * @returns whether the item was lowered
 */
export async function lowerLoneTrigger(tx: DbOrTx, itemId: number, stationId: number, arrivalAt: Date, lagS: number, now: Date): Promise<boolean> {
  const [item] = await tx
    .select({ id: queueItems.id, version: queueItems.version, score: queueItems.score, reasons: queueItems.reasons, flag: queueItems.flag, state: queueItems.state })
    .from(queueItems)
    .where(eq(queueItems.id, itemId));
  if (!item || item.flag !== 'likely event' || item.state !== 'new') return false;
  const lo = new Date(arrivalAt.getTime() - lagS * 1000);
  const hi = new Date(arrivalAt.getTime() + lagS * 1000);
  const covering = await tx
    .selectDistinct({ stationId: windows.stationId })
    .from(windows)
    .where(and(ne(windows.stationId, stationId), lte(windows.startTime, lo), gte(windows.endTime, hi)));
  if (covering.length < LONE_MIN_QUIET_STATIONS) return false;
  const heard = await tx
    .selectDistinct({ stationId: itemArrivals.stationId })
    .from(itemArrivals)
    .where(and(ne(itemArrivals.stationId, stationId), gte(itemArrivals.arrivalAt, lo), lte(itemArrivals.arrivalAt, hi)));
  const heardIds = new Set(heard.map((h) => h.stationId));
  const quiet = covering.filter((c) => !heardIds.has(c.stationId)).length;
  if (quiet < LONE_MIN_QUIET_STATIONS || heardIds.size > 0) return false;
  const reason = `lone trigger: ${quiet} other stations recorded this moment (±${lagS.toFixed(1)} s) and none triggered; lowered from likely event`;
  return reflag(tx, item, 'needs eyes', reason, -2, now);
}
