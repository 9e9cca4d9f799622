import { Router } from 'express';
import { createHash } from 'node:crypto';
import { z } from 'zod';
import { changePasswordSchema, type SessionRow } from '@shared/auth/schemas';
import type { AuthKit } from '@server/auth/kit';
import type { AppContext } from '@server/context';
import { notFound } from '@server/errors';
import { currentSession, currentUser, requireUser } from '@server/auth/authenticate';
import { parseInput } from '@server/http/validate';
import { recordAudit } from '@server/features/audit/audit';
import { requestMeta } from './respond';
import { changeOwnPassword } from './sign-in';

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
    await changeOwnPassword({ db, sessions: kit.sessions }, user, session.id, input, requestMeta(req));
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
