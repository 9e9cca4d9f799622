import { boolean, index, mysqlTable, primaryKey, varchar } from 'drizzle-orm/mysql-core';
import type { Role } from '@shared/auth/roles';
import { timeColumn } from './columns';

/** People who sign in. The id is a random string (lucia's user id). */
export const users = mysqlTable('users', {
  id: varchar('id', { length: 255 }).primaryKey(),
  email: varchar('email', { length: 254 }).notNull().unique(),
  displayName: varchar('display_name', { length: 120 }).notNull(),
  /** argon2id PHC string; null until an invited person sets a password. */
  passwordHash: varchar('password_hash', { length: 255 }),
  active: boolean('active').notNull().default(true),
  createdAt: timeColumn('created_at').notNull(),
  updatedAt: timeColumn('updated_at').notNull(),
});

/** The roles each user holds (one row per role). */
export const userRoles = mysqlTable(
  'user_roles',
  {
    userId: varchar('user_id', { length: 255 })
      .notNull()
      .references(() => users.id, { onDelete: 'cascade' }),
    role: varchar('role', { length: 20 }).$type<Role>().notNull(),
  },
  (t) => [primaryKey({ columns: [t.userId, t.role] }), index('user_roles_role_idx').on(t.role)],
);
