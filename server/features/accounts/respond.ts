import type { Request, Response } from 'express';
import type { SessionInfo, SessionStore } from '@server/auth/sessions';
import type { AppContext } from '@server/context';
import { clientAddress, isSecureRequest } from '@server/auth/authenticate';
import type { AccountDeps, RequestMeta } from './accounts-deps';
import type { AuthKit } from '@server/auth/kit';

/** Client address and user agent of a request, for sessions and audit rows. */
export function requestMeta(req: Request): RequestMeta {
  const ua = req.headers['user-agent'];
  return { ip: clientAddress(req), userAgent: typeof ua === 'string' ? ua : null };
}

/** Sets the session cookie (HttpOnly, SameSite=Lax, Secure over https). */
export function setSessionCookie(req: Request, res: Response, sessions: SessionStore, session: SessionInfo): void {
  const cookie = sessions.cookie(session.id, isSecureRequest(req));
  res.cookie(cookie.name, cookie.value, cookie.options);
}

/** Clears the session cookie. */
export function clearSessionCookie(req: Request, res: Response, sessions: SessionStore): void {
  const cookie = sessions.blankCookie(isSecureRequest(req));
  res.cookie(cookie.name, cookie.value, cookie.options);
}

/** The services' dependencies from the app context and the auth kit. */
export function accountDeps(ctx: AppContext, kit: AuthKit): AccountDeps {
  return { db: ctx.database.db, sessions: kit.sessions, mailer: ctx.mailer, env: ctx.env, logger: ctx.logger };
}
