/**
 * Sign-in, sessions, invitations and password reset end to end against the real MariaDB and the
 * local fake SMTP server: links are read from the mail the fake server received.
 * Expectations come from issue 3 and the OWASP cheat sheets named beside each check.
 */
import { createHash } from 'node:crypto';
import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditLog } from '@server/db/schema/audit-log';
import { invitations } from '@server/db/schema/invitations';
import { passwordResetTokens } from '@server/db/schema/password-reset-tokens';
import { sessions } from '@server/db/schema/sessions';
import { call, createWorld, demoPassword, latestMailTo, sessionCookieFrom, tokenFromMail, type World } from '@tests/server/support/world';

const sha256 = (s: string) => createHash('sha256').update(s).digest('hex');

async function auditActions(w: World): Promise<string[]> {
  return (await w.ctx.database.db.select({ action: auditLog.action }).from(auditLog)).map((r) => r.action);
}

describe('sign-in and sessions', () => {
  let w: World;
  beforeAll(async () => {
    w = await createWorld();
  });
  afterAll(async () => {
    await w.close();
  });

  it('signs in with the demo password and sets an HttpOnly, SameSite=Lax session cookie (not Secure over http)', async () => {
    const res = await call(w, 'POST', '/api/auth/sign-in').send({ email: 'Analyst@Kestrel.example ', password: demoPassword });
    expect(res.status).toBe(200);
    const raw = String(res.headers['set-cookie']);
    expect(raw).toMatch(/seisift_session=[a-z0-9]+/);
    expect(raw).toMatch(/HttpOnly/);
    expect(raw).toMatch(/SameSite=Lax/);
    expect(raw).not.toMatch(/Secure/);
    const cookie = sessionCookieFrom(res);
    const me = await call(w, 'GET', '/api/auth/me', cookie);
    expect(me.status).toBe(200);
    expect(me.body.user).toMatchObject({ email: 'analyst@kestrel.example', roles: ['analyst'], stationIds: [] });
    expect(me.body.mailbox).toBe(true);
    expect(await auditActions(w)).toContain('auth.sign_in');
  });


  it('answers an unknown e-mail and a wrong password with the same generic error, and audits both', async () => {
    const unknown = await call(w, 'POST', '/api/auth/sign-in').send({ email: 'nobody@kestrel.example', password: demoPassword });
    const wrong = await call(w, 'POST', '/api/auth/sign-in').send({ email: 'supervisor@kestrel.example', password: 'not-the-right-password' });
    expect(unknown.status).toBe(401);
    expect(wrong.status).toBe(401);
    expect(unknown.body).toEqual(wrong.body);
    expect(unknown.body.error.code).toBe('sign_in_failed');
    expect(sessionCookieFrom(unknown)).toBeNull();
    const rows = await w.ctx.database.db.select().from(auditLog).where(eq(auditLog.action, 'auth.sign_in_failed'));
    expect(rows.map((r) => (r.details as { reason: string }).reason).sort()).toEqual(['unknown_email', 'wrong_password']);
    expect(rows.every((r) => r.ipAddress !== null)).toBe(true);
  });

  it('answers the session probe with null for a visitor and the user once signed in (never 401)', async () => {
    const anon = await call(w, 'GET', '/api/auth/session');
    expect(anon.status).toBe(200);
    expect(anon.body).toEqual({ session: null });
    const signed = await call(w, 'GET', '/api/auth/session', w.cookie.operator);
    expect(signed.body.session.user).toMatchObject({ email: 'operator@kestrel.example', roles: ['operator'], stationIds: [w.stationIds.KV01, w.stationIds.KV02, w.stationIds.KV03] });
    expect(signed.headers['cache-control']).toBe('no-store');
  });

  it('names the bad field on malformed input (400)', async () => {
    const res = await call(w, 'POST', '/api/auth/sign-in').send({ email: 'not-an-address', password: 'x' });
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe('validation_failed');
    expect(res.body.error.message).toMatch(/^email: /);
  });

  it('sign-out ends the session: the old cookie no longer works', async () => {
    const u = await w.freshUser(['analyst']);
    expect((await call(w, 'GET', '/api/auth/me', u.cookie)).status).toBe(200);
    const out = await call(w, 'POST', '/api/auth/sign-out', u.cookie);
    expect(out.status).toBe(204);
    expect(String(out.headers['set-cookie'])).toMatch(/seisift_session=;/);
    expect((await call(w, 'GET', '/api/auth/me', u.cookie)).status).toBe(401);
    expect(await auditActions(w)).toContain('auth.sign_out');
  });

  it('slides the expiry: a session in the second half of its life is pushed out and its cookie sent again', async () => {
    const u = await w.freshUser(['analyst']);
    const id = u.cookie.split('=')[1] ?? '';
    const soon = new Date(Date.now() + 3600 * 1000); // 1 h left of 24 h idle time: past the half-life
    await w.ctx.database.db.update(sessions).set({ expiresAt: soon }).where(eq(sessions.id, id));
    const res = await call(w, 'GET', '/api/auth/me', u.cookie);
    expect(res.status).toBe(200);
    expect(sessionCookieFrom(res)).toBe(u.cookie);
    const [row] = await w.ctx.database.db.select().from(sessions).where(eq(sessions.id, id));
    expect(row!.expiresAt.getTime()).toBeGreaterThan(Date.now() + 23 * 3600 * 1000);
  });

  it('ends an expired session', async () => {
    const u = await w.freshUser(['analyst']);
    const id = u.cookie.split('=')[1] ?? '';
    await w.ctx.database.db.update(sessions).set({ expiresAt: new Date(Date.now() - 1000) }).where(eq(sessions.id, id));
    expect((await call(w, 'GET', '/api/auth/me', u.cookie)).status).toBe(401);
  });

  it('changing your password ends your other sessions and keeps this one', async () => {
    const u = await w.freshUser(['supervisor']);
    const other = await call(w, 'POST', '/api/auth/sign-in').send({ email: u.email, password: u.password });
    const otherCookie = sessionCookieFrom(other);
    expect(otherCookie).not.toBeNull();
    const wrong = await call(w, 'PUT', '/api/account/password', u.cookie).send({ currentPassword: 'wrong-one-entirely', newPassword: 'a-brand-new-password' });
    expect(wrong.status).toBe(400);
    expect(wrong.body.error.message).toMatch(/^currentPassword: /);
    const short = await call(w, 'PUT', '/api/account/password', u.cookie).send({ currentPassword: u.password, newPassword: 'short' });
    expect(short.status).toBe(400);
    expect(short.body.error.message).toBe('newPassword: must be at least 12 characters');
    const ok = await call(w, 'PUT', '/api/account/password', u.cookie).send({ currentPassword: u.password, newPassword: 'a-brand-new-password' });
    expect(ok.status).toBe(204);
    expect((await call(w, 'GET', '/api/auth/me', u.cookie)).status).toBe(200);
    expect((await call(w, 'GET', '/api/auth/me', otherCookie)).status).toBe(401);
    const again = await call(w, 'POST', '/api/auth/sign-in').send({ email: u.email, password: 'a-brand-new-password' });
    expect(again.status).toBe(200);
  });

  it('lists your own sessions by handle (never the cookie secret) and ends one', async () => {
    const u = await w.freshUser(['analyst']);
    const second = sessionCookieFrom(await call(w, 'POST', '/api/auth/sign-in').send({ email: u.email, password: u.password }));
    const list = await call(w, 'GET', '/api/account/sessions', u.cookie);
    expect(list.status).toBe(200);
    expect(list.body.sessions).toHaveLength(2);
    const secrets = [u.cookie, second].map((c) => (c ?? '').split('=')[1]);
    for (const s of list.body.sessions) expect(secrets).not.toContain(s.id);
    const other = list.body.sessions.find((s: { current: boolean }) => !s.current);
    expect((await call(w, 'DELETE', `/api/account/sessions/${other.id}`, u.cookie)).status).toBe(204);
    expect((await call(w, 'GET', '/api/auth/me', second)).status).toBe(401);
    // Someone else's handle is not found.
    const foreign = await call(w, 'GET', '/api/account/sessions', w.cookie.admin);
    expect((await call(w, 'DELETE', `/api/account/sessions/${foreign.body.sessions[0].id}`, u.cookie)).status).toBe(404);
  });

  it('changing a user’s roles or deactivating them ends their sessions at once', async () => {
    const a = await w.freshUser(['analyst']);
    expect((await call(w, 'PUT', `/api/admin/users/${a.id}/roles`, w.cookie.admin).send({ roles: ['analyst', 'supervisor'] })).status).toBe(204);
    expect((await call(w, 'GET', '/api/auth/me', a.cookie)).status).toBe(401);
    const b = await w.freshUser(['operator'], { stationCodes: ['KV05'] });
    expect((await call(w, 'POST', `/api/admin/users/${b.id}/deactivate`, w.cookie.admin)).status).toBe(204);
    expect((await call(w, 'GET', '/api/auth/me', b.cookie)).status).toBe(401);
    const signIn = await call(w, 'POST', '/api/auth/sign-in').send({ email: b.email, password: b.password });
    expect(signIn.status).toBe(401);
    expect(signIn.body.error.code).toBe('sign_in_failed');
    const actions = await auditActions(w);
    expect(actions).toContain('user.roles_changed');
    expect(actions).toContain('user.deactivated');
  });

  it('refuses to remove the last active admin', async () => {
    const res = await call(w, 'PUT', `/api/admin/users/${w.userId.admin}/roles`, w.cookie.admin).send({ roles: ['supervisor'] });
    expect(res.status).toBe(409);
    expect((await call(w, 'POST', `/api/admin/users/${w.userId.admin}/deactivate`, w.cookie.admin)).status).toBe(409);
  });
});

