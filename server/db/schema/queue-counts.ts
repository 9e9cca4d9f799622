import { bigint, index, mysqlTable, primaryKey, varchar } from 'drizzle-orm/mysql-core';
import { refColumn } from './columns';

/**
 * Items per (station, state, flag, label type), kept exact by database triggers on queue_items
 * (migration 0006: after insert, update and delete), so every writer — ingest, queue transitions,
 * the claim-lapse job, supervisor returns and confirmations, re-scoring, bulk loads — changes it in
 * its own transaction, and the queue list's per-state counts read a few hundred rows instead of
 * counting a million. `label_key` is the item's `label_type`, or '' when that is null (a primary
 * key column cannot be null). Rows whose count has fallen to 0 may stay.
 */
export const queueCounts = mysqlTable(
  'queue_counts',
  {
    stationId: refColumn('station_id').notNull(),
    state: varchar('state', { length: 20 }).notNull(),
    flag: varchar('flag', { length: 20 }).notNull(),
    labelKey: varchar('label_key', { length: 40 }).notNull(),
    n: bigint('n', { mode: 'number' }).notNull().default(0),
  },
  (t) => [
    primaryKey({ columns: [t.stationId, t.state, t.flag, t.labelKey] }),
    // Covering: the per-state sums read this index alone, whichever filters are given.
    index('queue_counts_state_cover_idx').on(t.state, t.flag, t.labelKey, t.stationId, t.n),
  ],
);
