import { and, asc, count, desc, eq, gt, gte, inArray, isNull, lt, lte, or, type SQL } from 'drizzle-orm';
import { z } from 'zod';
import { itemStates, itemStateSchema, type ItemState } from '../../shared/schemas/item-states';
import { compareQueueRows, type QueuePage, type QueueQuery, type QueueRow, type StateCounts } from '../../shared/schemas/queue';
import type { Database } from '../db/client';
import { queueItems } from '../db/schema/queue-items';
import { stations } from '../db/schema/stations';
import { badRequest } from '../errors';
import { presentQueueRow, selectQueueRows } from '../presenters/queue-item';

/**
 * GET /api/queue: filters, keyset ("cursor") pagination and counts per state.
 *
 * Order: `score` = highest score first (score DESC, id DESC); `age` = oldest arrival first
 * (created_at ASC, id ASC). The id breaks ties so every row has one place in the order, and the
 * cursor is the last row's (key, id): the next page is "rows after that pair", which the
 * (state, score, id) and (state, created_at, id) indexes of migration 0004 answer with a range
 * scan instead of an OFFSET that reads and throws away every earlier row. Rows inserted or moved
 * while paging never repeat a row already sent, and never shift later pages.
 */

const cursorSchema = z.object({ s: z.enum(['score', 'age']), v: z.union([z.number(), z.string()]), id: z.number().int() });

/** Encodes a keyset cursor (base64url JSON: sort, key value, id). */
export function encodeCursor(sort: QueueQuery['sort'], row: QueueRow): string {
  const v = sort === 'score' ? row.score : row.createdAt;
  return Buffer.from(JSON.stringify({ s: sort, v, id: row.id })).toString('base64url');
}

/**
 * Decodes a cursor made by `encodeCursor` for the same sort.
 * @throws AppError 400 naming `cursor` when it is not one of ours or belongs to the other sort
 */
export function decodeCursor(sort: QueueQuery['sort'], cursor: string): { v: number | Date; id: number } {
  let parsed: z.infer<typeof cursorSchema>;
  try {
    parsed = cursorSchema.parse(JSON.parse(Buffer.from(cursor, 'base64url').toString('utf8')));
  } catch {
    throw badRequest('cursor: not a cursor from this list (pass nextCursor exactly as received)', { issues: [{ path: 'cursor', message: 'malformed' }] });
  }
  if (parsed.s !== sort) throw badRequest(`cursor: made for sort=${parsed.s}, not sort=${sort}`, { issues: [{ path: 'cursor', message: 'wrong sort' }] });
  if (sort === 'score') {
    if (typeof parsed.v !== 'number') throw badRequest('cursor: malformed score key', { issues: [{ path: 'cursor', message: 'malformed' }] });
    return { v: parsed.v, id: parsed.id };
  }
  const t = typeof parsed.v === 'string' ? new Date(parsed.v) : new Date(NaN);
  if (Number.isNaN(t.getTime())) throw badRequest('cursor: malformed time key', { issues: [{ path: 'cursor', message: 'malformed' }] });
  return { v: t, id: parsed.id };
}

/** Conditions of every filter except `state` (the counts use these alone). */
function baseConditions(q: QueueQuery, scope: 'all' | readonly number[]): SQL[] {
  const c: SQL[] = [];
  if (scope !== 'all') c.push(scope.length > 0 ? inArray(queueItems.stationId, [...scope]) : eq(queueItems.id, -1));
  if (q.station && q.station.length > 0) {
    const parts = q.station.map((s) => {
      const [a, b] = s.split('.');
      return b === undefined ? eq(stations.code, a ?? '') : and(eq(stations.network, a ?? ''), eq(stations.code, b));
    });
    const any = or(...parts);
    if (any) c.push(any);
  }
  if (q.flag && q.flag.length > 0) c.push(inArray(queueItems.flag, q.flag));
  if (q.label && q.label.length > 0) {
    const types = q.label.filter((l) => l !== 'none');
    const parts: SQL[] = [];
    if (types.length > 0) parts.push(inArray(queueItems.labelType, types));
    if (q.label.includes('none')) parts.push(isNull(queueItems.labelType));
    const any = or(...parts);
    if (any) c.push(any);
  }
  if (q.scoreMin !== undefined) c.push(gte(queueItems.score, q.scoreMin));
  if (q.scoreMax !== undefined) c.push(lte(queueItems.score, q.scoreMax));
  if (q.from !== undefined) c.push(gte(queueItems.windowStart, new Date(q.from)));
  if (q.to !== undefined) c.push(lt(queueItems.windowStart, new Date(q.to)));
  return c;
}

/**
 * One page of the queue for a viewer whose station scope is `scope` ('all' or assigned ids).
 * @throws AppError 400 for a bad cursor
 */
export async function listQueue(db: Database, q: QueueQuery, scope: 'all' | readonly number[]): Promise<QueuePage> {
  const base = baseConditions(q, scope);
  const states: ItemState[] = q.state && q.state.length > 0 ? [...new Set(q.state)] : [...itemStates];
  const keyset: SQL[] = [];
  if (q.cursor) {
    const cur = decodeCursor(q.sort, q.cursor);
    const after =
      typeof cur.v === 'number'
        ? or(lt(queueItems.score, cur.v), and(eq(queueItems.score, cur.v), lt(queueItems.id, cur.id)))
        : or(gt(queueItems.createdAt, cur.v), and(eq(queueItems.createdAt, cur.v), gt(queueItems.id, cur.id)));
    if (after) keyset.push(after);
  }
  const order = q.sort === 'score' ? [desc(queueItems.score), desc(queueItems.id)] : [asc(queueItems.createdAt), asc(queueItems.id)];
  // One query per state, merged here: with `state = ?` each reads the (state, score, id) or
  // (state, created_at, id) index in order and stops after limit+1 rows, where `state IN (...)`
  // would sort every matching row (EXPLAIN: "Using filesort") — at a million rows the difference
  // is a few hundred index entries against a sort of most of the table.
  const perState = await Promise.all(
    states.map((state) =>
      selectQueueRows(db)
        .where(and(...base, eq(queueItems.state, state), ...keyset))
        .orderBy(...order)
        .limit(q.limit + 1),
    ),
  );
  const cmp = compareQueueRows(q.sort);
  const merged = perState.flat().map(presentQueueRow).sort(cmp);
  const items = merged.slice(0, q.limit);
  const last = items[items.length - 1];
  const nextCursor = merged.length > q.limit && last ? encodeCursor(q.sort, last) : null;
  const counts = await countByState(db, base, q.station !== undefined && q.station.length > 0);
  const total = states.reduce((sum, s) => sum + counts[s], 0);
  return { items, nextCursor, counts, total };
}

/** Items per state under `conditions` (joined with stations only when a station filter needs it). */
async function countByState(db: Database, conditions: SQL[], needsStations: boolean): Promise<StateCounts> {
  const query = db.select({ state: queueItems.state, n: count() }).from(queueItems);
  const rows = needsStations
    ? await query.innerJoin(stations, eq(stations.id, queueItems.stationId)).where(and(...conditions)).groupBy(queueItems.state)
    : await query.where(and(...conditions)).groupBy(queueItems.state);
  const counts: StateCounts = { new: 0, 'in review': 0, labelled: 0, dismissed: 0, escalated: 0, confirmed: 0, returned: 0 };
  for (const r of rows) {
    const state = itemStateSchema.safeParse(r.state);
    if (state.success) counts[state.data] = r.n;
  }
  return counts;
}
