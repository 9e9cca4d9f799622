import { and, desc, eq, inArray, isNull } from 'drizzle-orm';
import type { z } from 'zod';
import type { Role } from '@shared/auth/roles';
import type { createInvitationSchema, InvitationRow } from '@shared/auth/schemas';
import { hashPassword } from '@server/auth/password';
import type { SessionInfo } from '@server/auth/sessions';
import { generateOneTimeToken, generateUserId, hashOneTimeToken } from '@server/auth/tokens';
import type { Database } from '@server/db/client';
import { invitations } from '@server/db/schema/invitations';
import { stationAssignments, stations } from '@server/db/schema/stations';
import { userRoles, users } from '@server/db/schema/users';
import { invitationLink } from '@server/email/links';
import { invitationMail } from '@server/email/templates/invitation';
import { AppError, badRequest, conflict, notFound } from '@server/errors';
import type { AuthUser } from '@server/auth/principal';
import type { AccountDeps, RequestMeta } from './accounts-deps';
import { recordAudit } from '@server/features/audit/audit';
import { tokenExpired, tokenRevoked, tokenUnknown, tokenUsed } from './one-time-tokens';

/** How long an invitation link works: 72 h (issue 3). */
export const invitationLifetimeMs = 72 * 3600 * 1000;

/** Validated body of POST /api/admin/invitations. */
export type NewInvitation = z.infer<typeof createInvitationSchema>;

/** Station codes (NET.STA) for ids, in id order; 400 naming the first unknown id. */
export async function stationCodesFor(db: Database, ids: readonly number[]): Promise<string[]> {
  if (ids.length === 0) return [];
  const rows = await db.select({ id: stations.id, network: stations.network, code: stations.code }).from(stations).where(inArray(stations.id, [...ids]));
  const byId = new Map(rows.map((r) => [r.id, `${r.network}.${r.code}`]));
  const missing = ids.find((id) => !byId.has(id));
  if (missing !== undefined) throw badRequest(`stationIds: no station with id ${missing}`, { issues: [{ path: 'stationIds', message: `no station with id ${missing}` }] });
  return [...ids].sort((a, b) => a - b).map((id) => byId.get(id) ?? String(id));
}

/**
 * Invites a person: stores a hash of a new 72 h one-time token, withdraws earlier pending
 * invitations to the same address, and mails the link. 409 when the address already has an
 * account; 502 `mail_failed` (and the invitation withdrawn) when the mail cannot be sent.
 */
export async function createInvitation(deps: AccountDeps, actor: AuthUser, input: NewInvitation, meta: RequestMeta): Promise<InvitationRow> {
  const [existing] = await deps.db.select({ id: users.id }).from(users).where(eq(users.email, input.email));
  if (existing) throw conflict(`email: ${input.email} already has a Seisift account`);
  const stationCodes = await stationCodesFor(deps.db, input.stationIds);
  const token = generateOneTimeToken();
  const now = new Date();
  const expiresAt = new Date(now.getTime() + invitationLifetimeMs);
  const id = await deps.db.transaction(async (tx) => {
    await tx
      .update(invitations)
      .set({ revokedAt: now })
      .where(and(eq(invitations.email, input.email), isNull(invitations.acceptedAt), isNull(invitations.revokedAt)));
    const [res] = await tx.insert(invitations).values({
      email: input.email,
      displayName: input.displayName,
      roles: input.roles,
      stationIds: [...input.stationIds].sort((a, b) => a - b),
      tokenHash: hashOneTimeToken(token),
      invitedByUserId: actor.id,
      createdAt: now,
      expiresAt,
    });
    await recordAudit(tx, {
      actor,
      action: 'invitation.created',
      targetType: 'invitation',
      targetId: res.insertId,
      details: { email: input.email, roles: input.roles, stations: stationCodes },
      ip: meta.ip,
    });
    return res.insertId;
  });
  const mail = invitationMail({ displayName: input.displayName, invitedBy: actor.displayName, roles: input.roles, stationCodes, link: invitationLink(deps.env, token), expiresAt });
  try {
    await deps.mailer.send({ to: input.email, ...mail });
  } catch (err) {
    deps.logger.error({ err, invitationId: id }, 'invitation mail could not be sent');
    await deps.db.update(invitations).set({ revokedAt: new Date() }).where(eq(invitations.id, id));
    throw new AppError(502, 'mail_failed', `The invitation mail to ${input.email} could not be sent (${err instanceof Error ? err.message : 'mail server error'}); nothing was kept, try again`);
  }
  const row = (await listInvitations(deps.db)).find((r) => r.id === id);
  if (!row) throw notFound('Invitation');
  return row;
}

