import type { NextFunction, Request, RequestHandler, Response } from 'express';
import type { SessionInfo, SessionStore } from './sessions';
import { loadAuthUser, type AuthUser, type IngestPrincipal } from './principal';
import type { Database } from '@server/db/client';
import { unauthorized } from '@server/errors';

/** Who made a request: a session user, an ingest token, or nobody. */
export type RequestAuth =
  | { kind: 'user'; user: AuthUser; session: SessionInfo }
  | { kind: 'ingest'; ingest: IngestPrincipal }
  | { kind: 'anonymous' };

/**
 * Resolves `Authorization: Bearer <token>` to an ingest principal, or null when the token is
 * unknown or revoked. Issue 5 supplies it (hash the token with SHA-256, look it up in
 * ingest_tokens) and passes it to `authenticate` in server/app.ts.
 */
export type BearerResolver = (token: string, req: Request) => Promise<IngestPrincipal | null>;

const requestAuth = new WeakMap<Request, RequestAuth>();

/** Whether the request came over https (directly, or per X-Forwarded-Proto from a proxy TRUST_PROXY names). */
export function isSecureRequest(req: Request): boolean {
  return req.secure;
}

/**
 * Mounted once before every /api router: reads the session cookie (or, once issue 5 passes a
 * resolver, an ingest token) and records who is asking. Never refuses by itself; `requireUser`
 * and the policy wrappers do. A valid session past its half-life gets a renewed cookie (sliding
 * expiry); a session of a deactivated user is ended.
 */
export function authenticate(deps: { db: Database; sessions: SessionStore; bearer?: BearerResolver }): RequestHandler {
  return async (req: Request, res: Response, next: NextFunction) => {
    requestAuth.set(req, { kind: 'anonymous' });
    const header = req.headers.authorization;
    const bearer = typeof header === 'string' && /^Bearer\s+/i.test(header) ? header.replace(/^Bearer\s+/i, '').trim() : null;
    if (bearer !== null) {
      // Hook for issue 5: per-station ingest tokens. Without a resolver a bearer token is refused.
      const ingest = deps.bearer ? await deps.bearer(bearer, req) : null;
      if (!ingest) return next(unauthorized('The ingest token is not valid (unknown or revoked)'));
      requestAuth.set(req, { kind: 'ingest', ingest });
      return next();
    }
    const sessionId = deps.sessions.readCookie(req.headers.cookie);
    if (!sessionId) return next();
    const session = await deps.sessions.validate(sessionId);
    const secure = isSecureRequest(req);
    if (!session) {
      const blank = deps.sessions.blankCookie(secure);
      res.cookie(blank.name, blank.value, blank.options);
      return next();
    }
    const user = await loadAuthUser(deps.db, session.userId);
    if (!user) {
      await deps.sessions.endAllForUser(session.userId);
      const blank = deps.sessions.blankCookie(secure);
      res.cookie(blank.name, blank.value, blank.options);
      return next();
    }
    if (session.renewed) {
      const cookie = deps.sessions.cookie(session.id, secure);
      res.cookie(cookie.name, cookie.value, cookie.options);
    }
    requestAuth.set(req, { kind: 'user', user, session });
    next();
  };
}

/** Who made this request (anonymous when `authenticate` did not run or found nobody). */
export function getRequestAuth(req: Request): RequestAuth {
  return requestAuth.get(req) ?? { kind: 'anonymous' };
}

/** The signed-in user, or null. */
export function optionalUser(req: Request): AuthUser | null {
  const auth = getRequestAuth(req);
  return auth.kind === 'user' ? auth.user : null;
}

/** The signed-in user; throws 401 `unauthenticated` when nobody is signed in. */
export function currentUser(req: Request): AuthUser {
  const user = optionalUser(req);
  if (!user) throw unauthorized();
  return user;
}

/** The current session of the signed-in user; throws 401 when there is none. */
export function currentSession(req: Request): SessionInfo {
  const auth = getRequestAuth(req);
  if (auth.kind !== 'user') throw unauthorized();
  return auth.session;
}

/** Route middleware: 401 unless a person is signed in (ingest tokens do not count). */
export const requireUser: RequestHandler = (req, _res, next) => {
  if (optionalUser(req)) return next();
  next(unauthorized());
};

/** The request's client address: the socket's peer, or X-Forwarded-For's client when it came through a proxy TRUST_PROXY names. */
export function clientAddress(req: Request): string | null {
  return req.ip ?? req.socket.remoteAddress ?? null;
}
