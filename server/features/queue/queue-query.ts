import { and, asc, count, desc, eq, gt, gte, inArray, isNull, lt, lte, or, sql, type SQL } from 'drizzle-orm';
import { z } from 'zod';
import { itemStates, itemStateSchema, type ItemState } from '@shared/schemas/item-states';
import { compareQueueRows, type QueuePage, type QueueQuery, type QueueRow, type StateCounts } from '@shared/schemas/queue';
import type { Database } from '@server/db/client';
import { queueCounts } from '@server/db/schema/queue-counts';
import { queueItems } from '@server/db/schema/queue-items';
import { stations } from '@server/db/schema/stations';
import { badRequest } from '@server/errors';
import { presentQueueRow } from './presenters';
import { selectQueueRows } from './queue-rows';

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

/** Most per-part queries of one page (states × stations × flags × labels) before the parts are merged. */
const MAX_PARTS = 64;

/**
 * Under a time range, a state with at most this many matching items is read through the
 * (state, window_start, …) index and sorted (at most this many index entries), rather than by
 * walking its score or age index.
 */
const FEW_IN_RANGE = 20_000;

/** Which ranges a query has: a time range (`from`/`to`) and a score range (`scoreMin`/`scoreMax`). */
function rangesOf(q: QueueQuery): { time: boolean; score: boolean } {
  return { time: q.from !== undefined || q.to !== undefined, score: q.scoreMin !== undefined || q.scoreMax !== undefined };
}

/**
 * Index hints for a page part under a time or score range (none without one). Under a time range
 * MariaDB otherwise walks the score or age index and looks up every row to test window_start:
 * - few matches (≤ FEW_IN_RANGE): read the range through a (…, state, window_start, …) index, from
 *   the index alone, and sort what it finds;
 * - many, in score order without a station: walk (state, score, …, window_start), which covers
 *   the test, so no row is looked up.
 * Under a score range alone, see the comment inside.
 */
function indexHint(ranges: { time: boolean; score: boolean }, matches: number, p: Part, sort: QueueQuery['sort']): { forceIndex: string[] } | undefined {
  if (!ranges.time) {
    // A score range alone, on a part that is just a state: MariaDB 10.11.18 was seen to read the
    // (state, score, …) cover index by `state = ?` only (type ref, every entry of the state: 552 000
    // for `new` in bench:queue, 250 ms) instead of as a range on (state, score). Forcing the
    // (state, score[, id]) index makes it a range in index order that the LIMIT stops (0.6 ms).
    if (ranges.score && sort === 'score' && p.stationId === null && p.flag === null && p.label === null) return { forceIndex: ['queue_items_state_score_idx'] };
    return undefined;
  }
  if (matches <= FEW_IN_RANGE) return { forceIndex: ['queue_items_state_window_cover_idx', 'queue_items_station_window_cover_idx'] };
  if (sort === 'score' && p.stationId === null) return { forceIndex: ['queue_items_state_score_cover_idx'] };
  return undefined;
}

/** The station ids a `station` filter names (`KV01` any network, or `XX.KV01`). */
async function stationIdsFor(db: Database, keys: readonly string[]): Promise<number[]> {
  const parts = keys.map((s) => {
    const [a, b] = s.split('.');
    return b === undefined ? eq(stations.code, a ?? '') : and(eq(stations.network, a ?? ''), eq(stations.code, b));
  });
  const rows = await db.select({ id: stations.id }).from(stations).where(or(...parts));
  return rows.map((r) => r.id);
}

/** The label filter's condition for one value (`none`: no label). */
const labelIs = (l: string): SQL => (l === 'none' ? isNull(queueItems.labelType) : eq(queueItems.labelType, l));

/** Conditions on queue_items' own columns for the score and time ranges. */
function rangeConditions(q: QueueQuery): SQL[] {
  const c: SQL[] = [];
  if (q.scoreMin !== undefined) c.push(gte(queueItems.score, q.scoreMin));
  if (q.scoreMax !== undefined) c.push(lte(queueItems.score, q.scoreMax));
  if (q.from !== undefined) c.push(gte(queueItems.windowStart, new Date(q.from)));
  if (q.to !== undefined) c.push(lt(queueItems.windowStart, new Date(q.to)));
  return c;
}

/** One part of a page: a state and, where the query filters them, one station, flag and label. */
interface Part {
  state: ItemState;
  stationId: number | null;
  flag: string | null;
  label: string | null;
}

/**
 * The parts of a page. Each part's query has equality conditions only on the leading columns of
 * one of the (state, score, id), (state, created_at, id), (station_id, state, score),
 * (flag, state, score) or (label_type, state, score) indexes, so it reads that index in order and
 * stops after limit+1 entries; an `IN` list instead would make MariaDB sort every matching row.
 * When the product of the lists is too large, the lists stay `IN` conditions, per state.
 */
