/**
 * The role × route matrix extended to the live socket (/ws): each demo role (and anonymous) opens a
 * socket on the real app, changes of every kind are made (items at the operator's KV01 and at
 * KV04–KV06, an escalation that fills the supervisor's inbox, a candidate event across KV01, KV04
 * and KV05), and what each socket receives — live, and again when it resumes with `?since=` — must
 * be exactly what the same person may read through the API (GET of the item, the inbox, the
 * candidate event). Then the socket closes within a few seconds of sign-out, deactivation, a role
 * change and a station-assignment change (codes in shared/realtime.ts), and of a deactivation
 * written straight into the database (the periodic re-check).
 * Real MariaDB, the demo scenario (operator@ holds KV01–KV03), the fake SMTP server.
 */
import { createServer, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { WebSocket } from 'ws';
import { roles, type Role } from '@shared/auth/roles';
import { serverMessageSchema, wsPolicyViolation, wsRightsChanged, wsSessionEnded, type ChangeMessage, type ServerMessage } from '@shared/realtime';
import { queueItems } from '@server/db/schema/queue-items';
import { windows } from '@server/db/schema/uploads';
import { users } from '@server/db/schema/users';
import { latestSeq } from '@server/realtime/change-log';
import { onItemsCreated } from '@server/features/events/candidate-events';
import { createItem } from '@tests/setup/queue-fixtures';
import { call, createWorld, type Principal, type World } from '@tests/server/support/world';

type Live = {
  ws: WebSocket;
  messages: ServerMessage[];
  changes: () => ChangeMessage[];
  hello: Promise<void>;
  closed: Promise<{ code: number; reason: string; at: number }>;
};

function open(url: string, origin: string, cookie: string | null): Live {
  const ws = new WebSocket(url, { headers: { origin, ...(cookie ? { cookie } : {}) } });
  const messages: ServerMessage[] = [];
  let helloSeen: () => void = () => {};
  const hello = new Promise<void>((ok) => (helloSeen = ok));
  ws.on('message', (data) => {
    const m = serverMessageSchema.parse(JSON.parse(String(data)));
    messages.push(m);
    if (m.type === 'hello') helloSeen();
  });
  ws.on('error', () => {});
  const closed = new Promise<{ code: number; reason: string; at: number }>((ok) => ws.once('close', (code, reason) => ok({ code, reason: String(reason), at: Date.now() })));
  return { ws, messages, changes: () => messages.flatMap((m) => (m.type === 'changes' ? m.changes : [])), hello, closed };
}

async function until(check: () => boolean | Promise<boolean>, ms = 5000): Promise<void> {
  const end = Date.now() + ms;
  while (!(await check())) {
    if (Date.now() > end) throw new Error('timed out waiting');
    await new Promise((r) => setTimeout(r, 25));
  }
}

const ids = (list: ChangeMessage[], resource: string) => [...new Set(list.filter((c) => c.resource === resource).map((c) => c.id))].sort((a, b) => a - b);

describe('socket matrix: each role receives exactly what the API lets it read', () => {
  let w: World;
  let server: Server;
  let wsUrl: string;
  let origin: string;
  let startSeq = 0;
  const live = {} as Record<Principal, Live>;
  const made = { items: [] as number[], foreign: [] as number[], event: 0, eventItems: [] as number[] };

  beforeAll(async () => {
    w = await createWorld({ SEISIFT_SIGNIN_MAX_PER_ADDRESS: '1000' });
    server = createServer(w.app);
    w.ctx.hub.attach(server);
    await new Promise<void>((ok) => server.listen(0, '127.0.0.1', () => ok()));
    const port = (server.address() as AddressInfo).port;
    wsUrl = `ws://127.0.0.1:${port}/ws`;
    origin = `http://127.0.0.1:${port}`;
    startSeq = await latestSeq(w.ctx.database.db);
    for (const as of ['anonymous', ...roles] as const) live[as] = open(wsUrl, origin, as === 'anonymous' ? null : w.cookie[as]);
    await Promise.all(roles.map((r) => live[r].hello));

    const db = w.ctx.database.db;
    // Items at every station: the operator holds KV01–KV03 only.
    for (const code of ['KV01', 'KV02', 'KV03', 'KV04', 'KV05', 'KV06']) {
      const id = await createItem(db, { station: code });
      made.items.push(id);
      if (['KV04', 'KV05', 'KV06'].includes(code)) made.foreign.push(id);
    }
    // An escalation: the item changes, and the supervisor's inbox gets an entry.
    const esc = await createItem(db, { station: 'KV02' });
    made.items.push(esc);
    const claimed = await call(w, 'POST', `/api/queue/items/${esc}/claim`, w.cookie.analyst).send({ version: 1 });
    expect(claimed.status).toBe(200);
    const escalated = await call(w, 'POST', `/api/queue/items/${esc}/escalate`, w.cookie.analyst).send({ version: 2, reason: 'socket matrix' });
    expect(escalated.status).toBe(200);
    // A candidate event across KV01, KV04 and KV05 (first triggers at the same second).
    const windowStart = new Date(Date.UTC(2026, 6, 1, 12));
    for (const code of ['KV01', 'KV04', 'KV05']) {
      const id = await createItem(db, { station: code, windowStart });
      const [row] = await db.select({ windowId: queueItems.windowId }).from(queueItems).where(eq(queueItems.id, id));
      const channel = { id: `XX.${code}.00.HHZ`, startTime: windowStart.toISOString(), staLta: { triggers: [{ on: 20, off: 30 }] } };
      await db.update(windows).set({ analysis: { leadChannel: channel.id, channels: [channel] } }).where(eq(windows.id, row?.windowId ?? 0));
      made.eventItems.push(id);
      made.items.push(id);
      if (code !== 'KV01') made.foreign.push(id);
    }
    const touched = await onItemsCreated({ db }, made.eventItems);
    made.event = touched[0] ?? 0;
    expect(made.event).toBeGreaterThan(0);
    w.ctx.hub.notify();
    await w.ctx.hub.flush();
    await until(() => ids(live.supervisor.changes(), 'candidate_event').includes(made.event));
  });
  afterAll(async () => {
    for (const l of Object.values(live)) l.ws.close();
    await new Promise<void>((ok) => server.close(() => ok()));
    await w.close();
  });

  /** What the API lets `as` read of what was made: item ids, inbox entry ids, candidate event ids with their listed members. */
  async function readable(as: Role) {
    const cookie = w.cookie[as];
    const items: number[] = [];
    for (const id of made.items) if ((await call(w, 'GET', `/api/queue/items/${id}`, cookie)).status === 200) items.push(id);
    const inbox = await call(w, 'GET', '/api/supervisor/inbox', cookie);
    const inboxIds: number[] = inbox.status === 200 ? inbox.body.entries.map((e: { id: number }) => e.id) : [];
    const ev = await call(w, 'GET', `/api/supervisor/candidate-events/${made.event}`, cookie);
    const events = ev.status === 200 ? [made.event] : [];
    const members: number[] = ev.status === 200 ? ev.body.members.map((m: { itemId: number }) => m.itemId) : [];
    return { items: items.sort((a, b) => a - b), inbox: inboxIds.sort((a, b) => a - b), events, members: members.sort((a, b) => a - b) };
  }

  it('refuses an anonymous socket with 1008', async () => {
    expect((await live.anonymous.closed).code).toBe(wsPolicyViolation);
  });

  for (const as of roles) {
    it(`${as}: live changes = what GET /api/queue/items/:id, /api/supervisor/inbox and /candidate-events/:id answer`, async () => {
      const got = live[as].changes();
      const api = await readable(as);
      expect(ids(got, 'item'), 'items').toEqual(api.items);
      expect(ids(got, 'inbox'), 'inbox entries').toEqual(api.inbox);
      expect(ids(got, 'candidate_event'), 'candidate events').toEqual(api.events);
      for (const c of got.filter((x) => x.resource === 'candidate_event')) expect([...(c.summary?.itemIds as number[])].sort((a, b) => a - b)).toEqual(api.members);
    });

    it(`${as}: a replay with ?since= is filtered the same way`, async () => {
      const again = open(`${wsUrl}?since=${startSeq}`, origin, w.cookie[as]);
      await again.hello;
      const want = live[as].changes().map((c) => c.seq);
      await until(() => again.changes().length >= want.length, 3000).catch(() => {});
      await new Promise((r) => setTimeout(r, 150));
      expect(again.changes().map((c) => c.seq)).toEqual(want);
      again.ws.close();
    });
  }

  it('the operator of KV01–KV03 receives nothing of KV04–KV06; the admin (no queue rights) receives no queue item at all', () => {
    const opItems = ids(live.operator.changes(), 'item');
    expect(opItems.filter((id) => made.foreign.includes(id))).toEqual([]);
    expect(opItems.length).toBeGreaterThan(0);
    const opEvent = live.operator.changes().find((c) => c.resource === 'candidate_event');
    expect(opEvent?.summary?.itemIds).toEqual([made.eventItems[0]]);
    expect(live.admin.changes().filter((c) => c.resource === 'item' || c.resource === 'candidate_event')).toEqual([]);
    expect(live.analyst.changes().filter((c) => c.resource === 'inbox')).toEqual([]);
  });
});

describe('sockets close within a few seconds when their session ends or their rights change', () => {
  let w: World;
  let server: Server;
  let wsUrl: string;
  let origin: string;
  const withinMs = 3000;

  beforeAll(async () => {
    w = await createWorld({ SEISIFT_SIGNIN_MAX_PER_ADDRESS: '1000' });
    server = createServer(w.app);
    w.ctx.hub.attach(server);
    await new Promise<void>((ok) => server.listen(0, '127.0.0.1', () => ok()));
    const port = (server.address() as AddressInfo).port;
    wsUrl = `ws://127.0.0.1:${port}/ws`;
    origin = `http://127.0.0.1:${port}`;
  });
  afterAll(async () => {
    await new Promise<void>((ok) => server.close(() => ok()));
    await w.close();
  });

  async function openFor(cookie: string) {
    const l = open(wsUrl, origin, cookie);
    await l.hello;
    return l;
  }

  it('sign-out → 4401', async () => {
    const u = await w.freshUser(['analyst']);
    const l = await openFor(u.cookie);
    const t0 = Date.now();
    expect((await call(w, 'POST', '/api/auth/sign-out', u.cookie)).status).toBe(204);
    const c = await l.closed;
    expect(c.code).toBe(wsSessionEnded);
    expect(c.at - t0).toBeLessThan(withinMs);
  });

  it('deactivation by an admin → 4401', async () => {
    const u = await w.freshUser(['supervisor']);
    const l = await openFor(u.cookie);
    const t0 = Date.now();
    expect((await call(w, 'POST', `/api/admin/users/${u.id}/deactivate`, w.cookie.admin)).status).toBe(204);
    const c = await l.closed;
    expect(c.code).toBe(wsSessionEnded);
    expect(c.at - t0).toBeLessThan(withinMs);
  });

  it('a role change → 4401 (a role change ends the person\'s sessions)', async () => {
    const u = await w.freshUser(['supervisor']);
    const l = await openFor(u.cookie);
    const t0 = Date.now();
    expect((await call(w, 'PUT', `/api/admin/users/${u.id}/roles`, w.cookie.admin).send({ roles: ['analyst'] })).status).toBe(204);
    const c = await l.closed;
    expect(c.code).toBe(wsSessionEnded);
    expect(c.at - t0).toBeLessThan(withinMs);
  });

  it('a station-assignment change → 4403; the reconnected socket follows the new stations', async () => {
    const u = await w.freshUser(['operator'], { stationCodes: ['KV01'] });
    const l = await openFor(u.cookie);
    const t0 = Date.now();
    expect((await call(w, 'PUT', `/api/admin/users/${u.id}/stations`, w.cookie.admin).send({ stationIds: [w.stationIds.KV05] })).status).toBe(204);
    const c = await l.closed;
    expect(c.code).toBe(wsRightsChanged);
    expect(c.at - t0).toBeLessThan(withinMs);
    const again = await openFor(u.cookie);
    const kv01 = await createItem(w.ctx.database.db, { station: 'KV01' });
    const kv05 = await createItem(w.ctx.database.db, { station: 'KV05' });
    w.ctx.hub.notify();
    await until(() => ids(again.changes(), 'item').includes(kv05));
    expect(ids(again.changes(), 'item')).not.toContain(kv01);
    again.ws.close();
  });

  it('a session ended from another browser (account page) → 4401', async () => {
    const u = await w.freshUser(['analyst']);
    const l = await openFor(u.cookie);
    const other = await w.sessions.create(u.id, { ipAddress: '127.0.0.1', userAgent: 'second browser' });
    const otherCookie = `seisift_session=${other.id}`;
    expect((await call(w, 'DELETE', '/api/account/sessions', otherCookie)).status).toBe(204);
    expect((await l.closed).code).toBe(wsSessionEnded);
  });

  it('a deactivation written straight into the database (no hook) → 4401 by the periodic re-check', async () => {
    const u = await w.freshUser(['analyst']);
    const l = await openFor(u.cookie);
    const t0 = Date.now();
    await w.ctx.database.db.update(users).set({ active: false }).where(eq(users.id, u.id));
    const c = await l.closed;
    expect(c.code).toBe(wsSessionEnded);
    // The re-check runs every 2 s.
    expect(c.at - t0).toBeLessThan(2000 + withinMs);
  });
});
