import { datetime, index, mysqlTable, varchar } from 'drizzle-orm/mysql-core';
import { timeColumn } from './columns';
import { users } from './users';

/** Sign-in sessions (lucia's session table, plus where and when each began). */
export const sessions = mysqlTable(
  'sessions',
  {
    id: varchar('id', { length: 255 }).primaryKey(),
    userId: varchar('user_id', { length: 255 })
      .notNull()
      .references(() => users.id, { onDelete: 'cascade' }),
    expiresAt: datetime('expires_at').notNull(),
    createdAt: timeColumn('created_at'),
    ipAddress: varchar('ip_address', { length: 64 }),
    userAgent: varchar('user_agent', { length: 255 }),
  },
  (t) => [index('sessions_user_idx').on(t.userId)],
);