function pagePlan(states: readonly ItemState[], stationIds: readonly number[] | 'all', q: QueueQuery): { parts: Part[]; shared: SQL[] } {
  const stationList: Array<number | null> = stationIds === 'all' ? [null] : [...stationIds];
  const flagList: Array<string | null> = q.flag && q.flag.length > 0 ? [...new Set(q.flag)] : [null];
  const labelList: Array<string | null> = q.label && q.label.length > 0 ? [...new Set(q.label)] : [null];
  const shared = rangeConditions(q);
  if (states.length * stationList.length * flagList.length * labelList.length <= MAX_PARTS) {
    const parts: Part[] = [];
    for (const state of states) for (const stationId of stationList) for (const flag of flagList) for (const label of labelList) parts.push({ state, stationId, flag, label });
    return { parts, shared };
  }
  if (stationIds !== 'all') shared.push(inArray(queueItems.stationId, [...stationIds]));
  if (q.flag && q.flag.length > 0) shared.push(inArray(queueItems.flag, q.flag));
  if (q.label && q.label.length > 0) {
    const any = or(...q.label.map(labelIs));
    if (any) shared.push(any);
  }
  return { parts: states.map((state) => ({ state, stationId: null, flag: null, label: null })), shared };
}

const partConditions = (p: Part): SQL[] => {
  const c: SQL[] = [eq(queueItems.state, p.state)];
  if (p.stationId !== null) c.push(eq(queueItems.stationId, p.stationId));
  if (p.flag !== null) c.push(eq(queueItems.flag, p.flag));
  if (p.label !== null) c.push(labelIs(p.label));
  return c;
};

/** Rows of the page-parts statement: id and sort key (score, or created_at as a Date). */
const partRowsSchema = z.array(
  z.object({
    id: z.coerce.number().int(),
    // A DATETIME(3) in a UNION comes back as its UTC text ('2026-03-14 01:00:00.000').
    k: z.union([z.number(), z.date().transform((d) => d.getTime()), z.string().transform((t) => Date.parse(`${t.replace(' ', 'T')}Z`))]),
  }),
);

/** Rows of the per-state COUNT statement. */
const countRowsSchema = z.array(z.object({ st: z.string(), n: z.coerce.number().int() }));

const emptyCounts = (): StateCounts => ({ new: 0, 'in review': 0, labelled: 0, dismissed: 0, escalated: 0, confirmed: 0, returned: 0 });

/**
 * One page of the queue for a viewer whose station scope is `scope` ('all' or assigned ids).
 *
 * 1. The station filter and the scope become station ids (the 6-row stations table, once).
 * 2. The page's ids come from queue_items alone, one index-ordered `ORDER BY … LIMIT limit+1`
 *    query per part (`pagePlan`), merged here. The cursor condition is `key <= v AND (key < v OR
 *    id < cursorId)` (mirrored for age order), which the index answers as a range starting at the
 *    cursor; the id breaks ties.
 * 3. Only those ids are joined with stations and users (`selectQueueRows`).
 * 4. Counts per state: from queue_counts (kept exact by triggers, migration 0006) unless a score or
 *    time range is given; then an exact COUNT per state over the covering
 *    (state, window_start, …) / (state, score, …) indexes, reading only the entries in range.
 * @throws AppError 400 for a bad cursor
 */
