import { double, index, int, mysqlTable, varchar } from 'drizzle-orm/mysql-core';
import { idColumn, refColumn, timeColumn, jsonColumn } from './columns';
import { stations } from './stations';
import { windows } from './uploads';
import { users } from './users';

/** One review-queue item per analysed window. `version` increases on every change (optimistic locking). */
export const queueItems = mysqlTable(
  'queue_items',
  {
    id: idColumn(),
    windowId: refColumn('window_id')
      .notNull()
      .unique()
      .references(() => windows.id, { onDelete: 'cascade' }),
    stationId: refColumn('station_id')
      .notNull()
      .references(() => stations.id),
    /** Life-cycle state (names of our own; see shared/schemas). */
    state: varchar('state', { length: 20 }).notNull(),
    /** Automatic score and flag as shown when the item was created (re-scoring is explicit). */
    score: double('score').notNull(),
    flag: varchar('flag', { length: 20 }).notNull(),
    reasons: jsonColumn<string[]>('reasons').notNull(),
    /** Window start, copied for sorting and filtering by time. */
    windowStart: timeColumn('window_start').notNull(),
    version: int('version', { unsigned: true }).notNull().default(1),
    claimedByUserId: varchar('claimed_by_user_id', { length: 255 }).references(() => users.id, { onDelete: 'set null' }),
    claimedAt: timeColumn('claimed_at'),
    /** The analyst's label (event type, certainty, picks, note) as JSON, once labelled. */
    label: jsonColumn<unknown>('label'),
    /** The label's QuakeML event type, `noise` for a dismissal, null otherwise (for the label filter; issue 6). */
    labelType: varchar('label_type', { length: 40 }),
    updatedByUserId: varchar('updated_by_user_id', { length: 255 }).references(() => users.id, { onDelete: 'set null' }),
    createdAt: timeColumn('created_at').notNull(),
    updatedAt: timeColumn('updated_at').notNull(),
  },
  (t) => [
    index('queue_items_state_score_idx').on(t.state, t.score),
    index('queue_items_state_created_idx').on(t.state, t.createdAt),
    index('queue_items_station_created_idx').on(t.stationId, t.createdAt),
    index('queue_items_window_start_idx').on(t.windowStart),
    // Issue 6: keyset pages of the queue list (score or age order, id as tie-breaker) under the
    // usual filters. InnoDB ends every secondary index with the primary key, so the two indexes
    // above already order by (state, score, id) and (state, created_at, id); their explicit twins
    // and a (label_type, state) prefix of the label index below were dropped in migration 0010
    // (every insert paid for them).
    index('queue_items_station_state_score_idx').on(t.stationId, t.state, t.score),
    index('queue_items_flag_state_score_idx').on(t.flag, t.state, t.score),
    index('queue_items_state_claimed_idx').on(t.state, t.claimedAt),
    // Issue 9 (a million items): the label filter in score order, and exact per-state counts
    // under a score or time range read from the index alone (covering: every filter column).
    index('queue_items_label_state_score_idx').on(t.labelType, t.state, t.score),
    index('queue_items_state_window_cover_idx').on(t.state, t.windowStart, t.stationId, t.flag, t.labelType, t.score),
    index('queue_items_state_score_cover_idx').on(t.state, t.score, t.stationId, t.flag, t.labelType, t.windowStart),
    // The same under a station filter: only that station's entries in the range are read.
    index('queue_items_station_window_cover_idx').on(t.stationId, t.state, t.windowStart, t.flag, t.labelType, t.score),
  ],
);