describe('CSRF: Origin / Referer check on state-changing requests (OWASP CSRF Prevention Cheat Sheet)', () => {
  let w: World;
  beforeAll(async () => {
    w = await createWorld();
  });
  afterAll(async () => {
    await w.close();
  });

  it('refuses a POST from a foreign Origin with 403', async () => {
    const res = await call(w, 'POST', '/api/auth/sign-out', w.cookie.analyst).set('Origin', 'http://evil.example');
    expect(res.status).toBe(403);
    expect(res.body.error.code).toBe('csrf_refused');
    expect((await call(w, 'GET', '/api/auth/me', w.cookie.analyst)).status).toBe(200);
  });

  it('refuses a state-changing request with neither Origin nor Referer', async () => {
    const res = await call(w, 'PUT', `/api/admin/users/${w.userId.analyst}/roles`, w.cookie.admin).unset('Origin').send({ roles: [] });
    expect(res.status).toBe(403);
    expect(res.body.error.code).toBe('csrf_refused');
  });

  it('accepts our own Referer when the browser sends no Origin, and compares whole origins (no prefix tricks)', async () => {
    const ok = await call(w, 'POST', '/api/auth/sign-in').unset('Origin').set('Referer', 'http://seisift.test/sign-in').send({ email: 'x@kestrel.example', password: 'y' });
    expect(ok.status).toBe(401);
    const trick = await call(w, 'POST', '/api/auth/sign-in').set('Origin', 'http://seisift.test.evil.example').send({ email: 'x@kestrel.example', password: 'y' });
    expect(trick.status).toBe(403);
  });

  it('leaves GET alone', async () => {
    expect((await call(w, 'GET', '/api/auth/me', w.cookie.analyst).set('Origin', 'http://evil.example')).status).toBe(200);
  });

  it('lets a script with a bearer token and no cookie through to authentication (401 here: no ingest tokens yet)', async () => {
    const res = await call(w, 'POST', '/api/auth/sign-out').unset('Origin').set('Authorization', 'Bearer abc');
    expect(res.status).toBe(401);
  });
});

