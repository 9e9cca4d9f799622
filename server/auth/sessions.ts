/**
 * Sign-in sessions. EVERY use of lucia lives in this module (STACK.md: upstream stopped
 * maintaining it, so it must be swappable for the written guide's own implementation without
 * touching routes). Routes and middleware call only the functions exported here.
 */
import { DrizzleMySQLAdapter } from '@lucia-auth/adapter-drizzle';
import { and, eq, gt, inArray } from 'drizzle-orm';
import { Lucia, TimeSpan } from 'lucia';
import type { Database } from '@server/db/client';
import { sessions } from '@server/db/schema/sessions';
import { users } from '@server/db/schema/users';

/** Name of the session cookie. */
export const sessionCookieName = 'seisift_session';

/** The extra columns each session row carries besides id, user and expiry. */
export type SessionMeta = { createdAt: Date; ipAddress: string | null; userAgent: string | null };

declare module 'lucia' {
  interface Register {
    Lucia: Lucia<SessionMeta, Record<never, never>>;
    DatabaseSessionAttributes: { createdAt: Date | null; ipAddress: string | null; userAgent: string | null };
    DatabaseUserAttributes: Record<string, unknown>;
  }
}

/** One session as the rest of the app sees it. */
export type SessionInfo = {
  id: string;
  userId: string;
  expiresAt: Date;
  /** True when validation just pushed the expiry out (the cookie must be sent again). */
  renewed: boolean;
} & SessionMeta;

/** A cookie to set on the response: name, value and attributes in Express's shape. */
export type SessionCookie = {
  name: string;
  value: string;
  options: { httpOnly: boolean; sameSite: 'lax'; secure: boolean; path: string; maxAge?: number; expires?: Date };
};

/** The session store: create, validate (sliding expiry), list and end sessions; build cookies. */
export interface SessionStore {
  create(userId: string, meta: Omit<SessionMeta, 'createdAt'>): Promise<SessionInfo>;
  /** Looks up a session id; null when unknown or expired. Extends the expiry past its half-life. */
  validate(sessionId: string): Promise<SessionInfo | null>;
  listForUser(userId: string): Promise<SessionInfo[]>;
  end(sessionId: string): Promise<void>;
  /** Ends every session of a user (deactivation, role change). */
  endAllForUser(userId: string): Promise<void>;
  /** Ends every session of a user except `keepSessionId` (password change/reset). */
  endOthersForUser(userId: string, keepSessionId: string | null): Promise<void>;
  /**
   * Which of `sessionIds` are still open (not ended, not expired), without touching their expiry:
   * the live hub's re-check of its sockets, one query for all of them.
   */
  stillOpen(sessionIds: readonly string[]): Promise<Set<string>>;
  deleteExpired(): Promise<void>;
  /** Reads the session id from a Cookie header. */
  readCookie(cookieHeader: string | undefined): string | null;
  /** The cookie that carries `sessionId`; `secure` when the request came over https. */
  cookie(sessionId: string, secure: boolean): SessionCookie;
  /** The cookie that clears the session cookie. */
  blankCookie(secure: boolean): SessionCookie;
}

/**
 * Builds the session store over the app database.
 * @param onEnded called after sessions were ended through this store (the live hub re-checks its sockets)
 * @param idleHours sessions end after this many hours without a request (sliding: each request in
 *   the second half of the span pushes the expiry out again)
 */
export function createSessionStore(db: Database, opts: { idleHours: number; onEnded?: () => void }): SessionStore {
  const adapter = new DrizzleMySQLAdapter(db, sessions, users);
  const lucia = new Lucia<SessionMeta, Record<never, never>>(adapter, {
    sessionExpiresIn: new TimeSpan(opts.idleHours, 'h'),
    sessionCookie: { name: sessionCookieName, expires: true, attributes: { sameSite: 'lax', path: '/', secure: false } },
    getSessionAttributes: (a) => ({ createdAt: a.createdAt ?? new Date(0), ipAddress: a.ipAddress, userAgent: a.userAgent }),
    getUserAttributes: () => ({}),
  });

  const toInfo = (s: { id: string; userId: string; expiresAt: Date; fresh: boolean } & SessionMeta): SessionInfo => ({
    id: s.id,
    userId: s.userId,
    expiresAt: s.expiresAt,
    renewed: s.fresh,
    createdAt: s.createdAt,
    ipAddress: s.ipAddress,
    userAgent: s.userAgent,
  });

  const toCookie = (c: { name: string; value: string; attributes: { maxAge?: number; expires?: Date; path?: string } }, secure: boolean): SessionCookie => ({
    name: c.name,
    value: c.value,
    options: {
      httpOnly: true,
      sameSite: 'lax',
      secure,
      path: c.attributes.path ?? '/',
      ...(c.attributes.maxAge === undefined ? {} : { maxAge: c.attributes.maxAge * 1000 }),
      ...(c.attributes.expires === undefined || c.attributes.maxAge !== undefined ? {} : { expires: c.attributes.expires }),
    },
  });

  return {
    async create(userId, meta) {
      const s = await lucia.createSession(userId, {
        createdAt: new Date(),
        ipAddress: meta.ipAddress?.slice(0, 64) ?? null,
        userAgent: meta.userAgent?.slice(0, 255) ?? null,
      });
      return toInfo({ ...s, fresh: true });
    },
    async validate(sessionId) {
      if (!/^[a-z0-9]{10,255}$/.test(sessionId)) return null;
      const { session } = await lucia.validateSession(sessionId);
      return session ? toInfo(session) : null;
    },
    async listForUser(userId) {
      const list = await lucia.getUserSessions(userId);
      return list.map((s) => toInfo({ ...s, fresh: false })).sort((a, b) => b.createdAt.getTime() - a.createdAt.getTime());
    },
    async end(sessionId) {
      await lucia.invalidateSession(sessionId);
      opts.onEnded?.();
    },
    async endAllForUser(userId) {
      await lucia.invalidateUserSessions(userId);
      opts.onEnded?.();
    },
    async endOthersForUser(userId, keepSessionId) {
      const rows = await db.select({ id: sessions.id }).from(sessions).where(eq(sessions.userId, userId));
      for (const row of rows) if (row.id !== keepSessionId) await lucia.invalidateSession(row.id);
      opts.onEnded?.();
    },
    async stillOpen(sessionIds) {
      if (sessionIds.length === 0) return new Set();
      const rows = await db
        .select({ id: sessions.id })
        .from(sessions)
        .where(and(inArray(sessions.id, [...new Set(sessionIds)]), gt(sessions.expiresAt, new Date())));
      return new Set(rows.map((r) => r.id));
    },
    deleteExpired: () => lucia.deleteExpiredSessions(),
    readCookie: (header) => (header ? lucia.readSessionCookie(header) : null),
    cookie: (sessionId, secure) => toCookie(lucia.createSessionCookie(sessionId), secure),
    blankCookie: (secure) => toCookie(lucia.createBlankSessionCookie(), secure),
  };
}
