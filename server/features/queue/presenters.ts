import { eq, type SQL } from 'drizzle-orm';
import { alias } from 'drizzle-orm/mysql-core';
import { flagSchema } from '@shared/schemas/flags';
import { itemStateSchema } from '@shared/schemas/item-states';
import type { QueueRow } from '@shared/schemas/queue';
import type { DbOrTx } from '@server/db/client';
import { queueItems } from '@server/db/schema/queue-items';
import { stations } from '@server/db/schema/stations';
import { candidateEvents, itemArrivals } from '@server/db/schema/supervisor';
import { users } from '@server/db/schema/users';

const claimer = alias(users, 'claimer');
const updater = alias(users, 'updater');

/**
 * The columns a queue row is built from (item, station codes, claimer and last writer names, and
 * the candidate event the item belongs to, if any).
 */
export const queueRowColumns = {
  id: queueItems.id,
  state: queueItems.state,
  score: queueItems.score,
  flag: queueItems.flag,
  reasons: queueItems.reasons,
  network: stations.network,
  stationCode: stations.code,
  stationId: queueItems.stationId,
  windowStart: queueItems.windowStart,
  createdAt: queueItems.createdAt,
  updatedAt: queueItems.updatedAt,
  version: queueItems.version,
  claimedById: queueItems.claimedByUserId,
  claimedByName: claimer.displayName,
  claimedAt: queueItems.claimedAt,
  updatedById: queueItems.updatedByUserId,
  updatedByName: updater.displayName,
  labelType: queueItems.labelType,
  candidateEventId: candidateEvents.id,
  candidateStationCount: candidateEvents.stationCount,
};

/** One record selected with `queueRowColumns`. */
export type QueueRowRecord = {
  id: number;
  state: string;
  score: number;
  flag: string;
  reasons: string[];
  network: string;
  stationCode: string;
  stationId: number;
  windowStart: Date;
  createdAt: Date;
  updatedAt: Date;
  version: number;
  claimedById: string | null;
  claimedByName: string | null;
  claimedAt: Date | null;
  updatedById: string | null;
  updatedByName: string | null;
  labelType: string | null;
  candidateEventId: number | null;
  candidateStationCount: number | null;
};

/**
 * A select of queue rows with the joins `queueRowColumns` needs; add where/order/limit. The
 * candidate-event joins go by primary keys (item_arrivals.item_id, candidate_events.id), so they
 * cost one index lookup per selected row: keep the where on the page's ids.
 * @param db a database handle or an open transaction
 */
export function selectQueueRows(db: DbOrTx) {
  return db
    .select(queueRowColumns)
    .from(queueItems)
    .innerJoin(stations, eq(stations.id, queueItems.stationId))
    .leftJoin(claimer, eq(claimer.id, queueItems.claimedByUserId))
    .leftJoin(updater, eq(updater.id, queueItems.updatedByUserId))
    .leftJoin(itemArrivals, eq(itemArrivals.itemId, queueItems.id))
    .leftJoin(candidateEvents, eq(candidateEvents.id, itemArrivals.candidateEventId));
}

/**
 * Loads one queue row, or null.
 * @param db a database handle or an open transaction (inside a write, the row as that write left it)
 */
export async function loadQueueRow(db: DbOrTx, where: SQL): Promise<QueueRow | null> {
  const [record] = await selectQueueRows(db).where(where).limit(1);
  return record ? presentQueueRow(record) : null;
}

/**
 * The wire shape of a queue row (shared/schemas/queue.ts `queueRowSchema`): times as ISO 8601 UTC
 * with milliseconds, the station as `NET.STA`, people as id + display name, the candidate event as
 * id + station count.
 * @throws Error when the stored state or flag is not one of ours (a corrupt row)
 */
export function presentQueueRow(r: QueueRowRecord): QueueRow {
  return {
    id: r.id,
    state: itemStateSchema.parse(r.state),
    score: r.score,
    flag: flagSchema.parse(r.flag),
    reasons: r.reasons,
    station: `${r.network}.${r.stationCode}`,
    stationId: r.stationId,
    windowStart: r.windowStart.toISOString(),
    createdAt: r.createdAt.toISOString(),
    updatedAt: r.updatedAt.toISOString(),
    version: r.version,
    claimedBy: r.claimedById ? { id: r.claimedById, displayName: r.claimedByName ?? 'a removed user' } : null,
    claimedAt: r.claimedAt ? r.claimedAt.toISOString() : null,
    updatedBy: r.updatedById ? { id: r.updatedById, displayName: r.updatedByName ?? 'a removed user' } : null,
    labelType: r.labelType,
    candidateEvent: r.candidateEventId !== null ? { id: r.candidateEventId, stationCount: r.candidateStationCount ?? 0 } : null,
  };
}