describe('X-Forwarded-For and -Proto are believed only from the proxies TRUST_PROXY names (default none)', () => {
  const worlds: World[] = [];
  afterAll(async () => {
    for (const w of worlds) await w.close();
  });
  /** Signs in through a claimed proxy chain; returns the address the audit row recorded and whether the cookie is Secure. */
  async function signInVia(w: World, forwardedFor: string) {
    const email = 'analyst@kestrel.example';
    const res = await call(w, 'POST', '/api/auth/sign-in').set('X-Forwarded-For', forwardedFor).set('X-Forwarded-Proto', 'https').set('Origin', 'https://seisift.test').send({ email, password: demoPassword });
    expect(res.status).toBe(200);
    const rows = await w.ctx.database.db.select().from(auditLog).where(eq(auditLog.action, 'auth.sign_in'));
    return { ip: rows[rows.length - 1]?.ipAddress, secure: /Secure/.test(String(res.headers['set-cookie'])) };
  }

  it('by default ignores them: the address is the socket peer (loopback here) and the cookie is not Secure', async () => {
    const w = await createWorld();
    worlds.push(w);
    const seen = await signInVia(w, '203.0.113.7');
    expect(seen.ip).toMatch(/^(::ffff:)?127\.0\.0\.1$|^::1$/);
    expect(seen.secure).toBe(false);
  });

  it('TRUST_PROXY=loopback: a proxy on this machine speaks for the client (its address, https)', async () => {
    const w = await createWorld({ TRUST_PROXY: 'loopback' });
    worlds.push(w);
    const seen = await signInVia(w, '203.0.113.7');
    expect(seen.ip).toBe('203.0.113.7');
    expect(seen.secure).toBe(true);
  });

  it('TRUST_PROXY naming another address: the loopback peer is not that proxy, so its headers are ignored', async () => {
    const w = await createWorld({ TRUST_PROXY: '10.1.2.3, 192.168.0.0/16' });
    worlds.push(w);
    const seen = await signInVia(w, '203.0.113.7');
    expect(seen.ip).not.toBe('203.0.113.7');
    expect(seen.secure).toBe(false);
  });
});

