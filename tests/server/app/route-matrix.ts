/**
 * THE role × route matrix: one row per API route (method + Express path pattern). The matrix
 * test runs every row as anonymous and as each demo role, and a second test fails when the app
 * mounts a route that has no row here. Adding a route? Add its row in this one table.
 *
 * Row fields:
 * - `allow`: 'public' (anyone, signed in or not), 'signed-in' (any role; anonymous → 401), or
 *   the roles that succeed (anonymous → 401, every other role → 403).
 * - `action`: the policy action the route checks; the test asserts `allow` equals the roles the
 *   one policy module (shared/auth/policies.ts) grants it, so the table and policy cannot drift.
 * - `build(w, as)`: the concrete request for a caller that should succeed (setup may use the
 *   database or other sessions); it is also sent by callers that should be refused.
 * - `ok`: statuses that count as success (default 200, 201, 202, 204).
 * - `foreignStation(w)`: for station-scoped routes, the request aimed at a station NOT assigned to
 *   the demo operator (KV04); the operator must get 403 or 404 there.
 * - `missing(w)`: the same request aimed at an object that does not exist (an unused id, an
 *   unregistered station); the operator must get exactly the answer `foreignStation` gets (status,
 *   code, and message but for the numbers and codes in it), so no answer tells what exists.
 */
import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import { and, eq } from 'drizzle-orm';
import type { Action } from '@shared/auth/policies';
import type { Role } from '@shared/auth/roles';
import { generateOneTimeToken, hashOneTimeToken } from '@server/auth/tokens';
import { invitations } from '@server/db/schema/invitations';
import { mailMessages } from '@server/db/schema/mail-messages';
import { passwordResetTokens } from '@server/db/schema/password-reset-tokens';
import { queueItems } from '@server/db/schema/queue-items';
import { channels } from '@server/db/schema/stations';
import { inboxEntries } from '@server/db/schema/supervisor';
import { windows } from '@server/db/schema/uploads';
import { users } from '@server/db/schema/users';
import { onItemsCreated } from '@server/features/events/candidate-events';
import { createItem } from '@tests/setup/queue-fixtures';
import { call, demoPassword, type Principal, type World } from '@tests/server/support/world';

/** A concrete request of a matrix row. */
export type MatrixRequest = {
  path: string;
  body?: object;
  /** Cookie header override (e.g. a throw-away session for sign-out). */
  cookie?: string | null;
  /** Multipart files (field, bytes, filename) and fields. */
  files?: { field: string; bytes: Buffer; filename: string }[];
  fields?: Record<string, string>;
};

/** One row of the matrix. */
export type MatrixRow = {
  method: 'GET' | 'POST' | 'PUT' | 'PATCH' | 'DELETE';
  path: string;
  allow: 'public' | 'signed-in' | readonly Role[];
  action?: Action;
  build?: (w: World, as: Principal) => Promise<MatrixRequest>;
  ok?: readonly number[];
  foreignStation?: (w: World) => Promise<MatrixRequest>;
  missing?: (w: World) => Promise<MatrixRequest>;
};

/** An id no row has. */
const NO_ID = 987654321;

const kv = (w: World, code: string) => {
  const id = w.stationIds[code];
  if (id === undefined) throw new Error(`no station ${code} in the test world`);
  return id;
};
const cookieOf = (w: World, as: Principal) => (as === 'anonymous' ? null : w.cookie[as]);
const sha32 = (s: string) => createHash('sha256').update(s).digest('hex').slice(0, 32);
let serial = 0;
const next = () => ++serial;

/** A pending invitation with a known token, inserted directly. */
async function invitationToken(w: World): Promise<{ id: number; token: string }> {
  const token = generateOneTimeToken();
  const n = next();
  const now = new Date();
  const [res] = await w.ctx.database.db.insert(invitations).values({
    email: `matrix-invite-${n}@kestrel.example`,
    displayName: `Matrix Invitee ${n}`,
    roles: ['analyst'],
    stationIds: [],
    tokenHash: hashOneTimeToken(token),
    createdAt: now,
    expiresAt: new Date(now.getTime() + 3600_000),
  });
  return { id: res.insertId, token };
}

/** A reset token for a new throw-away user. */
async function resetToken(w: World): Promise<string> {
  const u = await w.freshUser(['analyst']);
  const token = generateOneTimeToken();
  const now = new Date();
  await w.ctx.database.db.insert(passwordResetTokens).values({ userId: u.id, tokenHash: hashOneTimeToken(token), createdAt: now, expiresAt: new Date(now.getTime() + 3600_000) });
  return token;
}

/** A queue item at KV01 (assigned to the demo operator) or `station`, claimed by `as` when asked. */
async function item(w: World, as: Principal, opts: { station?: string; claim?: boolean; samples?: boolean } = {}): Promise<{ id: number; version: number }> {
  const id = await createItem(w.ctx.database.db, { station: opts.station ?? 'KV01', withSamples: opts.samples ?? false, durationS: 40 });
  if (!opts.claim) return { id, version: 1 };
  const res = await call(w, 'POST', `/api/queue/items/${id}/claim`, cookieOf(w, as)).send({ version: 1 });
  return { id, version: res.status === 200 ? 2 : 1 };
}

