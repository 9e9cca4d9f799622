import { eq } from 'drizzle-orm';
import { Router } from 'express';
import { createHash } from 'node:crypto';
import { z } from 'zod';
import { changePasswordSchema, type SessionRow } from '@shared/auth/schemas';
import type { AuthKit } from '@server/auth/kit';
import { hashPassword, verifyPassword } from '@server/auth/password';
import type { AppContext } from '@server/context';
import { users } from '@server/db/schema/users';
import { AppError, notFound } from '@server/errors';
import { currentSession, currentUser, requireUser } from '@server/auth/authenticate';
import { parseInput } from '@server/http/validate';
import { recordAudit } from '@server/features/audit/audit';
import { requestMeta } from './respond';

/** Params of DELETE /api/account/sessions/:id: a session handle (32 hex digits), never the cookie secret. */
export const sessionParams = z.object({ id: z.string().regex(/^[0-9a-f]{32}$/, 'is not a session handle') });

/**
 * The public handle of a session: the first 32 hex digits of SHA-256 of its id. The id itself is
 * the cookie secret and never leaves the server except in that cookie.
 */
export function sessionHandle(sessionId: string): string {
  return createHash('sha256').update(sessionId).digest('hex').slice(0, 32);
}

/** /api/account: the signed-in person's own password and sessions (any role). */
export function accountRouter(ctx: AppContext, kit: AuthKit): Router {
  const router = Router();
  const db = ctx.database.db;
  router.use(requireUser);

  /** PUT /api/account/password {currentPassword, newPassword} → 204; other sessions end. */
  router.put('/password', async (req, res) => {
    const user = currentUser(req);
    const session = currentSession(req);
    const input = parseInput(changePasswordSchema, req.body);
    const [row] = await db.select({ passwordHash: users.passwordHash }).from(users).where(eq(users.id, user.id));
    if (!row?.passwordHash || !(await verifyPassword(row.passwordHash, input.currentPassword)))
      throw new AppError(400, 'validation_failed', 'currentPassword: is not your current password', { issues: [{ path: 'currentPassword', message: 'is not your current password' }] });
    if (input.newPassword === input.currentPassword) throw new AppError(400, 'validation_failed', 'newPassword: must differ from the current password', { issues: [{ path: 'newPassword', message: 'must differ from the current password' }] });
    await db.update(users).set({ passwordHash: await hashPassword(input.newPassword), updatedAt: new Date() }).where(eq(users.id, user.id));
    await kit.sessions.endOthersForUser(user.id, session.id);
    await recordAudit(db, { actor: user, action: 'auth.password_changed', targetType: 'user', targetId: user.id, details: { otherSessionsEnded: true }, ip: requestMeta(req).ip });
    res.status(204).end();
  });

  /** GET /api/account/sessions → 200 {sessions: SessionRow[]}; `id` is a handle, not the cookie secret. */
  router.get('/sessions', async (req, res) => {
    const user = currentUser(req);
    const current = currentSession(req);
    const list = await kit.sessions.listForUser(user.id);
    const sessions: SessionRow[] = list
      .filter((s) => s.expiresAt.getTime() > Date.now())
      .map((s) => ({
        id: sessionHandle(s.id),
        current: s.id === current.id,
        createdAt: s.createdAt.toISOString(),
        expiresAt: s.expiresAt.toISOString(),
        ipAddress: s.ipAddress,
        userAgent: s.userAgent,
      }));
    res.json({ sessions });
  });

  /** DELETE /api/account/sessions/:id → 204; ends one of your own sessions by handle (404 for anyone else's). */
  router.delete('/sessions/:id', async (req, res) => {
    const user = currentUser(req);
    const { id } = parseInput(sessionParams, req.params, 'params');
    const own = (await kit.sessions.listForUser(user.id)).find((s) => sessionHandle(s.id) === id);
    if (!own) throw notFound('Session');
    await kit.sessions.end(own.id);
    await recordAudit(db, { actor: user, action: 'auth.session_ended', targetType: 'user', targetId: user.id, details: { current: own.id === currentSession(req).id }, ip: requestMeta(req).ip });
    res.status(204).end();
  });

  /** DELETE /api/account/sessions → 204; ends every session of yours except this one. */
  router.delete('/sessions', async (req, res) => {
    const user = currentUser(req);
    await kit.sessions.endOthersForUser(user.id, currentSession(req).id);
    await recordAudit(db, { actor: user, action: 'auth.session_ended', targetType: 'user', targetId: user.id, details: { allOthers: true }, ip: requestMeta(req).ip });
    res.status(204).end();
  });

  return router;
}
