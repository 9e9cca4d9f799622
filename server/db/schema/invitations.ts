import { index, mysqlTable, varchar } from 'drizzle-orm/mysql-core';
import type { Role } from '@shared/auth/roles';
import { idColumn, jsonColumn, timeColumn } from './columns';
import { users } from './users';

/**
 * Invitations by e-mail. Only a SHA-256 hash of the one-time token is stored; the token itself is
 * only ever in the mail. An invitation is used once (accepted_at) or withdrawn (revoked_at).
 */
export const invitations = mysqlTable(
  'invitations',
  {
    id: idColumn(),
    email: varchar('email', { length: 254 }).notNull(),
    displayName: varchar('display_name', { length: 120 }).notNull(),
    roles: jsonColumn<Role[]>('roles').notNull(),
    /** Stations to assign (operators), by id. */
    stationIds: jsonColumn<number[]>('station_ids').notNull(),
    tokenHash: varchar('token_hash', { length: 64 }).notNull().unique(),
    invitedByUserId: varchar('invited_by_user_id', { length: 255 }).references(() => users.id, { onDelete: 'set null' }),
    createdAt: timeColumn('created_at').notNull(),
    expiresAt: timeColumn('expires_at').notNull(),
    acceptedAt: timeColumn('accepted_at'),
    acceptedUserId: varchar('accepted_user_id', { length: 255 }).references(() => users.id, { onDelete: 'set null' }),
    revokedAt: timeColumn('revoked_at'),
  },
  (t) => [index('invitations_email_idx').on(t.email), index('invitations_created_idx').on(t.createdAt)],
);