describe('sign-in throttling (OWASP Authentication Cheat Sheet, "Login Throttling"; rate-limiter-flexible)', () => {
  let w: World;
  beforeAll(async () => {
    // A proxy on loopback speaks for the client, so each request can come "from" its own address.
    w = await createWorld({
      TRUST_PROXY: 'loopback',
      SEISIFT_SIGNIN_MAX_PER_ACCOUNT_ADDRESS: '3',
      SEISIFT_SIGNIN_MAX_PER_ADDRESS: '8',
      SEISIFT_SIGNIN_WINDOW_S: '600',
      SEISIFT_SIGNIN_SLOWDOWN_AFTER: '2',
      SEISIFT_SIGNIN_DELAY_MS: '150',
      SEISIFT_SIGNIN_MAX_DELAY_MS: '600',
    });
  });
  afterAll(async () => {
    await w.close();
  });
  const signIn = (email: string, password: string, from: string) => call(w, 'POST', '/api/auth/sign-in').set('X-Forwarded-For', from).send({ email, password });

  it('refuses the account from the address that guessed wrong (429, even with the right password), while the owner elsewhere signs in', async () => {
    const u = await w.freshUser(['operator']);
    for (let i = 0; i < 3; i++) expect((await signIn(u.email, `wrong-${i}`, '198.51.100.1')).status).toBe(401);
    const res = await signIn(u.email, u.password, '198.51.100.1');
    expect(res.status).toBe(429);
    expect(res.body.error.code).toBe('rate_limited');
    const retry = Number(res.headers['retry-after']);
    expect(retry).toBeGreaterThan(0);
    expect(retry).toBeLessThanOrEqual(600);
    // The owner, from another address, is not refused (only slowed down).
    const owner = await signIn(u.email, u.password, '198.51.100.2');
    expect(owner.status).toBe(200);
    expect(sessionCookieFrom(owner)).not.toBeNull();
  });

  it('slows down every attempt on an account after its free failures, from any address, doubling to the cap; never refuses the owner', async () => {
    const u = await w.freshUser(['analyst']);
    const elapsed: number[] = [];
    for (let i = 0; i < 6; i++) {
      const t0 = performance.now();
      // Each guess from a fresh address: neither the address nor the account-and-address limit applies.
      expect((await signIn(u.email, `wrong-${i}`, `203.0.113.${10 + i}`)).status).toBe(401);
      elapsed.push(performance.now() - t0);
    }
    const rows = await w.ctx.database.db.select().from(auditLog).where(eq(auditLog.action, 'auth.sign_in_failed'));
    const delays = rows.filter((r) => r.targetId === u.id).map((r) => (r.details as { delayMs: number }).delayMs);
    // 2 free failures, then 150 · 2^k ms capped at 600 ms (progressiveDelayMs).
    expect(delays).toEqual([0, 0, 150, 300, 600, 600]);
    delays.forEach((d, i) => expect(elapsed[i]).toBeGreaterThanOrEqual(d - 5));
    const t0 = performance.now();
    const owner = await signIn(u.email, u.password, '203.0.113.99');
    expect(owner.status).toBe(200);
    expect(performance.now() - t0).toBeGreaterThanOrEqual(595);
  });

  it('limits every attempt per address, whichever account is tried', async () => {
    let last = 0;
    let sawLimit = false;
    for (let i = 0; i < 10; i++) {
      const res = await signIn(`someone-${i}@kestrel.example`, 'whatever-it-is', '192.0.2.50');
      last = res.status;
      if (res.status === 429) {
        sawLimit = true;
        expect(Number(res.headers['retry-after'])).toBeGreaterThan(0);
        break;
      }
    }
    expect(sawLimit).toBe(true);
    expect(last).toBe(429);
    // Another address is not affected.
    expect((await signIn('analyst@kestrel.example', demoPassword, '192.0.2.51')).status).toBe(200);
  });
});

