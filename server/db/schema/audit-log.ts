import { index, mysqlTable, varchar } from 'drizzle-orm/mysql-core';
import { idColumn, timeColumn, jsonColumn } from './columns';

/** Who did what, on what, when and from where. Rows are only ever added. */
export const auditLog = mysqlTable(
  'audit_log',
  {
    id: idColumn(),
    /** The acting user (null for anonymous attempts and scripts with ingest tokens). */
    actorUserId: varchar('actor_user_id', { length: 255 }),
    /** The acting person's e-mail or the token's label, kept even if the user is later removed. */
    actorLabel: varchar('actor_label', { length: 254 }),
    action: varchar('action', { length: 64 }).notNull(),
    targetType: varchar('target_type', { length: 40 }),
    targetId: varchar('target_id', { length: 255 }),
    details: jsonColumn<unknown>('details'),
    ipAddress: varchar('ip_address', { length: 64 }),
    createdAt: timeColumn('created_at').notNull(),
  },
  (t) => [
    index('audit_log_created_idx').on(t.createdAt),
    index('audit_log_actor_idx').on(t.actorUserId, t.createdAt),
    index('audit_log_action_idx').on(t.action, t.createdAt),
    index('audit_log_target_idx').on(t.targetType, t.targetId),
  ],
);
