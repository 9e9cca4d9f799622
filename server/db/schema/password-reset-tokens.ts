import { index, mysqlTable, varchar } from 'drizzle-orm/mysql-core';
import { idColumn, timeColumn } from './columns';
import { users } from './users';

/** One-time password-reset links; only a SHA-256 hash of each token is stored. */
export const passwordResetTokens = mysqlTable(
  'password_reset_tokens',
  {
    id: idColumn(),
    userId: varchar('user_id', { length: 255 })
      .notNull()
      .references(() => users.id, { onDelete: 'cascade' }),
    tokenHash: varchar('token_hash', { length: 64 }).notNull().unique(),
    createdAt: timeColumn('created_at').notNull(),
    expiresAt: timeColumn('expires_at').notNull(),
    usedAt: timeColumn('used_at'),
    requestedFromIp: varchar('requested_from_ip', { length: 64 }),
  },
  (t) => [index('password_reset_tokens_user_idx').on(t.userId)],
);
