import { index, int, mysqlTable, text, uniqueIndex, varchar } from 'drizzle-orm/mysql-core';
import { idColumn, refColumn, timeColumn } from './columns';
import { queueItems } from './queue-items';
import { stations } from './stations';
import { users } from './users';

/**
 * Candidate events: groups of items from several stations whose first triggers fall within the time
 * the stations' distances allow (server/features/events/candidate-events.ts). The anchor is the earliest
 * member; a group found again in another arrival order has the same anchor.
 */
export const candidateEvents = mysqlTable(
  'candidate_events',
  {
    id: idColumn(),
    anchorItemId: refColumn('anchor_item_id')
      .notNull()
      .references(() => queueItems.id, { onDelete: 'cascade' }),
    firstArrivalAt: timeColumn('first_arrival_at').notNull(),
    lastArrivalAt: timeColumn('last_arrival_at').notNull(),
    stationCount: int('station_count', { unsigned: true }).notNull(),
    memberCount: int('member_count', { unsigned: true }).notNull(),
    version: int('version', { unsigned: true }).notNull().default(1),
    createdAt: timeColumn('created_at').notNull(),
    updatedAt: timeColumn('updated_at').notNull(),
  },
  (t) => [uniqueIndex('candidate_events_anchor_uq').on(t.anchorItemId), index('candidate_events_first_idx').on(t.firstArrivalAt)],
);

/**
 * Each triggered item's first trigger time (window start + first trigger-on of the lead channel)
 * and the candidate event it belongs to, if any. Copied from the analysis once, so grouping never
 * parses analysis JSON again.
 */
export const itemArrivals = mysqlTable(
  'item_arrivals',
  {
    itemId: refColumn('item_id')
      .primaryKey()
      .references(() => queueItems.id, { onDelete: 'cascade' }),
    stationId: refColumn('station_id')
      .notNull()
      .references(() => stations.id, { onDelete: 'cascade' }),
    arrivalAt: timeColumn('arrival_at').notNull(),
    candidateEventId: refColumn('candidate_event_id').references(() => candidateEvents.id, { onDelete: 'set null' }),
  },
  (t) => [index('item_arrivals_arrival_idx').on(t.arrivalAt), index('item_arrivals_event_idx').on(t.candidateEventId)],
);

/**
 * A supervisor's review of a labelled item: the QuakeML evaluation status (confirmed, reviewed,
 * final, rejected; no row = preliminary) and the latest return comment the analyst sees.
 */
export const itemReviews = mysqlTable(
  'item_reviews',
  {
    itemId: refColumn('item_id')
      .primaryKey()
      .references(() => queueItems.id, { onDelete: 'cascade' }),
    evaluationStatus: varchar('evaluation_status', { length: 20 }),
    comment: text('comment'),
    reviewedByUserId: varchar('reviewed_by_user_id', { length: 255 }).references(() => users.id, { onDelete: 'set null' }),
    reviewedAt: timeColumn('reviewed_at'),
    returnComment: text('return_comment'),
    returnedByUserId: varchar('returned_by_user_id', { length: 255 }).references(() => users.id, { onDelete: 'set null' }),
    returnedAt: timeColumn('returned_at'),
  },
  (t) => [index('item_reviews_status_idx').on(t.evaluationStatus, t.reviewedAt)],
);

/** One escalation in one supervisor's inbox: read, acknowledged, then confirmed or returned. */
export const inboxEntries = mysqlTable(
  'inbox_entries',
  {
    id: idColumn(),
    userId: varchar('user_id', { length: 255 })
      .notNull()
      .references(() => users.id, { onDelete: 'cascade' }),
    itemId: refColumn('item_id')
      .notNull()
      .references(() => queueItems.id, { onDelete: 'cascade' }),
    reason: text('reason').notNull(),
    escalatedByUserId: varchar('escalated_by_user_id', { length: 255 }).references(() => users.id, { onDelete: 'set null' }),
    /** Subject line of the e-mail sent for it. */
    subject: varchar('subject', { length: 300 }).notNull(),
    createdAt: timeColumn('created_at').notNull(),
    readAt: timeColumn('read_at'),
    acknowledgedAt: timeColumn('acknowledged_at'),
    /** `confirmed` or `returned` once settled (by this or another supervisor). */
    resolution: varchar('resolution', { length: 20 }),
    resolutionComment: text('resolution_comment'),
    resolvedByUserId: varchar('resolved_by_user_id', { length: 255 }).references(() => users.id, { onDelete: 'set null' }),
    resolvedAt: timeColumn('resolved_at'),
    /** Set when the e-mail could not be sent (the inbox entry still stands). */
    mailError: varchar('mail_error', { length: 500 }),
  },
  (t) => [index('inbox_entries_user_idx').on(t.userId, t.readAt), index('inbox_entries_item_idx').on(t.itemId)],
);
