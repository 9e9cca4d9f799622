import { and, eq, inArray, isNotNull, ne, sql, type SQL } from 'drizzle-orm';
import type { LatestWindows } from '@shared/schemas/data-period';
import type { Database } from '@server/db/client';
import { queueItems } from '@server/db/schema/queue-items';

/**
 * The window start of the latest queue item and of the latest labelled event (the rows the review
 * list shows: labelled or confirmed, with an event type other than noise), over every station or
 * one. MAX over `queue_items_window_start_idx` / the station index.
 * @param stationId limit to this station; left out, every station
 */
export async function latestWindows(db: Database, stationId?: number): Promise<LatestWindows> {
  const station: SQL | undefined = stationId === undefined ? undefined : eq(queueItems.stationId, stationId);
  const maxStart = sql<Date | string | null>`MAX(${queueItems.windowStart})`;
  const [any] = await db.select({ at: maxStart }).from(queueItems).where(station);
  const [labelled] = await db
    .select({ at: maxStart })
    .from(queueItems)
    .where(and(station, inArray(queueItems.state, ['labelled', 'confirmed']), isNotNull(queueItems.labelType), ne(queueItems.labelType, 'noise')));
  return { latestWindowStart: iso(any?.at ?? null), latestLabelledWindowStart: iso(labelled?.at ?? null) };
}

/** A MAX() result as ISO 8601 UTC (mysql2 returns a raw aggregate as a Date or, for DATETIME(n), a string read as UTC). */
function iso(v: Date | string | null): string | null {
  if (v === null) return null;
  if (v instanceof Date) return v.toISOString();
  const t = Date.parse(/[zZ]|[+-]\d\d:?\d\d$/.test(v) ? v : `${v.replace(' ', 'T')}Z`);
  return Number.isNaN(t) ? null : new Date(t).toISOString();
}