function statusOf(r: { acceptedAt: Date | null; revokedAt: Date | null; expiresAt: Date }, now: Date): InvitationRow['status'] {
  if (r.acceptedAt) return 'accepted';
  if (r.revokedAt) return 'revoked';
  return r.expiresAt.getTime() <= now.getTime() ? 'expired' : 'pending';
}

/** Every invitation, newest first, with its status and who sent it. */
export async function listInvitations(db: Database): Promise<InvitationRow[]> {
  const rows = await db
    .select({ inv: invitations, invitedBy: users.email })
    .from(invitations)
    .leftJoin(users, eq(users.id, invitations.invitedByUserId))
    .orderBy(desc(invitations.createdAt), desc(invitations.id))
    .limit(500);
  const now = new Date();
  return rows.map(({ inv, invitedBy }) => ({
    id: inv.id,
    email: inv.email,
    displayName: inv.displayName,
    roles: inv.roles,
    stationIds: inv.stationIds,
    status: statusOf(inv, now),
    invitedBy,
    createdAt: inv.createdAt.toISOString(),
    expiresAt: inv.expiresAt.toISOString(),
  }));
}

/** Withdraws a pending invitation (its link stops working). 404 unknown, 409 when no longer pending. */
export async function revokeInvitation(deps: AccountDeps, actor: AuthUser, id: number, meta: RequestMeta): Promise<void> {
  await deps.db.transaction(async (tx) => {
    const [inv] = await tx.select().from(invitations).where(eq(invitations.id, id)).for('update');
    if (!inv) throw notFound('Invitation');
    const status = statusOf(inv, new Date());
    if (status !== 'pending') throw conflict(`The invitation is already ${status}`);
    await tx.update(invitations).set({ revokedAt: new Date() }).where(eq(invitations.id, id));
    await recordAudit(tx, { actor, action: 'invitation.revoked', targetType: 'invitation', targetId: id, details: { email: inv.email }, ip: meta.ip });
  });
}

type InvitationRecord = typeof invitations.$inferSelect;

function checkUsable(inv: InvitationRecord | undefined, now: Date): InvitationRecord {
  if (!inv) throw tokenUnknown('invitation');
  if (inv.acceptedAt) throw tokenUsed('invitation');
  if (inv.revokedAt) throw tokenRevoked('invitation');
  if (inv.expiresAt.getTime() <= now.getTime()) throw tokenExpired('invitation', inv.expiresAt);
  return inv;
}

/** What the welcome page shows before the person sets a password; 404/410 for unusable links. */
export async function inspectInvitation(db: Database, token: string): Promise<{ email: string; displayName: string; roles: Role[]; expiresAt: string }> {
  const [row] = await db.select().from(invitations).where(eq(invitations.tokenHash, hashOneTimeToken(token)));
  const inv = checkUsable(row, new Date());
  return { email: inv.email, displayName: inv.displayName, roles: inv.roles, expiresAt: inv.expiresAt.toISOString() };
}

/**
 * Accepts an invitation: creates the account with the invited roles and stations and the chosen
 * password, marks the invitation used (row lock: a link works exactly once, even for two requests
 * at the same moment) and opens a session.
 */
export async function acceptInvitation(deps: AccountDeps, input: { token: string; password: string; displayName?: string | undefined }, meta: RequestMeta): Promise<{ session: SessionInfo; userId: string }> {
  const passwordHash = await hashPassword(input.password);
  const userId = generateUserId();
  await deps.db.transaction(async (tx) => {
    const [row] = await tx.select().from(invitations).where(eq(invitations.tokenHash, hashOneTimeToken(input.token))).for('update');
    const inv = checkUsable(row, new Date());
    const [taken] = await tx.select({ id: users.id }).from(users).where(eq(users.email, inv.email));
    if (taken) throw conflict(`${inv.email} already has a Seisift account; sign in instead`);
    const now = new Date();
    const displayName = input.displayName ?? inv.displayName;
    await tx.insert(users).values({ id: userId, email: inv.email, displayName, passwordHash, active: true, createdAt: now, updatedAt: now });
    if (inv.roles.length) await tx.insert(userRoles).values(inv.roles.map((role) => ({ userId, role })));
    if (inv.stationIds.length) {
      const present = await tx.select({ id: stations.id }).from(stations).where(inArray(stations.id, inv.stationIds));
      if (present.length) await tx.insert(stationAssignments).values(present.map((s) => ({ userId, stationId: s.id })));
    }
    await tx.update(invitations).set({ acceptedAt: now, acceptedUserId: userId }).where(eq(invitations.id, inv.id));
    await recordAudit(tx, { actor: { id: userId, email: inv.email }, action: 'invitation.accepted', targetType: 'invitation', targetId: inv.id, details: { roles: inv.roles, stationIds: inv.stationIds }, ip: meta.ip });
  });
  const session = await deps.sessions.create(userId, { ipAddress: meta.ip, userAgent: meta.userAgent });
  return { session, userId };
}