describe('invitations by e-mail (72 h, one-time, hashed)', () => {
  let w: World;
  beforeAll(async () => {
    w = await createWorld();
  });
  afterAll(async () => {
    await w.close();
  });

  it('admin invites an operator with stations; the person follows the mailed link, sets a password and is signed in', async () => {
    const kv04 = w.stationIds.KV04!;
    const created = await call(w, 'POST', '/api/admin/invitations', w.cookie.admin).send({ email: 'new.operator@kestrel.example', displayName: 'New Operator', roles: ['operator'], stationIds: [kv04] });
    expect(created.status).toBe(201);
    expect(created.body.invitation).toMatchObject({ email: 'new.operator@kestrel.example', roles: ['operator'], stationIds: [kv04], status: 'pending' });
    const expires = Date.parse(created.body.invitation.expiresAt) - Date.parse(created.body.invitation.createdAt);
    expect(expires).toBe(72 * 3600 * 1000);

    const mail = await latestMailTo(w, 'new.operator@kestrel.example');
    expect(mail).not.toBeNull();
    expect(mail!.subject).toBe('Your invitation to Seisift');
    expect(mail!.text).toContain('XX.KV04');
    const token = tokenFromMail(mail!.text);
    expect(token).not.toBeNull();
    expect(tokenFromMail(mail!.html)).toBe(token);

    // Only the SHA-256 of the token is stored.
    const [row] = await w.ctx.database.db.select().from(invitations).where(eq(invitations.email, 'new.operator@kestrel.example'));
    expect(row!.tokenHash).toBe(sha256(token!));
    expect(JSON.stringify(row)).not.toContain(token!);

    const check = await call(w, 'POST', '/api/auth/invitations/check').send({ token });
    expect(check.status).toBe(200);
    expect(check.body).toMatchObject({ email: 'new.operator@kestrel.example', roles: ['operator'] });

    const short = await call(w, 'POST', '/api/auth/invitations/accept').send({ token, password: 'too-short' });
    expect(short.status).toBe(400);
    expect(short.body.error.message).toMatch(/^password: must be at least 12/);

    const accepted = await call(w, 'POST', '/api/auth/invitations/accept').send({ token, password: 'operator-chosen-password' });
    expect(accepted.status).toBe(201);
    const cookie = sessionCookieFrom(accepted);
    const me = await call(w, 'GET', '/api/auth/me', cookie);
    expect(me.status).toBe(200);
    expect(me.body.user).toMatchObject({ email: 'new.operator@kestrel.example', displayName: 'New Operator', roles: ['operator'], stationIds: [kv04] });

    const reused = await call(w, 'POST', '/api/auth/invitations/accept').send({ token, password: 'operator-chosen-password' });
    expect(reused.status).toBe(410);
    expect(reused.body.error.code).toBe('token_used');
    const actions = await auditActions(w);
    expect(actions).toContain('invitation.created');
    expect(actions).toContain('invitation.accepted');
  });

  it('refuses an expired invitation link (410) and an unknown one (404)', async () => {
    const res = await call(w, 'POST', '/api/admin/invitations', w.cookie.admin).send({ email: 'late@kestrel.example', displayName: 'Late Analyst', roles: ['analyst'] });
    expect(res.status).toBe(201);
    const token = tokenFromMail((await latestMailTo(w, 'late@kestrel.example'))!.text);
    await w.ctx.database.db.update(invitations).set({ expiresAt: new Date(Date.now() - 1000) }).where(eq(invitations.email, 'late@kestrel.example'));
    const expired = await call(w, 'POST', '/api/auth/invitations/accept').send({ token, password: 'long-enough-password' });
    expect(expired.status).toBe(410);
    expect(expired.body.error.code).toBe('token_expired');
    const unknown = await call(w, 'POST', '/api/auth/invitations/check').send({ token: 'A'.repeat(43) });
    expect(unknown.status).toBe(404);
    expect(unknown.body.error.code).toBe('token_unknown');
    const malformed = await call(w, 'POST', '/api/auth/invitations/check').send({ token: 'abc' });
    expect(malformed.status).toBe(400);
    expect(malformed.body.error.message).toBe('token: is not a valid link token');
  });

  it('a withdrawn invitation stops working; a new one to the same address replaces the old', async () => {
    await call(w, 'POST', '/api/admin/invitations', w.cookie.admin).send({ email: 'twice@kestrel.example', displayName: 'Twice', roles: ['analyst'] });
    const first = tokenFromMail((await latestMailTo(w, 'twice@kestrel.example'))!.text);
    const second = await call(w, 'POST', '/api/admin/invitations', w.cookie.admin).send({ email: 'twice@kestrel.example', displayName: 'Twice', roles: ['supervisor'] });
    expect(second.status).toBe(201);
    expect((await call(w, 'POST', '/api/auth/invitations/check').send({ token: first })).body.error.code).toBe('token_revoked');
    expect((await call(w, 'DELETE', `/api/admin/invitations/${second.body.invitation.id}`, w.cookie.admin)).status).toBe(204);
    const list = await call(w, 'GET', '/api/admin/invitations', w.cookie.admin);
    expect(list.body.invitations.filter((i: { email: string }) => i.email === 'twice@kestrel.example').map((i: { status: string }) => i.status)).toEqual(['revoked', 'revoked']);
  });

  it('refuses to invite an address that already has an account (409), and stations for a non-operator (400)', async () => {
    const dup = await call(w, 'POST', '/api/admin/invitations', w.cookie.admin).send({ email: 'analyst@kestrel.example', displayName: 'Again', roles: ['analyst'] });
    expect(dup.status).toBe(409);
    const bad = await call(w, 'POST', '/api/admin/invitations', w.cookie.admin).send({ email: 'x2@kestrel.example', displayName: 'X', roles: ['analyst'], stationIds: [w.stationIds.KV01] });
    expect(bad.status).toBe(400);
    expect(bad.body.error.message).toBe('stationIds: stations can be assigned only to an operator');
    const none = await call(w, 'POST', '/api/admin/invitations', w.cookie.admin).send({ email: 'x3@kestrel.example', displayName: 'X', roles: ['operator'], stationIds: [999999] });
    expect(none.status).toBe(400);
    expect(none.body.error.message).toBe('stationIds: no station with id 999999');
  });

  it('shows the mail in the admin mailbox', async () => {
    const list = await call(w, 'GET', '/api/admin/mailbox', w.cookie.admin);
    expect(list.status).toBe(200);
    expect(list.body.total).toBeGreaterThan(0);
    const first = list.body.messages[0];
    const one = await call(w, 'GET', `/api/admin/mailbox/${first.id}`, w.cookie.admin);
    expect(one.status).toBe(200);
    expect(one.body.message.text).toMatch(/#token=/);
  });
});

describe('forgot password (1 h, one-time; using it ends every other session)', () => {
  let w: World;
  beforeAll(async () => {
    w = await createWorld();
  });
  afterAll(async () => {
    await w.close();
  });

  it('mails a reset link; setting a new password ends the other sessions and signs this browser in', async () => {
    const u = await w.freshUser(['analyst']);
    const other = await w.freshUser([]); // someone else's session is not touched
    const res = await call(w, 'POST', '/api/auth/forgot-password').send({ email: u.email.toUpperCase() });
    expect(res.status).toBe(202);
    const mail = await latestMailTo(w, u.email);
    expect(mail!.subject).toBe('Reset your Seisift password');
    const token = tokenFromMail(mail!.text)!;
    const [row] = await w.ctx.database.db.select().from(passwordResetTokens).where(eq(passwordResetTokens.userId, u.id));
    expect(row!.tokenHash).toBe(sha256(token));
    expect(row!.expiresAt.getTime() - row!.createdAt.getTime()).toBe(3600 * 1000);

    expect((await call(w, 'POST', '/api/auth/reset-password/check').send({ token })).body.email).toBe(u.email);
    const done = await call(w, 'POST', '/api/auth/reset-password').send({ token, password: 'the-new-password-1' });
    expect(done.status).toBe(200);
    const fresh = sessionCookieFrom(done);
    expect((await call(w, 'GET', '/api/auth/me', fresh)).status).toBe(200);
    expect((await call(w, 'GET', '/api/auth/me', u.cookie)).status).toBe(401);
    expect((await call(w, 'GET', '/api/auth/me', other.cookie)).status).toBe(200);
    expect((await call(w, 'POST', '/api/auth/sign-in').send({ email: u.email, password: u.password })).status).toBe(401);
    expect((await call(w, 'POST', '/api/auth/sign-in').send({ email: u.email, password: 'the-new-password-1' })).status).toBe(200);

    const reused = await call(w, 'POST', '/api/auth/reset-password').send({ token, password: 'another-new-password' });
    expect(reused.status).toBe(410);
    expect(reused.body.error.code).toBe('token_used');
    expect(await auditActions(w)).toContain('auth.password_reset');
  });

  it('refuses an expired reset link', async () => {
    const u = await w.freshUser(['supervisor']);
    await call(w, 'POST', '/api/auth/forgot-password').send({ email: u.email });
    const token = tokenFromMail((await latestMailTo(w, u.email))!.text)!;
    await w.ctx.database.db.update(passwordResetTokens).set({ expiresAt: new Date(Date.now() - 1) }).where(eq(passwordResetTokens.userId, u.id));
    const res = await call(w, 'POST', '/api/auth/reset-password').send({ token, password: 'the-new-password-2' });
    expect(res.status).toBe(410);
    expect(res.body.error.code).toBe('token_expired');
  });

  it('answers a real account and an unknown address in the same time (medians of 12 interleaved calls each)', async () => {
    const t = await createWorld({ SEISIFT_SIGNIN_MAX_PER_ACCOUNT_ADDRESS: '200', SEISIFT_SIGNIN_MAX_PER_ADDRESS: '1000' });
    try {
      const known = await t.freshUser(['analyst']);
      const times: Record<'known' | 'unknown', number[]> = { known: [], unknown: [] };
      for (let i = 0; i < 12; i++) {
        for (const kind of ['known', 'unknown'] as const) {
          const email = kind === 'known' ? known.email : `ghost-${i}@kestrel.example`;
          const t0 = performance.now();
          const res = await call(t, 'POST', '/api/auth/forgot-password').send({ email });
          times[kind].push(performance.now() - t0);
          expect(res.status).toBe(202);
          // Let the work that follows a known account's answer (token, mail) finish before the next call.
          await new Promise((r) => setTimeout(r, 120));
        }
      }
      const median = (v: number[]) => [...v].sort((a, b) => a - b)[v.length >> 1] ?? NaN;
      const [k, u] = [median(times.known), median(times.unknown)];
      // Generous bound: before the answer went first, a real account took 127–202 ms and an unknown one 5–49 ms.
      expect(Math.abs(k - u), `medians: known ${k.toFixed(1)} ms, unknown ${u.toFixed(1)} ms`).toBeLessThan(Math.max(15, 0.5 * Math.min(k, u)));
      // The mail still goes out, after the answer.
      expect(await latestMailTo(t, known.email)).not.toBeNull();
    } finally {
      await t.close();
    }
  });

  it('answers an unknown address exactly like a known one and sends nothing', async () => {
    const known = await call(w, 'POST', '/api/auth/forgot-password').send({ email: 'supervisor@kestrel.example' });
    const unknown = await call(w, 'POST', '/api/auth/forgot-password').send({ email: 'ghost@kestrel.example' });
    expect(unknown.status).toBe(known.status);
    expect(unknown.body).toEqual(known.body);
    expect(await latestMailTo(w, 'ghost@kestrel.example', 300)).toBeNull();
  });
});
