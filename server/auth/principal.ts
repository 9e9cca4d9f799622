import { eq, inArray } from 'drizzle-orm';
import type { Role } from '@shared/auth/roles';
import type { Database } from '@server/db/client';
import { stationAssignments } from '@server/db/schema/stations';
import { userRoles, users } from '@server/db/schema/users';

/** A signed-in person, as handlers and the policy module see them. */
export type AuthUser = {
  id: string;
  email: string;
  displayName: string;
  roles: Role[];
  /** Stations assigned to this user (operators), ascending ids. */
  stationIds: number[];
};

/**
 * A script authenticated by a per-station ingest token (issue 5). The token may act only for its
 * own station; no person is behind it.
 */
export type IngestPrincipal = { tokenId: number; stationId: number; label: string };

/** Loads a user with roles and station assignments; null when missing or deactivated. */
export async function loadAuthUser(db: Database, userId: string): Promise<AuthUser | null> {
  const [row] = await db
    .select({ id: users.id, email: users.email, displayName: users.displayName, active: users.active })
    .from(users)
    .where(eq(users.id, userId));
  if (!row || !row.active) return null;
  const roleRows = await db.select({ role: userRoles.role }).from(userRoles).where(eq(userRoles.userId, userId));
  const stationRows = await db.select({ stationId: stationAssignments.stationId }).from(stationAssignments).where(eq(stationAssignments.userId, userId));
  return {
    id: row.id,
    email: row.email,
    displayName: row.displayName,
    roles: roleRows.map((r) => r.role).sort(),
    stationIds: stationRows.map((r) => r.stationId).sort((a, b) => a - b),
  };
}

/**
 * Roles and assigned stations of the ACTIVE users among `userIds` (deactivated and unknown users
 * are missing from the map), in three queries whatever the number of users: the live hub's
 * re-check of its sockets.
 */
export async function loadActiveRights(db: Database, userIds: readonly string[]): Promise<Map<string, { roles: Role[]; stationIds: number[] }>> {
  const ids = [...new Set(userIds)];
  const out = new Map<string, { roles: Role[]; stationIds: number[] }>();
  if (ids.length === 0) return out;
  const rows = await db.select({ id: users.id, active: users.active }).from(users).where(inArray(users.id, ids));
  for (const row of rows) if (row.active) out.set(row.id, { roles: [], stationIds: [] });
  if (out.size === 0) return out;
  const roleRows = await db.select({ userId: userRoles.userId, role: userRoles.role }).from(userRoles).where(inArray(userRoles.userId, [...out.keys()]));
  const stationRows = await db.select({ userId: stationAssignments.userId, stationId: stationAssignments.stationId }).from(stationAssignments).where(inArray(stationAssignments.userId, [...out.keys()]));
  for (const r of roleRows) out.get(r.userId)?.roles.push(r.role);
  for (const r of stationRows) out.get(r.userId)?.stationIds.push(r.stationId);
  for (const v of out.values()) {
    v.roles.sort();
    v.stationIds.sort((a, b) => a - b);
  }
  return out;
}
