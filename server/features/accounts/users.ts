import { and, asc, count, eq, gt, inArray, ne } from 'drizzle-orm';
import type { Role } from '@shared/auth/roles';
import type { AdminUser, StationOption } from '@shared/auth/schemas';
import { sessions } from '@server/db/schema/sessions';
import { stationAssignments, stations } from '@server/db/schema/stations';
import { userRoles, users } from '@server/db/schema/users';
import type { Database, Transaction } from '@server/db/client';
import { conflict, notFound } from '@server/errors';
import type { AuthUser } from '@server/auth/principal';
import type { AccountDeps, RequestMeta } from './accounts-deps';
import { recordAudit } from '@server/features/audit/audit';
import { stationCodesFor } from './invitations';

/** Every user with roles, stations and the number of open sessions, by e-mail. */
export async function listUsers(db: Database): Promise<AdminUser[]> {
  const rows = await db.select().from(users).orderBy(asc(users.email));
  const roleRows = await db.select().from(userRoles);
  const stationRows = await db.select().from(stationAssignments);
  const sessionRows = await db.select({ userId: sessions.userId, n: count() }).from(sessions).where(gt(sessions.expiresAt, new Date())).groupBy(sessions.userId);
  const sessionsBy = new Map(sessionRows.map((r) => [r.userId, r.n]));
  return rows.map((u) => ({
    id: u.id,
    email: u.email,
    displayName: u.displayName,
    roles: roleRows.filter((r) => r.userId === u.id).map((r) => r.role).sort(),
    stationIds: stationRows.filter((r) => r.userId === u.id).map((r) => r.stationId).sort((a, b) => a - b),
    active: u.active,
    hasPassword: u.passwordHash !== null,
    sessions: sessionsBy.get(u.id) ?? 0,
    createdAt: u.createdAt.toISOString(),
  }));
}

/** Every station, for the assignment controls. */
export async function listStationOptions(db: Database): Promise<StationOption[]> {
  return db.select({ id: stations.id, network: stations.network, code: stations.code, name: stations.name }).from(stations).orderBy(asc(stations.network), asc(stations.code));
}

async function loadTarget(tx: Transaction, userId: string) {
  const [u] = await tx.select({ id: users.id, email: users.email, active: users.active }).from(users).where(eq(users.id, userId)).for('update');
  if (!u) throw notFound('User');
  return u;
}

/** Other active admins besides `userId` (an admin may not lock everybody out). */
async function otherActiveAdmins(tx: Transaction, userId: string): Promise<number> {
  const [row] = await tx
    .select({ n: count() })
    .from(userRoles)
    .innerJoin(users, eq(users.id, userRoles.userId))
    .where(and(eq(userRoles.role, 'admin'), eq(users.active, true), ne(users.id, userId)));
  return row?.n ?? 0;
}

/**
 * Replaces a user's roles. Ends all of that user's sessions at once, so the change applies on the
 * next request. 409 when it would leave no active admin.
 */
export async function setUserRoles(deps: AccountDeps, actor: AuthUser, userId: string, roles: Role[], meta: RequestMeta): Promise<void> {
  await deps.db.transaction(async (tx) => {
    const target = await loadTarget(tx, userId);
    const before = (await tx.select({ role: userRoles.role }).from(userRoles).where(eq(userRoles.userId, userId))).map((r) => r.role).sort();
    const after = [...new Set(roles)].sort();
    if (before.includes('admin') && !after.includes('admin') && target.active && (await otherActiveAdmins(tx, userId)) === 0)
      throw conflict('roles: this is the last active admin; make someone else admin first');
    await tx.delete(userRoles).where(eq(userRoles.userId, userId));
    if (after.length) await tx.insert(userRoles).values(after.map((role) => ({ userId, role })));
    await recordAudit(tx, { actor, action: 'user.roles_changed', targetType: 'user', targetId: userId, details: { email: target.email, before, after }, ip: meta.ip });
  });
  await deps.sessions.endAllForUser(userId);
}

/** Replaces the stations assigned to a user (any user may hold them; they matter for operators). */
export async function setUserStations(deps: AccountDeps, actor: AuthUser, userId: string, stationIds: number[], meta: RequestMeta): Promise<void> {
  const ids = [...new Set(stationIds)].sort((a, b) => a - b);
  const codes = await stationCodesFor(deps.db, ids);
  await deps.db.transaction(async (tx) => {
    const target = await loadTarget(tx, userId);
    const before = (await tx.select({ id: stationAssignments.stationId }).from(stationAssignments).where(eq(stationAssignments.userId, userId))).map((r) => r.id).sort((a, b) => a - b);
    await tx.delete(stationAssignments).where(eq(stationAssignments.userId, userId));
    if (ids.length) await tx.insert(stationAssignments).values(ids.map((stationId) => ({ userId, stationId })));
    await recordAudit(tx, { actor, action: 'user.stations_changed', targetType: 'user', targetId: userId, details: { email: target.email, before, after: ids, stations: codes }, ip: meta.ip });
  });
}

/**
 * Deactivates (`active=false`: every session ends at once, sign-in refused) or reactivates a
 * user. 409 for deactivating yourself or the last active admin.
 */
export async function setUserActive(deps: AccountDeps, actor: AuthUser, userId: string, active: boolean, meta: RequestMeta): Promise<void> {
  if (!active && userId === actor.id) throw conflict('You cannot deactivate your own account');
  await deps.db.transaction(async (tx) => {
    const target = await loadTarget(tx, userId);
    if (target.active === active) return;
    if (!active) {
      const [isAdmin] = await tx.select({ role: userRoles.role }).from(userRoles).where(and(eq(userRoles.userId, userId), inArray(userRoles.role, ['admin'])));
      if (isAdmin && (await otherActiveAdmins(tx, userId)) === 0) throw conflict('This is the last active admin; make someone else admin first');
    }
    await tx.update(users).set({ active, updatedAt: new Date() }).where(eq(users.id, userId));
    await recordAudit(tx, { actor, action: active ? 'user.reactivated' : 'user.deactivated', targetType: 'user', targetId: userId, details: { email: target.email }, ip: meta.ip });
  });
  if (!active) await deps.sessions.endAllForUser(userId);
}
