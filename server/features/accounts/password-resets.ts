import { and, eq, isNull } from 'drizzle-orm';
import { hashPassword } from '@server/auth/password';
import type { SessionInfo } from '@server/auth/sessions';
import { generateOneTimeToken, hashOneTimeToken } from '@server/auth/tokens';
import type { Database } from '@server/db/client';
import { passwordResetTokens } from '@server/db/schema/password-reset-tokens';
import { users } from '@server/db/schema/users';
import { resetLink } from '@server/email/links';
import { passwordResetMail } from '@server/email/templates/password-reset';
import type { AuthLimiters } from '@server/auth/rate-limit';
import type { AccountDeps, RequestMeta } from './accounts-deps';
import { recordAudit } from '@server/features/audit/audit';
import { tokenExpired, tokenUnknown, tokenUsed } from './one-time-tokens';

/** How long a reset link works: 1 h (issue 3). */
export const resetLifetimeMs = 3600 * 1000;

/**
 * The rate limits of "forgot password", per address and per e-mail as typed (429), checked
 * before the request is answered: they cost the same whether or not the account exists.
 */
export async function limitPasswordResetRequests(limiters: AuthLimiters, email: string, meta: RequestMeta): Promise<void> {
  await limiters.resetByAddress.consume(meta.ip ?? 'unknown');
  await limiters.resetByAccount.consume(email);
}

/**
 * "Forgot password": when `email` belongs to an active account, stores a hash of a new 1 h
 * one-time token (earlier unused links of that account stop working) and mails the link. The
 * route runs it AFTER answering (202, the same words for any address), so neither the answer nor
 * its timing says whether the account exists: the lookup, the token and the mail (the slow part)
 * happen once the response is sent. Errors are logged, never reported to the requester.
 */
export async function requestPasswordReset(deps: AccountDeps, email: string, meta: RequestMeta): Promise<void> {
  const [user] = await deps.db.select({ id: users.id, email: users.email, displayName: users.displayName, active: users.active }).from(users).where(eq(users.email, email));
  await recordAudit(deps.db, {
    // Nobody is signed in: the requester is known only by the address they typed.
    actor: { id: null, label: email },
    action: 'auth.password_reset_requested',
    targetType: 'user',
    targetId: user?.id ?? null,
    details: { email, known: Boolean(user?.active) },
    ip: meta.ip,
  });
  if (!user || !user.active) return;
  const token = generateOneTimeToken();
  const now = new Date();
  const expiresAt = new Date(now.getTime() + resetLifetimeMs);
  await deps.db.transaction(async (tx) => {
    await tx.update(passwordResetTokens).set({ usedAt: now }).where(and(eq(passwordResetTokens.userId, user.id), isNull(passwordResetTokens.usedAt)));
    await tx.insert(passwordResetTokens).values({ userId: user.id, tokenHash: hashOneTimeToken(token), createdAt: now, expiresAt, requestedFromIp: meta.ip?.slice(0, 64) ?? null });
  });
  try {
    await deps.mailer.send({ to: user.email, ...passwordResetMail({ displayName: user.displayName, link: resetLink(deps.env, token), expiresAt }) });
  } catch (err) {
    // Not reported to the requester (that would tell whether the account exists); logged for the admin.
    deps.logger.error({ err, userId: user.id }, 'password reset mail could not be sent');
  }
}

type ResetRecord = typeof passwordResetTokens.$inferSelect;

function checkUsable(row: ResetRecord | undefined, now: Date): ResetRecord {
  if (!row) throw tokenUnknown('password reset');
  if (row.usedAt) throw tokenUsed('password reset');
  if (row.expiresAt.getTime() <= now.getTime()) throw tokenExpired('password reset', row.expiresAt);
  return row;
}

/** Which account a reset link is for (the page shows the address); 404/410 for unusable links. */
export async function inspectPasswordReset(db: Database, token: string): Promise<{ email: string; expiresAt: string }> {
  const [row] = await db
    .select({ t: passwordResetTokens, email: users.email })
    .from(passwordResetTokens)
    .innerJoin(users, eq(users.id, passwordResetTokens.userId))
    .where(eq(passwordResetTokens.tokenHash, hashOneTimeToken(token)));
  const t = checkUsable(row?.t, new Date());
  return { email: row?.email ?? '', expiresAt: t.expiresAt.toISOString() };
}

/**
 * Sets a new password from a reset link: the link is used up (row lock, so it works once), every
 * session of the account ends, and one new session opens for this browser.
 */
export async function resetPassword(deps: AccountDeps, input: { token: string; password: string }, meta: RequestMeta): Promise<{ session: SessionInfo; userId: string }> {
  const passwordHash = await hashPassword(input.password);
  const user = await deps.db.transaction(async (tx) => {
    const [row] = await tx.select().from(passwordResetTokens).where(eq(passwordResetTokens.tokenHash, hashOneTimeToken(input.token))).for('update');
    const t = checkUsable(row, new Date());
    const [u] = await tx.select({ id: users.id, email: users.email, active: users.active }).from(users).where(eq(users.id, t.userId));
    if (!u || !u.active) throw tokenUnknown('password reset');
    const now = new Date();
    await tx.update(passwordResetTokens).set({ usedAt: now }).where(eq(passwordResetTokens.id, t.id));
    await tx.update(users).set({ passwordHash, updatedAt: now }).where(eq(users.id, u.id));
    await recordAudit(tx, { actor: { id: u.id, email: u.email }, action: 'auth.password_reset', targetType: 'user', targetId: u.id, details: { otherSessionsEnded: true }, ip: meta.ip });
    return u;
  });
  await deps.sessions.endAllForUser(user.id);
  const session = await deps.sessions.create(user.id, { ipAddress: meta.ip, userAgent: meta.userAgent });
  return { session, userId: user.id };
}
