import { bigint, index, int, mysqlTable, tinyint, varchar } from 'drizzle-orm/mysql-core';
import type { ChangeAudience } from '@shared/realtime';
import { jsonColumn, refColumn, timeColumn } from './columns';

/**
 * Every change to a queue item (or another live resource), in commit order. `seq` is assigned from
 * the single `change_counter` row, locked until the writing transaction commits, so the order of
 * `seq` is the order in which changes became visible: a client that resumes after seq N misses none.
 */
export const changeLog = mysqlTable(
  'change_log',
  {
    seq: bigint('seq', { mode: 'number', unsigned: true }).primaryKey(),
    /** What changed: `item` (queue item) or another live resource name. */
    resource: varchar('resource', { length: 30 }).notNull(),
    resourceId: refColumn('resource_id').notNull(),
    /** `created`, `updated`, `deleted`. */
    kind: varchar('kind', { length: 20 }).notNull(),
    /** The resource's version after the change. */
    version: int('version', { unsigned: true }).notNull(),
    /** A small summary sent with the hint so clients can patch lists without a refetch storm. */
    summary: jsonColumn<Record<string, unknown>>('summary'),
    /**
     * Who may see the change (action, stations, user): the hub filters every socket through the
     * policy module with it, so no query per client. Never sent. Null (rows older than migration
     * 0011 it could not fill in) reaches nobody.
     */
    audience: jsonColumn<ChangeAudience>('audience'),
    createdAt: timeColumn('created_at').notNull(),
  },
  (t) => [index('change_log_created_idx').on(t.createdAt), index('change_log_resource_idx').on(t.resource, t.resourceId)],
);

/** One row (id 1) whose `seq` is the last sequence number handed out. */
export const changeCounter = mysqlTable('change_counter', {
  id: tinyint('id', { unsigned: true }).primaryKey(),
  seq: bigint('seq', { mode: 'number', unsigned: true }).notNull(),
});
