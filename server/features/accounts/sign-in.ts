import { setTimeout as sleep } from 'node:timers/promises';
import { eq } from 'drizzle-orm';
import { hashPassword, verifyPassword } from '@server/auth/password';
import type { SessionInfo } from '@server/auth/sessions';
import { users } from '@server/db/schema/users';
import { AppError } from '@server/errors';
import { progressiveDelayMs, type AuthLimiters } from '@server/auth/rate-limit';
import type { AccountDeps, RequestMeta } from './accounts-deps';
import { recordAudit } from '@server/features/audit/audit';

/** The one answer for an unknown e-mail, a wrong password or a deactivated account. */
export const signInRefused = () => new AppError(401, 'sign_in_failed', 'E-mail or password is not right');

let dummyHash: Promise<string> | null = null;
/** A hash to verify against when the account is unknown, so both answers take as long. */
function timingDummy(): Promise<string> {
  dummyHash ??= hashPassword('seisift-timing-equaliser-not-a-password');
  return dummyHash;
}

/**
 * Checks e-mail and password and opens a session. Throttling as the OWASP Authentication Cheat
 * Sheet ("Login Throttling", "Account Lockout") describes, with no lock-out anybody else can cause:
 * - every attempt counts against the client address (429 + Retry-After over the limit);
 * - failed attempts count against the account AND address (429 for that account from that
 *   address only; reset when it succeeds), so the owner signing in from elsewhere is not refused;
 * - failed attempts count against the account from any address, and each attempt on an account
 *   with failures past the free ones waits `progressiveDelayMs` BEFORE the password is checked
 *   (so a guesser cannot learn the answer sooner by hanging up early). The attempt is counted
 *   while it waits, so a burst of parallel guesses waits longer and longer, and taken back if it
 *   succeeds.
 * The keys are the address and the e-mail as typed (lower-cased), whether or not an account has
 * it, so the answers reveal nothing more. Records success and failure in the audit log. Throws
 * `signInRefused()` for every kind of wrong sign-in.
 */
export async function signIn(deps: AccountDeps, limiters: AuthLimiters, input: { email: string; password: string }, meta: RequestMeta): Promise<{ session: SessionInfo; userId: string }> {
  const address = meta.ip ?? 'unknown';
  const pairKey = `${input.email}|${address}`;
  await limiters.signInByAddress.consume(address);
  await limiters.signInByAccountAddress.check(pairKey);
  const failures = await limiters.signInFailuresByAccount.count(input.email);
  await limiters.signInFailuresByAccount.add(input.email);
  const delayMs = progressiveDelayMs(failures, limiters.slowdown);
  if (delayMs > 0) await sleep(delayMs);
  const [user] = await deps.db
    .select({ id: users.id, email: users.email, passwordHash: users.passwordHash, active: users.active })
    .from(users)
    .where(eq(users.email, input.email));
  const ok = user?.passwordHash ? await verifyPassword(user.passwordHash, input.password) : await verifyPassword(await timingDummy(), input.password).then(() => false);
  if (!user || !ok || !user.active) {
    await limiters.signInByAccountAddress.consume(pairKey).catch(() => {});
    const reason = !user ? 'unknown_email' : !ok ? 'wrong_password' : 'deactivated';
    await recordAudit(deps.db, { actor: user ? { id: user.id, email: user.email } : { id: null, label: input.email }, action: 'auth.sign_in_failed', targetType: 'user', targetId: user?.id ?? null, details: { email: input.email, reason, delayMs }, ip: meta.ip });
    throw signInRefused();
  }
  await limiters.signInByAccountAddress.reset(pairKey);
  await limiters.signInFailuresByAccount.remove(input.email);
  const session = await deps.sessions.create(user.id, { ipAddress: meta.ip, userAgent: meta.userAgent });
  await recordAudit(deps.db, { actor: { id: user.id, email: user.email }, action: 'auth.sign_in', targetType: 'session', targetId: null, details: { userAgent: meta.userAgent, ...(delayMs > 0 ? { delayMs } : {}) }, ip: meta.ip });
  return { session, userId: user.id };
}

/**
 * A signed-in person changes their own password: the current one must match and the new one must
 * differ (400 naming the field otherwise). Every other session of theirs ends; audited as
 * `auth.password_changed`.
 */
export async function changeOwnPassword(
  deps: Pick<AccountDeps, 'db' | 'sessions'>,
  user: { id: string; email: string },
  currentSessionId: string,
  input: { currentPassword: string; newPassword: string },
  meta: RequestMeta,
): Promise<void> {
  const [row] = await deps.db.select({ passwordHash: users.passwordHash }).from(users).where(eq(users.id, user.id));
  if (!row?.passwordHash || !(await verifyPassword(row.passwordHash, input.currentPassword)))
    throw new AppError(400, 'validation_failed', 'currentPassword: is not your current password', { issues: [{ path: 'currentPassword', message: 'is not your current password' }] });
  if (input.newPassword === input.currentPassword) throw new AppError(400, 'validation_failed', 'newPassword: must differ from the current password', { issues: [{ path: 'newPassword', message: 'must differ from the current password' }] });
  await deps.db.update(users).set({ passwordHash: await hashPassword(input.newPassword), updatedAt: new Date() }).where(eq(users.id, user.id));
  await deps.sessions.endOthersForUser(user.id, currentSessionId);
  await recordAudit(deps.db, { actor: user, action: 'auth.password_changed', targetType: 'user', targetId: user.id, details: { otherSessionsEnded: true }, ip: meta.ip });
}