/** The Kestrel Valley StationXML fixture (KV01 and KV04). */
const stationXml = () => readFileSync(new URL('../../fixtures/stationxml/xx-kestrel-valley.xml', import.meta.url));
/** The same document with only KV01 (a station the demo operator holds). */
const stationXmlKv01 = () => Buffer.from(stationXml().toString('utf8').replace(/<Station code="KV04"[\s\S]*?<\/Station>\s*/, ''));

const csvWindow = (n: number) => {
  const start = Date.UTC(2026, 2, 14, 10, 0, 0) / 1000 + n * 3600;
  const rows = Array.from({ length: 3000 }, (_, i) => `${(start + i / 100).toFixed(2)},${Math.round(500 * Math.sin((2 * Math.PI * 3 * i) / 100) + ((i * 7919 + n) % 41))}`);
  return Buffer.from(['t_seconds,counts', ...rows].join('\n'));
};

/** An escalation by the demo analyst; returns the demo supervisor's inbox entry id for it. */
async function inboxEntry(w: World): Promise<number> {
  const it = await item(w, 'analyst', { claim: true });
  await call(w, 'POST', `/api/queue/items/${it.id}/escalate`, w.cookie.analyst).send({ version: it.version, reason: 'matrix escalation' });
  const [row] = await w.ctx.database.db
    .select({ id: inboxEntries.id })
    .from(inboxEntries)
    .where(and(eq(inboxEntries.itemId, it.id), eq(inboxEntries.userId, w.userId.supervisor)));
  if (!row) throw new Error(`no inbox entry for item ${it.id}`);
  return row.id;
}

/** An item labelled as an earthquake by the demo analyst; returns its id and version. */
async function labelledItem(w: World, station = 'KV01'): Promise<{ id: number; version: number }> {
  const it = await item(w, 'analyst', { claim: true, station });
  const res = await call(w, 'POST', `/api/queue/items/${it.id}/label`, w.cookie.analyst).send({ version: it.version, label: { eventType: 'earthquake' } });
  return { id: it.id, version: res.body?.version ?? it.version + 1 };
}

/** A candidate event: three items at `codes` whose first triggers coincide (lag 0 s ≤ the 2 s slack). */
async function candidateEvent(w: World, codes: readonly string[] = ['KV01', 'KV02', 'KV03']): Promise<number> {
  const db = w.ctx.database.db;
  const windowStart = new Date(Date.UTC(2026, 5, 1) + next() * 3600_000);
  const ids: number[] = [];
  for (const code of codes) {
    const id = await createItem(db, { station: code, windowStart });
    const [row] = await db.select({ windowId: queueItems.windowId }).from(queueItems).where(eq(queueItems.id, id));
    const channel = { id: `XX.${code}.00.HHZ`, startTime: windowStart.toISOString(), staLta: { triggers: [{ on: 20, off: 30 }] } };
    await db.update(windows).set({ analysis: { leadChannel: channel.id, channels: [channel] } }).where(eq(windows.id, row?.windowId ?? 0));
    ids.push(id);
  }
  const touched = await onItemsCreated({ db }, ids);
  if (touched[0] === undefined) throw new Error('the matrix candidate event was not formed');
  return touched[0];
}