export async function listQueue(db: Database, q: QueueQuery, scope: 'all' | readonly number[]): Promise<QueuePage> {
  const states: ItemState[] = q.state && q.state.length > 0 ? [...new Set(q.state)] : [...itemStates];
  const cur = q.cursor ? decodeCursor(q.sort, q.cursor) : null;
  let stationIds: readonly number[] | 'all' = scope === 'all' ? 'all' : [...new Set(scope)];
  if (q.station && q.station.length > 0) {
    const named = await stationIdsFor(db, q.station);
    stationIds = stationIds === 'all' ? named : stationIds.filter((id) => named.includes(id));
  }
  if (stationIds !== 'all' && stationIds.length === 0) return { items: [], nextCursor: null, counts: emptyCounts(), total: 0 };

  const keyset: SQL[] = [];
  if (cur) {
    const after =
      typeof cur.v === 'number'
        ? and(lte(queueItems.score, cur.v), or(lt(queueItems.score, cur.v), lt(queueItems.id, cur.id)))
        : and(gte(queueItems.createdAt, cur.v), or(gt(queueItems.createdAt, cur.v), gt(queueItems.id, cur.id)));
    if (after) keyset.push(after);
  }
  const order = q.sort === 'score' ? [desc(queueItems.score), desc(queueItems.id)] : [asc(queueItems.createdAt), asc(queueItems.id)];
  // The counts come first: a state with no matching item needs no page query, and a state with
  // few matches under a time range is read by that range (the index on (state, window_start, …))
  // and sorted, where walking the score or age index would pass over most of the state's rows.
  const counts = await countByState(db, q, stationIds);
  const ranges = rangesOf(q);
  const { parts, shared } = pagePlan(
    states.filter((st) => counts[st] > 0),
    stationIds,
    q,
  );
  // All parts in ONE statement (`(…) UNION ALL (…)`, each part keeping its own ORDER BY … LIMIT),
  // so a page costs one round trip however many parts it has.
  const statements = parts.map((p) => {
    const hint = indexHint(ranges, counts[p.state], p, q.sort);
    const key = q.sort === 'score' ? queueItems.score : queueItems.createdAt;
    const part = db
      .select({ id: queueItems.id, k: sql`${key}`.as('k') })
      .from(queueItems, hint)
      .where(and(...partConditions(p), ...shared, ...keyset))
      .orderBy(...order)
      .limit(q.limit + 1);
    return sql`${part}`; // drizzle puts a subquery in parentheses
  });
  const keys: Array<{ id: number; key: number }> = [];
  if (statements.length > 0) {
    const [raw] = await db.execute(sql.join(statements, sql` UNION ALL `));
    for (const r of partRowsSchema.parse(raw)) keys.push({ id: r.id, key: r.k });
  }
  keys.sort(q.sort === 'score' ? (a, b) => b.key - a.key || b.id - a.id : (a, b) => a.key - b.key || a.id - b.id);
  const ids = keys.slice(0, q.limit + 1).map((k) => k.id);
  const rows = ids.length > 0 ? (await selectQueueRows(db).where(inArray(queueItems.id, ids))).map(presentQueueRow) : [];
  const merged = rows.sort(compareQueueRows(q.sort));
  const items = merged.slice(0, q.limit);
  const last = items[items.length - 1];
  const nextCursor = merged.length > q.limit && last ? encodeCursor(q.sort, last) : null;
  const total = states.reduce((sum, s) => sum + counts[s], 0);
  return { items, nextCursor, counts, total };
}

/** Items per state under every filter except `state` (exact; see `listQueue` step 4). */
async function countByState(db: Database, q: QueueQuery, stationIds: readonly number[] | 'all'): Promise<StateCounts> {
  const counts = emptyCounts();
  const labels = q.label && q.label.length > 0 ? q.label : null;
  const flags = q.flag && q.flag.length > 0 ? q.flag : null;
  const ranges = rangesOf(q);
  if (!ranges.time && !ranges.score) {
    const c: SQL[] = [];
    if (stationIds !== 'all') c.push(inArray(queueCounts.stationId, [...stationIds]));
    if (flags) c.push(inArray(queueCounts.flag, flags));
    if (labels) c.push(inArray(queueCounts.labelKey, labels.map((l) => (l === 'none' ? '' : l))));
    const rows = await db
      .select({ state: queueCounts.state, n: sql<string | number>`SUM(${queueCounts.n})` })
      .from(queueCounts)
      .where(and(...c))
      .groupBy(queueCounts.state);
    for (const r of rows) {
      const state = itemStateSchema.safeParse(r.state);
      if (state.success) counts[state.data] = Number(r.n);
    }
    return counts;
  }
  const c = rangeConditions(q);
  if (stationIds !== 'all') c.push(inArray(queueItems.stationId, [...stationIds]));
  if (flags) c.push(inArray(queueItems.flag, flags));
  if (labels) {
    const any = or(...labels.map(labelIs));
    if (any) c.push(any);
  }
  // One COUNT per state (`state = ?` plus the range is a range scan of a covering index), all in
  // one UNION ALL statement: one round trip. With a score range and no time range the
  // (state, score, station, flag, label, window_start) index is forced: it covers every filter,
  // and without the hint MariaDB 10.11.18 read it by `state = ?` alone (see `indexHint`).
  const hint = !ranges.time ? { forceIndex: ['queue_items_state_score_cover_idx'] } : undefined;
  const parts = itemStates.map((state) => sql`${db.select({ state: sql`${state}`.as('st'), n: count().as('n') }).from(queueItems, hint).where(and(eq(queueItems.state, state), ...c))}`);
  const [raw] = await db.execute(sql.join(parts, sql` UNION ALL `));
  for (const r of countRowsSchema.parse(raw)) {
    const state = itemStateSchema.safeParse(r.st);
    if (state.success) counts[state.data] = r.n;
  }
  return counts;
}
