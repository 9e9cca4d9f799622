import { eq, type SQL } from 'drizzle-orm';
import { alias } from 'drizzle-orm/mysql-core';
import type { QueueRow } from '@shared/schemas/queue';
import type { DbOrTx } from '@server/db/client';
import { queueItems } from '@server/db/schema/queue-items';
import { stations } from '@server/db/schema/stations';
import { candidateEvents, itemArrivals } from '@server/db/schema/supervisor';
import { users } from '@server/db/schema/users';
import { presentQueueRow } from './presenters';

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

/** The station of a queue item, or null when there is no such item (for the station-scope check). */
export async function itemStationId(db: DbOrTx, itemId: number): Promise<number | null> {
  const [row] = await db.select({ stationId: queueItems.stationId }).from(queueItems).where(eq(queueItems.id, itemId));
  return row?.stationId ?? null;
}
