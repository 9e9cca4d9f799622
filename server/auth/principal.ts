import { eq } from 'drizzle-orm';
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
