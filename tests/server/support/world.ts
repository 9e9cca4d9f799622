/**
 * Test fixtures for route tests: a test context with the demo scenario seeded, one session per
 * demo user, fresh throw-away users on demand, and a supertest agent that sends our own Origin on
 * every request (the CSRF check refuses state-changing requests without one).
 */
import { desc, eq } from 'drizzle-orm';
import type { Express } from 'express';
import request from 'supertest';
import type { Role } from '@shared/auth/roles';
import { createApp } from '@server/app';
import { hashPassword } from '@server/auth/password';
import { createSessionStore, sessionCookieName, type SessionStore } from '@server/auth/sessions';
import { generateUserId } from '@server/auth/tokens';
import { mailMessages } from '@server/db/schema/mail-messages';
import { stationAssignments, stations } from '@server/db/schema/stations';
import { userRoles, users } from '@server/db/schema/users';
import { demoUsers, seedDemo } from '@server/db/seed-demo';
import { createTestContext, type TestContext } from '@tests/setup/test-app';

/** The demo password the test context seeds (SEISIFT_DEMO_PASSWORD in createTestContext). */
export const demoPassword = 'kestrel-demo-pass';

/** Who a matrix row is run as. */
export type Principal = 'anonymous' | Role;

/** A seeded world: context, app, sessions per demo role, station ids by code. */
export interface World {
  ctx: TestContext;
  app: Express;
  /** Origin header value the app accepts (supertest's host is 127.0.0.1 on some port). */
  origin: string;
  sessions: SessionStore;
  /** Cookie header of a live session for the demo user of each role. */
  cookie: Record<Role, string>;
  userId: Record<Role, string>;
  stationIds: Record<string, number>;
  /** A new active user with these roles (and stations), signed in; returns its id and cookie. */
  freshUser(roles: Role[], opts?: { stationCodes?: string[]; password?: string; email?: string }): Promise<{ id: string; email: string; cookie: string; password: string }>;
  close(): Promise<void>;
}

let counter = 0;

/** Seeds the demo and opens one session per demo role. */
export async function createWorld(overrides: Record<string, string> = {}): Promise<World> {
  const ctx = await createTestContext(overrides);
  await seedDemo(ctx.database.db, { demoPassword });
  const app = createApp(ctx, { serveClient: false });
  const sessions = createSessionStore(ctx.database.db, { idleHours: ctx.env.SEISIFT_SESSION_IDLE_HOURS });
  const db = ctx.database.db;
  const cookie = {} as Record<Role, string>;
  const userId = {} as Record<Role, string>;
  for (const u of demoUsers) {
    const [row] = await db.select({ id: users.id }).from(users).where(eq(users.email, u.email));
    const role = u.roles[0];
    if (!row || !role) throw new Error(`demo user ${u.email} was not seeded`);
    const s = await sessions.create(row.id, { ipAddress: '127.0.0.1', userAgent: 'route-test' });
    cookie[role] = `${sessionCookieName}=${s.id}`;
    userId[role] = row.id;
  }
  const stationRows = await db.select({ id: stations.id, code: stations.code }).from(stations);
  const stationIds = Object.fromEntries(stationRows.map((s) => [s.code, s.id]));
  // supertest binds an ephemeral port per request; the CSRF check compares Origin with the Host header.
  const origin = 'http://seisift.test';
  return {
    ctx,
    app,
    origin,
    sessions,
    cookie,
    userId,
    stationIds,
    async freshUser(roles, opts = {}) {
      counter += 1;
      const id = generateUserId();
      const email = opts.email ?? `fresh-${counter}-${id.slice(0, 6).toLowerCase()}@kestrel.example`;
      const password = opts.password ?? `fresh-pass-${counter}-long-enough`;
      const now = new Date();
      await db.insert(users).values({ id, email, displayName: `Fresh user ${counter}`, passwordHash: await hashPassword(password), active: true, createdAt: now, updatedAt: now });
      if (roles.length) await db.insert(userRoles).values(roles.map((role) => ({ userId: id, role })));
      const codes = opts.stationCodes ?? [];
      if (codes.length) await db.insert(stationAssignments).values(codes.map((c) => ({ userId: id, stationId: stationIds[c] ?? -1 })));
      const s = await sessions.create(id, { ipAddress: '127.0.0.1', userAgent: 'route-test' });
      return { id, email, cookie: `${sessionCookieName}=${s.id}`, password };
    },
    close: () => ctx.close(),
  };
}

/** Host header the test requests claim, matching `World.origin`. */
export const testHost = 'seisift.test';

/**
 * A request builder with our Host and Origin set (and a cookie when given).
 * @param method HTTP method in upper case
 */
export function call(w: World, method: string, path: string, cookieHeader?: string | null) {
  const agent = request(w.app);
  const m = method.toLowerCase();
  const req =
    m === 'get' ? agent.get(path) : m === 'post' ? agent.post(path) : m === 'put' ? agent.put(path) : m === 'patch' ? agent.patch(path) : m === 'delete' ? agent.delete(path) : null;
  if (!req) throw new Error(`unsupported method ${method}`);
  req.set('Host', testHost).set('Origin', w.origin);
  if (cookieHeader) req.set('Cookie', cookieHeader);
  return req;
}

/** The session cookie (name=value) a response set, or null. */
export function sessionCookieFrom(res: { headers: Record<string, unknown> }): string | null {
  const raw = res.headers['set-cookie'];
  const list = Array.isArray(raw) ? raw.map(String) : typeof raw === 'string' ? [raw] : [];
  const hit = list.find((c) => c.startsWith(`${sessionCookieName}=`) && !c.startsWith(`${sessionCookieName}=;`));
  return hit ? (hit.split(';')[0] ?? null) : null;
}

/** The newest message the fake SMTP server stored for `to`, or null (polls briefly: delivery is async). */
export async function latestMailTo(w: World, to: string, timeoutMs = 3000): Promise<{ subject: string; text: string | null; html: string | null; raw: string } | null> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const rows = await w.ctx.database.db.select().from(mailMessages).orderBy(desc(mailMessages.id)).limit(50);
    const hit = rows.find((r) => r.envelopeTo.includes(to));
    if (hit) return { subject: hit.subject, text: hit.textBody, html: hit.htmlBody, raw: hit.raw };
    if (Date.now() > until) return null;
    await new Promise((r) => setTimeout(r, 50));
  }
}

/** The one-time token in a mail's link (`…#token=…`), or null. */
export function tokenFromMail(text: string | null): string | null {
  const m = /#token=([A-Za-z0-9_-]{43})/.exec(text ?? '');
  return m?.[1] ?? null;
}
