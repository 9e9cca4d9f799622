import { Router } from 'express';
import { acceptInvitationSchema, forgotPasswordSchema, resetPasswordSchema, signInSchema, tokenCheckSchema, type Me } from '@shared/auth/schemas';
import type { AuthKit } from '@server/auth/kit';
import type { AppContext } from '@server/context';
import { currentSession, currentUser, optionalUser, requireUser } from '@server/auth/authenticate';
import type { AuthUser } from '@server/auth/principal';
import { parseInput } from '@server/http/validate';
import { recordAudit } from '@server/features/audit/audit';
import { acceptInvitation, inspectInvitation } from './invitations';
import { inspectPasswordReset, limitPasswordResetRequests, requestPasswordReset, resetPassword } from './password-resets';
import { signIn } from './sign-in';
import { accountDeps, clearSessionCookie, requestMeta, setSessionCookie } from './respond';

/**
 * /api/auth: sign-in, sign-out, who am I, forgot/reset password, invitations. Everything here but
 * /me and /sign-out works without a session. Tokens from mail links travel in request bodies,
 * never in URLs, so they stay out of access logs.
 */
export function authRouter(ctx: AppContext, kit: AuthKit): Router {
  const router = Router();
  const deps = accountDeps(ctx, kit);

  /** POST /api/auth/sign-in {email, password} → 200 {user} + session cookie; 401 sign_in_failed; 429. */
  router.post('/sign-in', async (req, res) => {
    const input = parseInput(signInSchema, req.body);
    const { session } = await signIn(deps, kit.limiters, input, requestMeta(req));
    setSessionCookie(req, res, kit.sessions, session);
    res.json({ ok: true });
  });

  /** POST /api/auth/sign-out → 204; ends this session. */
  router.post('/sign-out', requireUser, async (req, res) => {
    const user = currentUser(req);
    const session = currentSession(req);
    await kit.sessions.end(session.id);
    await recordAudit(ctx.database.db, { actor: user, action: 'auth.sign_out', targetType: 'user', targetId: user.id, ip: requestMeta(req).ip });
    clearSessionCookie(req, res, kit.sessions);
    res.status(204).end();
  });

  const meOf = (user: AuthUser): Me => ({
    user: { id: user.id, email: user.email, displayName: user.displayName, roles: user.roles, stationIds: user.stationIds },
    mailbox: ctx.mailer.kind === 'fake',
  });

  /** GET /api/auth/me → 200 {user, mailbox}; 401 when nobody is signed in. */
  router.get('/me', requireUser, (req, res) => {
    res.json(meOf(currentUser(req)));
  });

  /**
   * GET /api/auth/session → 200 {session: {user, mailbox} | null}: the client's probe at start, so
   * a signed-out visitor is an answer, not an error.
   */
  router.get('/session', (req, res) => {
    const user = optionalUser(req);
    res.setHeader('Cache-Control', 'no-store');
    res.json({ session: user ? meOf(user) : null });
  });

  /**
   * POST /api/auth/forgot-password {email} → 202, the same answer in the same time whether or not
   * the account exists: it is sent before the account is even looked up; the token and the mail
   * follow (requestPasswordReset). 429 over the limits, checked alike for every address.
   */
  router.post('/forgot-password', async (req, res) => {
    const { email } = parseInput(forgotPasswordSchema, req.body);
    const meta = requestMeta(req);
    await limitPasswordResetRequests(kit.limiters, email, meta);
    res.status(202).json({ message: 'If that address has an active Seisift account, a reset link is on its way. It works for 1 hour.' });
    // 'close' follows the answer (or a client that hung up): the reset goes ahead either way.
    res.once('close', () => {
      requestPasswordReset(deps, email, meta).catch((err: unknown) => ctx.logger.error({ err }, 'password reset request failed after the answer'));
    });
  });

  /** POST /api/auth/reset-password/check {token} → 200 {email, expiresAt}; 404/410 for unusable links. */
  router.post('/reset-password/check', async (req, res) => {
    const { token } = parseInput(tokenCheckSchema, req.body);
    res.json(await inspectPasswordReset(ctx.database.db, token));
  });

  /** POST /api/auth/reset-password {token, password} → 200 + new session cookie; every other session ends. */
  router.post('/reset-password', async (req, res) => {
    const input = parseInput(resetPasswordSchema, req.body);
    const { session } = await resetPassword(deps, input, requestMeta(req));
    setSessionCookie(req, res, kit.sessions, session);
    res.json({ ok: true });
  });

  /** POST /api/auth/invitations/check {token} → 200 {email, displayName, roles, expiresAt}; 404/410. */
  router.post('/invitations/check', async (req, res) => {
    const { token } = parseInput(tokenCheckSchema, req.body);
    res.json(await inspectInvitation(ctx.database.db, token));
  });

  /** POST /api/auth/invitations/accept {token, password, displayName?} → 201 + session cookie; 404/409/410. */
  router.post('/invitations/accept', async (req, res) => {
    const input = parseInput(acceptInvitationSchema, req.body);
    const { session } = await acceptInvitation(deps, input, requestMeta(req));
    setSessionCookie(req, res, kit.sessions, session);
    res.status(201).json({ ok: true });
  });

  return router;
}