/** Every API route. Keep it sorted by path. */
export const routeMatrix: readonly MatrixRow[] = [
  // ---- account (any signed-in person, about themselves)
  {
    method: 'PUT',
    path: '/api/account/password',
    allow: 'signed-in',
    build: async (w, as) => {
      const u = await w.freshUser(as === 'anonymous' ? [] : [as]);
      return { path: '/api/account/password', cookie: as === 'anonymous' ? null : u.cookie, body: { currentPassword: u.password, newPassword: 'matrix-new-password' } };
    },
  },
  { method: 'GET', path: '/api/account/sessions', allow: 'signed-in', build: async () => ({ path: '/api/account/sessions' }) },
  {
    method: 'DELETE',
    path: '/api/account/sessions',
    allow: 'signed-in',
    build: async (w, as) => {
      if (as === 'anonymous') return { path: '/api/account/sessions' };
      const u = await w.freshUser([as]);
      return { path: '/api/account/sessions', cookie: u.cookie };
    },
  },
  {
    method: 'DELETE',
    path: '/api/account/sessions/:id',
    allow: 'signed-in',
    build: async (w, as) => {
      if (as === 'anonymous') return { path: `/api/account/sessions/${'0'.repeat(32)}` };
      const extra = await w.sessions.create(w.userId[as], { ipAddress: '127.0.0.1', userAgent: 'matrix' });
      return { path: `/api/account/sessions/${sha32(extra.id)}` };
    },
  },

  // ---- admin (people, invitations, mailbox)
  { method: 'GET', path: '/api/admin/invitations', allow: ['admin'], action: 'users.manage', build: async () => ({ path: '/api/admin/invitations' }) },
  {
    method: 'POST',
    path: '/api/admin/invitations',
    allow: ['admin'],
    action: 'users.manage',
    build: async () => ({ path: '/api/admin/invitations', body: { email: `matrix-new-${next()}@kestrel.example`, displayName: 'Matrix Person', roles: ['analyst'] } }),
  },
  {
    method: 'DELETE',
    path: '/api/admin/invitations/:id',
    allow: ['admin'],
    action: 'users.manage',
    build: async (w) => ({ path: `/api/admin/invitations/${(await invitationToken(w)).id}` }),
  },
  { method: 'GET', path: '/api/admin/mailbox', allow: ['admin'], action: 'mailbox.view', build: async () => ({ path: '/api/admin/mailbox' }) },
  {
    method: 'GET',
    path: '/api/admin/mailbox/:id',
    allow: ['admin'],
    action: 'mailbox.view',
    build: async (w) => {
      await w.ctx.mailer.send({ to: 'matrix@kestrel.example', subject: `matrix ${next()}`, text: 'hello', html: '<p>hello</p>' });
      const [row] = await w.ctx.database.db.select({ id: mailMessages.id }).from(mailMessages).orderBy(mailMessages.id);
      return { path: `/api/admin/mailbox/${row?.id ?? 1}` };
    },
  },
  { method: 'GET', path: '/api/admin/stations', allow: ['admin'], action: 'users.manage', build: async () => ({ path: '/api/admin/stations' }) },
  { method: 'GET', path: '/api/admin/users', allow: ['admin'], action: 'users.manage', build: async () => ({ path: '/api/admin/users' }) },
  {
    method: 'POST',
    path: '/api/admin/users/:id/deactivate',
    allow: ['admin'],
    action: 'users.manage',
    build: async (w) => ({ path: `/api/admin/users/${(await w.freshUser(['analyst'])).id}/deactivate` }),
  },
  {
    method: 'POST',
    path: '/api/admin/users/:id/reactivate',
    allow: ['admin'],
    action: 'users.manage',
    build: async (w) => {
      const u = await w.freshUser(['analyst']);
      await w.ctx.database.db.update(users).set({ active: false }).where(eq(users.id, u.id));
      return { path: `/api/admin/users/${u.id}/reactivate` };
    },
  },
  {
    method: 'PUT',
    path: '/api/admin/users/:id/roles',
    allow: ['admin'],
    action: 'users.manage',
    build: async (w) => ({ path: `/api/admin/users/${(await w.freshUser(['analyst'])).id}/roles`, body: { roles: ['analyst', 'supervisor'] } }),
  },
  {
    method: 'PUT',
    path: '/api/admin/users/:id/stations',
    allow: ['admin'],
    action: 'users.manage',
    build: async (w) => ({ path: `/api/admin/users/${(await w.freshUser(['operator'])).id}/stations`, body: { stationIds: [kv(w, 'KV05')] } }),
  },

  // ---- audit log
  { method: 'GET', path: '/api/audit', allow: ['supervisor', 'admin'], action: 'audit.view', build: async () => ({ path: '/api/audit?limit=5&action=auth.' }) },

  // ---- sign-in and friends (public), me and sign-out (signed in)
  {
    method: 'POST',
    path: '/api/auth/forgot-password',
    allow: 'public',
    ok: [202],
    build: async () => ({ path: '/api/auth/forgot-password', body: { email: `nobody-${next()}@kestrel.example` } }),
  },
  {
    method: 'POST',
    path: '/api/auth/invitations/accept',
    allow: 'public',
    ok: [201],
    build: async (w) => ({ path: '/api/auth/invitations/accept', cookie: null, body: { token: (await invitationToken(w)).token, password: 'matrix-chosen-password' } }),
  },
  { method: 'POST', path: '/api/auth/invitations/check', allow: 'public', build: async (w) => ({ path: '/api/auth/invitations/check', body: { token: (await invitationToken(w)).token } }) },
  { method: 'GET', path: '/api/auth/me', allow: 'signed-in', build: async () => ({ path: '/api/auth/me' }) },
  { method: 'GET', path: '/api/auth/session', allow: 'public', build: async () => ({ path: '/api/auth/session' }) },
  { method: 'POST', path: '/api/auth/reset-password', allow: 'public', build: async (w) => ({ path: '/api/auth/reset-password', cookie: null, body: { token: await resetToken(w), password: 'matrix-reset-password' } }) },
  { method: 'POST', path: '/api/auth/reset-password/check', allow: 'public', build: async (w) => ({ path: '/api/auth/reset-password/check', body: { token: await resetToken(w) } }) },
  {
    method: 'POST',
    path: '/api/auth/sign-in',
    allow: 'public',
    build: async (_w, as) => ({ path: '/api/auth/sign-in', cookie: null, body: { email: `${as === 'anonymous' ? 'analyst' : as}@kestrel.example`, password: demoPassword } }),
  },
  {
    method: 'POST',
    path: '/api/auth/sign-out',
    allow: 'signed-in',
    build: async (w, as) => {
      if (as === 'anonymous') return { path: '/api/auth/sign-out' };
      const s = await w.sessions.create(w.userId[as], { ipAddress: '127.0.0.1', userAgent: 'matrix' });
      return { path: '/api/auth/sign-out', cookie: `seisift_session=${s.id}` };
    },
  },

  // ---- health and API description (public)
  { method: 'GET', path: '/api/health', allow: 'public', build: async () => ({ path: '/api/health' }) },
  { method: 'GET', path: '/api/openapi.json', allow: 'public', build: async () => ({ path: '/api/openapi.json' }) },

  // ---- review queue (issue 6): operators see their stations' items; analysts and supervisors work it
  { method: 'GET', path: '/api/queue', allow: ['operator', 'analyst', 'supervisor'], action: 'queue.view', build: async () => ({ path: '/api/queue' }) },
  {
    method: 'GET',
    path: '/api/queue/items/:id',
    allow: ['operator', 'analyst', 'supervisor'],
    action: 'queue.view',
    build: async (w, as) => ({ path: `/api/queue/items/${(await item(w, as)).id}` }),
    foreignStation: async (w) => ({ path: `/api/queue/items/${(await item(w, 'analyst', { station: 'KV04' })).id}` }),
    missing: async () => ({ path: `/api/queue/items/${NO_ID}` }),
  },
  {
    method: 'GET',
    path: '/api/queue/items/:id/traces',
    allow: ['operator', 'analyst', 'supervisor'],
    action: 'queue.view',
    build: async (w, as) => ({ path: `/api/queue/items/${(await item(w, as, { samples: true })).id}/traces` }),
    foreignStation: async (w) => ({ path: `/api/queue/items/${(await item(w, 'analyst', { station: 'KV04', samples: true })).id}/traces` }),
    missing: async () => ({ path: `/api/queue/items/${NO_ID}/traces` }),
  },
  {
    method: 'POST',
    path: '/api/queue/items/:id/claim',
    allow: ['analyst', 'supervisor'],
    action: 'queue.claim',
    build: async (w, as) => ({ path: `/api/queue/items/${(await item(w, as)).id}/claim`, body: { version: 1 } }),
  },
  {
    method: 'POST',
    path: '/api/queue/items/:id/dismiss',
    allow: ['analyst', 'supervisor'],
    action: 'queue.dismiss',
    build: async (w, as) => {
      const it = await item(w, as, { claim: true });
      return { path: `/api/queue/items/${it.id}/dismiss`, body: { version: it.version, noiseReason: 'traffic' } };
    },
  },
  {
    method: 'POST',
    path: '/api/queue/items/:id/escalate',
    allow: ['analyst', 'supervisor'],
    action: 'queue.escalate',
    build: async (w, as) => {
      const it = await item(w, as, { claim: true });
      return { path: `/api/queue/items/${it.id}/escalate`, body: { version: it.version, reason: 'matrix check' } };
    },
  },
  {
    method: 'POST',
    path: '/api/queue/items/:id/keepalive',
    allow: ['analyst', 'supervisor'],
    action: 'queue.claim',
    build: async (w, as) => ({ path: `/api/queue/items/${(await item(w, as, { claim: true })).id}/keepalive` }),
  },
  {
    method: 'POST',
    path: '/api/queue/items/:id/label',
    allow: ['analyst', 'supervisor'],
    action: 'queue.label',
    build: async (w, as) => {
      const it = await item(w, as, { claim: true });
      return { path: `/api/queue/items/${it.id}/label`, body: { version: it.version, label: { eventType: 'earthquake', certainty: 'suspected' } } };
    },
  },
  {
    method: 'POST',
    path: '/api/queue/items/:id/release',
    allow: ['analyst', 'supervisor'],
    action: 'queue.claim',
    build: async (w, as) => {
      const it = await item(w, as, { claim: true });
      return { path: `/api/queue/items/${it.id}/release`, body: { version: it.version } };
    },
  },

  // ---- stations (issue 5): supervisors and admins register stations; operators only on their own stations
  { method: 'GET', path: '/api/stations', allow: ['operator', 'analyst', 'supervisor', 'admin'], action: 'station.view', build: async () => ({ path: '/api/stations' }) },
  {
    method: 'POST',
    path: '/api/stations',
    allow: ['supervisor', 'admin'],
    action: 'station.create',
    build: async () => {
      const n = next();
      return { path: '/api/stations', body: { network: 'XX', code: `KM${String(n).padStart(2, '0')}`, name: `Matrix station ${n}`, latitude: 46.2, longitude: 11.1, elevationM: 600 } };
    },
  },
  {
    method: 'POST',
    path: '/api/stations/import/preview',
    allow: ['operator', 'analyst', 'supervisor', 'admin'],
    action: 'station.view',
    build: async () => ({ path: '/api/stations/import/preview', files: [{ field: 'file', bytes: stationXml(), filename: 'kv.xml' }] }),
  },
  {
    // Applying changes stations: station.edit on each station in the file (station.create for new
    // ones), so operators (their own), supervisors and admins succeed; the route gate is station.view.
    method: 'POST',
    path: '/api/stations/import/apply',
    allow: ['operator', 'supervisor', 'admin'],
    build: async (w, as) => {
      const xml = as === 'operator' ? stationXmlKv01() : stationXml();
      const preview = await call(w, 'POST', '/api/stations/import/preview', cookieOf(w, as)).attach('file', xml, 'kv.xml');
      const hash = typeof preview.body?.previewHash === 'string' ? preview.body.previewHash : 'none';
      return { path: '/api/stations/import/apply', files: [{ field: 'file', bytes: xml, filename: 'kv.xml' }], fields: { previewHash: hash } };
    },
    // A station not the operator's (KV04, or an unregistered one) is left out of the operator's
    // import and shown without its stored data: tests/server/routes/stations/stations.test.ts.
  },
  {
    method: 'GET',
    path: '/api/stations/:id',
    allow: ['operator', 'analyst', 'supervisor', 'admin'],
    action: 'station.view',
    build: async (w) => ({ path: `/api/stations/${kv(w, 'KV01')}` }),
    foreignStation: async (w) => ({ path: `/api/stations/${kv(w, 'KV04')}` }),
    missing: async () => ({ path: `/api/stations/${NO_ID}` }),
  },
  {
    method: 'PATCH',
    path: '/api/stations/:id',
    allow: ['operator', 'supervisor', 'admin'],
    action: 'station.edit',
    build: async (w) => ({ path: `/api/stations/${kv(w, 'KV02')}`, body: { siteDescription: `matrix edit ${next()}` } }),
    foreignStation: async (w) => ({ path: `/api/stations/${kv(w, 'KV04')}`, body: { siteDescription: 'not yours' } }),
    missing: async () => ({ path: `/api/stations/${NO_ID}`, body: { siteDescription: 'not yours' } }),
  },
  {
    method: 'POST',
    path: '/api/stations/:id/channels',
    allow: ['operator', 'supervisor', 'admin'],
    action: 'station.edit',
    build: async (w) => ({ path: `/api/stations/${kv(w, 'KV02')}/channels`, body: { location: '10', code: `HN${'ZNE'[next() % 3]}`, sampleRateHz: 200 } }),
    foreignStation: async (w) => ({ path: `/api/stations/${kv(w, 'KV04')}/channels`, body: { location: '10', code: 'HNZ', sampleRateHz: 200 } }),
    missing: async () => ({ path: `/api/stations/${NO_ID}/channels`, body: { location: '10', code: 'HNZ', sampleRateHz: 200 } }),
  },
  {
    method: 'DELETE',
    path: '/api/stations/:id/channels/:childId',
    allow: ['operator', 'supervisor', 'admin'],
    action: 'station.edit',
    build: async (w) => {
      const now = new Date();
      const [res] = await w.ctx.database.db.insert(channels).values({ stationId: kv(w, 'KV03'), location: '20', code: `EH${next() % 10}`, sampleRateHz: 100, createdAt: now, updatedAt: now });
      return { path: `/api/stations/${kv(w, 'KV03')}/channels/${res.insertId}` };
    },
    foreignStation: async (w) => {
      const [ch] = await w.ctx.database.db.select({ id: channels.id }).from(channels).where(eq(channels.stationId, kv(w, 'KV04')));
      return { path: `/api/stations/${kv(w, 'KV04')}/channels/${ch?.id ?? 1}` };
    },
    missing: async () => ({ path: `/api/stations/${NO_ID}/channels/${NO_ID}` }),
  },
  {
    method: 'GET',
    path: '/api/stations/:id/health',
    allow: ['operator', 'analyst', 'supervisor', 'admin'],
    action: 'station.view',
    build: async (w) => ({ path: `/api/stations/${kv(w, 'KV01')}/health` }),
    foreignStation: async (w) => ({ path: `/api/stations/${kv(w, 'KV04')}/health` }),
    missing: async () => ({ path: `/api/stations/${NO_ID}/health` }),
  },
  {
    method: 'PUT',
    path: '/api/stations/:id/profile',
    allow: ['operator', 'supervisor', 'admin'],
    action: 'station.edit',
    build: async (w) => {
      const res = await call(w, 'GET', `/api/stations/${kv(w, 'KV01')}`, w.cookie.admin);
      return { path: `/api/stations/${kv(w, 'KV01')}/profile`, body: res.body.station.profile };
    },
    foreignStation: async (w) => {
      const res = await call(w, 'GET', `/api/stations/${kv(w, 'KV04')}`, w.cookie.admin);
      return { path: `/api/stations/${kv(w, 'KV04')}/profile`, body: res.body.station.profile };
    },
    missing: async (w) => {
      const res = await call(w, 'GET', `/api/stations/${kv(w, 'KV04')}`, w.cookie.admin);
      return { path: `/api/stations/${NO_ID}/profile`, body: res.body.station.profile };
    },
  },
  {
    method: 'GET',
    path: '/api/stations/:id/tokens',
    allow: ['operator', 'admin'],
    action: 'token.manage',
    build: async (w) => ({ path: `/api/stations/${kv(w, 'KV01')}/tokens` }),
    foreignStation: async (w) => ({ path: `/api/stations/${kv(w, 'KV04')}/tokens` }),
    missing: async () => ({ path: `/api/stations/${NO_ID}/tokens` }),
  },
  {
    method: 'POST',
    path: '/api/stations/:id/tokens',
    allow: ['operator', 'admin'],
    action: 'token.manage',
    build: async (w) => ({ path: `/api/stations/${kv(w, 'KV01')}/tokens`, body: { label: `matrix ${next()}` } }),
    foreignStation: async (w) => ({ path: `/api/stations/${kv(w, 'KV04')}/tokens`, body: { label: 'not yours' } }),
    missing: async () => ({ path: `/api/stations/${NO_ID}/tokens`, body: { label: 'not yours' } }),
  },
  {
    method: 'POST',
    path: '/api/stations/:id/tokens/:childId/revoke',
    allow: ['operator', 'admin'],
    action: 'token.manage',
    build: async (w) => {
      const made = await call(w, 'POST', `/api/stations/${kv(w, 'KV01')}/tokens`, w.cookie.admin).send({ label: `to revoke ${next()}` });
      const id = made.body?.token?.id ?? made.body?.id ?? 1;
      return { path: `/api/stations/${kv(w, 'KV01')}/tokens/${id}/revoke` };
    },
    foreignStation: async (w) => {
      const made = await call(w, 'POST', `/api/stations/${kv(w, 'KV04')}/tokens`, w.cookie.admin).send({ label: `foreign ${next()}` });
      const id = made.body?.token?.id ?? made.body?.id ?? 1;
      return { path: `/api/stations/${kv(w, 'KV04')}/tokens/${id}/revoke` };
    },
    missing: async () => ({ path: `/api/stations/${NO_ID}/tokens/${NO_ID}/revoke` }),
  },

  // ---- supervisor (issue 7): inbox, review, candidate events, thresholds, dashboard, export
  {
    method: 'GET',
    path: '/api/supervisor/candidate-events',
    allow: ['operator', 'analyst', 'supervisor'],
    action: 'queue.view',
    build: async () => ({ path: '/api/supervisor/candidate-events?from=2026-06-01T00:00:00Z&to=2026-07-01T00:00:00Z' }),
  },
  {
    method: 'GET',
    path: '/api/supervisor/candidate-events/:id',
    allow: ['operator', 'analyst', 'supervisor'],
    action: 'queue.view',
    build: async (w) => ({ path: `/api/supervisor/candidate-events/${await candidateEvent(w)}` }),
    foreignStation: async (w) => ({ path: `/api/supervisor/candidate-events/${await candidateEvent(w, ['KV04', 'KV05', 'KV06'])}` }),
    missing: async () => ({ path: `/api/supervisor/candidate-events/${NO_ID}` }),
  },
  {
    method: 'POST',
    path: '/api/supervisor/candidate-events/:id/label',
    allow: ['analyst', 'supervisor'],
    action: 'queue.label',
    build: async (w) => ({ path: `/api/supervisor/candidate-events/${await candidateEvent(w)}/label`, body: { eventType: 'earthquake' } }),
  },
  { method: 'GET', path: '/api/supervisor/latest-windows', allow: ['supervisor'], action: 'review.evaluate', build: async () => ({ path: '/api/supervisor/latest-windows' }) },
  {
    method: 'GET',
    path: '/api/similarity/items/:id/matches',
    allow: ['operator', 'analyst', 'supervisor'],
    action: 'queue.view',
    build: async (w, as) => ({ path: `/api/similarity/items/${(await item(w, as, { samples: true })).id}/matches` }),
    foreignStation: async (w) => ({ path: `/api/similarity/items/${(await item(w, 'analyst', { station: 'KV04', samples: true })).id}/matches` }),
    missing: async () => ({ path: `/api/similarity/items/${NO_ID}/matches` }),
  },
  { method: 'GET', path: '/api/similarity/families', allow: ['supervisor'], action: 'dashboard.view', build: async () => ({ path: '/api/similarity/families?minValue=0.7' }) },
  { method: 'GET', path: '/api/supervisor/dashboard', allow: ['supervisor'], action: 'dashboard.view', build: async () => ({ path: '/api/supervisor/dashboard?from=2026-03-01T00:00:00Z&to=2026-03-15T00:00:00Z' }) },
  // Events (issue 17). The world holds no event: the routes on one event are checked past the
  // permission (401 anonymous, 403 the roles without it) up to the 404 of the missing event.
  { method: 'GET', path: '/api/events', allow: ['operator', 'analyst', 'supervisor'], action: 'event.view', build: async () => ({ path: '/api/events' }) },
  { method: 'POST', path: '/api/events', allow: ['analyst', 'supervisor'], action: 'event.edit', ok: [404], build: async () => ({ path: '/api/events', body: { itemIds: [999999991] } }) },
  { method: 'GET', path: '/api/events/:id', allow: ['operator', 'analyst', 'supervisor'], action: 'event.view', ok: [404], build: async () => ({ path: '/api/events/999999991' }) },
  { method: 'GET', path: '/api/events/:id/geometry', allow: ['operator', 'analyst', 'supervisor'], action: 'event.view', ok: [404], build: async () => ({ path: '/api/events/999999991/geometry' }) },
  { method: 'GET', path: '/api/events/:id/traces', allow: ['operator', 'analyst', 'supervisor'], action: 'event.view', ok: [404], build: async () => ({ path: '/api/events/999999991/traces' }) },
  { method: 'POST', path: '/api/events/:id/picks', allow: ['analyst', 'supervisor'], action: 'event.pick', ok: [404], build: async () => ({ path: '/api/events/999999991/picks', body: { streamId: 'XX.KV01.00.HHZ', phase: 'P', time: '2026-03-14T09:26:53.589Z', uncertaintyS: 0.1, eventVersion: 1 } }) },
  { method: 'POST', path: '/api/events/:id/picks/accept', allow: ['analyst', 'supervisor'], action: 'event.pick', ok: [404], build: async () => ({ path: '/api/events/999999991/picks/accept', body: { eventVersion: 1 } }) },
  { method: 'PUT', path: '/api/events/:id/picks/:pickId', allow: ['analyst', 'supervisor'], action: 'event.pick', ok: [404], build: async () => ({ path: '/api/events/999999991/picks/1', body: { phase: 'P', time: '2026-03-14T09:26:53.589Z', uncertaintyS: 0.1, eventVersion: 1 } }) },
  { method: 'DELETE', path: '/api/events/:id/picks/:pickId', allow: ['analyst', 'supervisor'], action: 'event.pick', ok: [404], build: async () => ({ path: '/api/events/999999991/picks/1?eventVersion=1' }) },
  { method: 'PUT', path: '/api/events/:id/amplitudes', allow: ['analyst', 'supervisor'], action: 'event.edit', ok: [404], build: async () => ({ path: '/api/events/999999991/amplitudes', body: { streamId: 'XX.KV01.00.HHN', amplitudeMm: 1, time: '2026-03-14T09:26:53.589Z', eventVersion: 1 } }) },
  { method: 'DELETE', path: '/api/events/:id/amplitudes/:streamId', allow: ['analyst', 'supervisor'], action: 'event.edit', ok: [404], build: async () => ({ path: '/api/events/999999991/amplitudes/XX.KV01.00.HHN?eventVersion=1' }) },
  { method: 'POST', path: '/api/events/:id/members', allow: ['analyst', 'supervisor'], action: 'event.edit', ok: [404], build: async () => ({ path: '/api/events/999999991/members', body: { itemId: 1, eventVersion: 1 } }) },
  { method: 'DELETE', path: '/api/events/:id/members/:itemId', allow: ['analyst', 'supervisor'], action: 'event.edit', ok: [404], build: async () => ({ path: '/api/events/999999991/members/1?eventVersion=1' }) },
  { method: 'POST', path: '/api/events/:id/relocate', allow: ['analyst', 'supervisor'], action: 'event.edit', ok: [404], build: async () => ({ path: '/api/events/999999991/relocate', body: { eventVersion: 1 } }) },
  { method: 'PUT', path: '/api/events/:id/label', allow: ['analyst', 'supervisor'], action: 'event.edit', ok: [404], build: async () => ({ path: '/api/events/999999991/label', body: { eventType: 'earthquake', typeCertainty: 'known', eventVersion: 1 } }) },
  { method: 'GET', path: '/api/events/velocity-models/:network', allow: ['operator', 'analyst', 'supervisor'], action: 'event.view', build: async () => ({ path: '/api/events/velocity-models/XX' }) },
  { method: 'PUT', path: '/api/events/velocity-models/:network', allow: ['supervisor'], action: 'velocity-model.edit', build: async () => ({ path: '/api/events/velocity-models/ZZ', body: { name: 'matrix test model', layers: [{ topKm: 0, vpKmS: 6, vsKmS: 3.5 }] } }) },
  { method: 'POST', path: '/api/supervisor/events/:id/return', allow: ['supervisor'], action: 'review.evaluate', ok: [404], build: async () => ({ path: '/api/supervisor/events/999999991/return', body: { eventVersion: 1, comment: 'matrix: look again' } }) },
  { method: 'GET', path: '/api/supervisor/export', allow: ['supervisor'], action: 'catalogue.export', build: async () => ({ path: '/api/supervisor/export?from=2026-03-01T00:00:00Z&to=2026-03-15T00:00:00Z&format=csv' }) },
  { method: 'GET', path: '/api/supervisor/inbox', allow: ['supervisor'], action: 'inbox.view', build: async () => ({ path: '/api/supervisor/inbox' }) },
  { method: 'POST', path: '/api/supervisor/inbox/:id/acknowledge', allow: ['supervisor'], action: 'inbox.view', build: async (w) => ({ path: `/api/supervisor/inbox/${await inboxEntry(w)}/acknowledge` }) },
  { method: 'POST', path: '/api/supervisor/inbox/:id/confirm', allow: ['supervisor'], action: 'review.evaluate', build: async (w) => ({ path: `/api/supervisor/inbox/${await inboxEntry(w)}/confirm`, body: { label: { eventType: 'earthquake' } } }) },
  { method: 'POST', path: '/api/supervisor/inbox/:id/read', allow: ['supervisor'], action: 'inbox.view', build: async (w) => ({ path: `/api/supervisor/inbox/${await inboxEntry(w)}/read` }) },
  {
    method: 'POST',
    path: '/api/supervisor/inbox/:id/return',
    allow: ['supervisor'],
    action: 'review.evaluate',
    build: async (w) => ({ path: `/api/supervisor/inbox/${await inboxEntry(w)}/return`, body: { comment: 'matrix: look again' } }),
  },
  {
    method: 'GET',
    path: '/api/supervisor/items/:id/review-note',
    allow: ['operator', 'analyst', 'supervisor'],
    action: 'queue.view',
    build: async (w) => ({ path: `/api/supervisor/items/${(await labelledItem(w)).id}/review-note` }),
    foreignStation: async (w) => ({ path: `/api/supervisor/items/${(await labelledItem(w, 'KV04')).id}/review-note` }),
    missing: async () => ({ path: `/api/supervisor/items/${NO_ID}/review-note` }),
  },
  { method: 'GET', path: '/api/supervisor/review', allow: ['supervisor'], action: 'review.evaluate', build: async () => ({ path: '/api/supervisor/review' }) },
  {
    method: 'POST',
    path: '/api/supervisor/review/items/:id/return',
    allow: ['supervisor'],
    action: 'review.evaluate',
    build: async (w) => {
      const it = await labelledItem(w);
      return { path: `/api/supervisor/review/items/${it.id}/return`, body: { version: it.version, comment: 'matrix: look again' } };
    },
  },
  {
    method: 'POST',
    path: '/api/supervisor/review/items/:id/status',
    allow: ['supervisor'],
    action: 'review.evaluate',
    build: async (w) => {
      const it = await labelledItem(w);
      return { path: `/api/supervisor/review/items/${it.id}/status`, body: { version: it.version, status: 'confirmed' } };
    },
  },
  { method: 'GET', path: '/api/supervisor/thresholds/:stationId', allow: ['supervisor'], action: 'thresholds.edit', build: async (w) => ({ path: `/api/supervisor/thresholds/${kv(w, 'KV01')}` }) },
  {
    method: 'POST',
    path: '/api/supervisor/thresholds/:stationId/apply',
    allow: ['supervisor'],
    action: 'thresholds.edit',
    build: async (w) => ({ path: `/api/supervisor/thresholds/${kv(w, 'KV05')}/apply`, body: { thresholds: { eventZ: 3, noiseZ: 2, centroidMaxFactor: 1.5 } } }),
  },
  {
    method: 'POST',
    path: '/api/supervisor/thresholds/:stationId/rescore',
    allow: ['supervisor'],
    action: 'thresholds.edit',
    build: async (w) => ({ path: `/api/supervisor/thresholds/${kv(w, 'KV05')}/rescore`, body: { from: '2026-03-01T00:00:00Z', to: '2026-03-02T00:00:00Z' } }),
  },

  // ---- uploads (issue 5): operators for their own stations (or an ingest token)
  {
    method: 'POST',
    path: '/api/uploads',
    allow: ['operator'],
    action: 'upload.create',
    ok: [201],
    build: async () => ({ path: '/api/uploads', files: [{ field: 'files', bytes: csvWindow(next()), filename: 'kv01.csv' }], fields: { streamId: 'XX.KV01.00.HHZ' } }),
    foreignStation: async () => ({ path: '/api/uploads', files: [{ field: 'files', bytes: csvWindow(next()), filename: 'kv04.csv' }], fields: { streamId: 'XX.KV04.00.HHZ' } }),
    missing: async () => ({ path: '/api/uploads', files: [{ field: 'files', bytes: csvWindow(next()), filename: 'kv97.csv' }], fields: { streamId: 'XX.KV97.00.HHZ' } }),
  },
];
