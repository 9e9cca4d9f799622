import { createServer, type Server } from 'node:http';
import { sql } from 'drizzle-orm';
import type { AddressInfo } from 'node:net';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { WebSocket } from 'ws';
import { serverMessageSchema, wsPolicyViolation, wsRightsChanged, wsSessionEnded, type ServerMessage } from '@shared/realtime';
import { itemAudience, recordChange } from '@server/realtime/change-log';
import { createHub, type HubPrincipal, type HubVerdict, type RealtimeHub } from '@server/realtime/hub';
import { createLogger } from '@server/logger';
import { createTestDatabase, type TestDatabase } from '@tests/setup/test-db';

/** A test client that records every message it receives. */
function connect(url: string, headers: Record<string, string>) {
  const ws = new WebSocket(url, { headers });
  const messages: ServerMessage[] = [];
  const seqs: number[] = [];
  ws.on('message', (data) => {
    const m = serverMessageSchema.parse(JSON.parse(String(data)));
    messages.push(m);
    if (m.type === 'changes') seqs.push(...m.changes.map((c) => c.seq));
  });
  const opened = new Promise<void>((ok, fail) => {
    ws.once('open', () => ok());
    ws.once('error', fail);
  });
  const closed = new Promise<{ code: number; reason: string }>((ok) => ws.once('close', (code, reason) => ok({ code, reason: String(reason) })));
  return { ws, messages, seqs, opened, closed };
}

async function until(check: () => boolean, ms = 3000) {
  const end = Date.now() + ms;
  while (!check() && Date.now() < end) await new Promise((r) => setTimeout(r, 20));
}

describe('live hub over the change log (real MariaDB)', () => {
  let database: TestDatabase;
  let server: Server;
  let hub: RealtimeHub;
  let base: string;
  const origin = 'http://seisift.test';

  async function change(id: number) {
    await database.db.transaction(async (tx) => {
      await recordChange(tx, { resource: 'item', resourceId: id, kind: 'created', version: 1, summary: { n: id }, audience: itemAudience(1) });
    });
    hub.notify();
  }

  beforeAll(async () => {
    database = await createTestDatabase();
    hub = createHub({
      db: database.db,
      logger: createLogger('silent'),
      authenticate: async (req) => (req.headers['x-test-user'] ? { id: String(req.headers['x-test-user']), sessionId: `s-${String(req.headers['x-test-user'])}`, roles: ['analyst'], stationIds: [] } : null),
      originAllowed: (o) => o === origin,
      pollMs: 200,
    });
    server = createServer();
    hub.attach(server);
    await new Promise<void>((ok) => server.listen(0, '127.0.0.1', () => ok()));
    base = `ws://127.0.0.1:${(server.address() as AddressInfo).port}/ws`;
  });
  afterAll(async () => {
    await hub.close();
    await new Promise<void>((ok) => server.close(() => ok()));
    await database.drop();
  });

  it('closes a socket without a session with the policy code 1008', async () => {
    const c = connect(base, { origin });
    const { code } = await c.closed;
    expect(code).toBe(wsPolicyViolation);
  });

  it('closes a socket from a foreign origin with 1008', async () => {
    const c = connect(base, { origin: 'http://evil.test', 'x-test-user': 'u1' });
    expect((await c.closed).code).toBe(wsPolicyViolation);
  });

  it('gives each change one sequence number in commit order under 20 concurrent writers', async () => {
    const c = connect(base, { origin, 'x-test-user': 'u1' });
    await c.opened;
    await until(() => c.messages.some((m) => m.type === 'hello'));
    await Promise.all(Array.from({ length: 20 }, (_, i) => change(100 + i)));
    await hub.flush();
    await until(() => c.seqs.length >= 20);
    expect(c.seqs).toHaveLength(20);
    expect([...c.seqs].sort((a, b) => a - b)).toEqual(c.seqs);
    expect(new Set(c.seqs).size).toBe(20);
    c.ws.close();
  });

  it('a client that reconnects with since=N receives every change after N exactly once', async () => {
    const a = connect(base, { origin, 'x-test-user': 'u2' });
    await a.opened;
    await until(() => a.messages.some((m) => m.type === 'hello'));
    for (let i = 0; i < 5; i++) await change(200 + i);
    await hub.flush();
    await until(() => a.seqs.length >= 5);
    const last = a.seqs[a.seqs.length - 1] ?? 0;
    a.ws.terminate();
    await a.closed;

    // Changes while the client is away, and more while it is catching up.
    for (let i = 0; i < 7; i++) await change(300 + i);
    const b = connect(`${base}?since=${last}`, { origin, 'x-test-user': 'u2' });
    const during = Promise.all(Array.from({ length: 5 }, (_, i) => change(400 + i)));
    await b.opened;
    await during;
    await hub.flush();
    await until(() => b.seqs.length >= 12);
    await new Promise((r) => setTimeout(r, 300));
    expect(b.seqs).toHaveLength(12);
    expect(b.seqs[0]).toBe(last + 1);
    expect(b.seqs).toEqual(Array.from({ length: 12 }, (_, i) => last + 1 + i));
    b.ws.close();
  });

  it('tells a client to refetch when its resume point is older than the kept log', async () => {
    await database.pool.query('DELETE FROM change_log WHERE seq < 5');
    const c = connect(`${base}?since=1`, { origin, 'x-test-user': 'u3' });
    await c.opened;
    await until(() => c.messages.some((m) => m.type === 'refetch'));
    expect(c.messages.map((m) => m.type)).toEqual(['hello', 'refetch']);
    c.ws.close();
  });
});

describe('live hub: who hears what, and sockets that no longer hold (real MariaDB)', () => {
  let database: TestDatabase;
  let server: Server;
  let hub: RealtimeHub;
  let base: string;
  const origin = 'http://seisift.test';
  /** Principals by the x-test-user header; the stub re-check reads `verdicts`. */
  const people: Record<string, HubPrincipal> = {
    op: { id: 'op', sessionId: 's-op', roles: ['operator'], stationIds: [1, 2, 3] },
    an: { id: 'an', sessionId: 's-an', roles: ['analyst'], stationIds: [] },
    sup: { id: 'sup', sessionId: 's-sup', roles: ['supervisor'], stationIds: [] },
    sup2: { id: 'sup2', sessionId: 's-sup2', roles: ['supervisor'], stationIds: [] },
    adm: { id: 'adm', sessionId: 's-adm', roles: ['admin'], stationIds: [] },
  };
  const verdicts = new Map<string, HubVerdict>();

  async function record(change: Parameters<typeof recordChange>[1]) {
    await database.db.transaction(async (tx) => {
      await recordChange(tx, change);
    });
  }
  const item = (id: number, stationId: number) => record({ resource: 'item', resourceId: id, kind: 'created', version: 1, summary: { id, stationId }, audience: itemAudience(stationId) });
  const ids = (c: ReturnType<typeof connect>) => c.messages.flatMap((m) => (m.type === 'changes' ? m.changes.map((x) => `${x.resource}:${x.id}`) : []));

  beforeAll(async () => {
    database = await createTestDatabase();
    hub = createHub({
      db: database.db,
      logger: createLogger('silent'),
      authenticate: async (req) => people[String(req.headers['x-test-user'])] ?? null,
      originAllowed: (o) => o === origin,
      pollMs: 100,
      recheckMs: 60_000,
      recheck: async (principals) => new Map(principals.map((p) => [p.sessionId, verdicts.get(p.sessionId) ?? 'ok'])),
    });
    server = createServer();
    hub.attach(server);
    await new Promise<void>((ok) => server.listen(0, '127.0.0.1', () => ok()));
    base = `ws://127.0.0.1:${(server.address() as AddressInfo).port}/ws`;
  });
  afterAll(async () => {
    await hub.close();
    await new Promise<void>((ok) => server.close(() => ok()));
    await database.drop();
  });

  it('sends each change, live and replayed with ?since=, only to sockets the policy module lets see it', async () => {
    const start = await latestSeqOf(database);
    const live = Object.fromEntries(Object.keys(people).map((k) => [k, connect(base, { origin, 'x-test-user': k })]));
    for (const c of Object.values(live)) await c.opened;
    await until(() => Object.values(live).every((c) => c.messages.some((m) => m.type === 'hello')));
    await item(101, 1); // KV01: the operator's
    await item(104, 4); // KV04: not the operator's
    await record({ resource: 'inbox', resourceId: 7, kind: 'created', version: 1, summary: { userId: 'sup', unread: 1 }, audience: { action: 'inbox.view', userId: 'sup' } });
    await record({
      resource: 'candidate_event',
      resourceId: 9,
      kind: 'created',
      version: 1,
      summary: { anchorItemId: 101, itemIds: [101, 104], stationCount: 2 },
      audience: { action: 'queue.view', stationIds: [1, 4], itemStations: [[101, 1], [104, 4]] },
    });
    // A row without an audience (older than migration 0011 and not filled in by it) reaches nobody.
    await database.db.transaction(async (tx) => {
      const seq = await recordChange(tx, { resource: 'item', resourceId: 999, kind: 'created', version: 1, summary: { id: 999 }, audience: itemAudience(1) });
      await tx.execute(sql`UPDATE change_log SET audience = NULL WHERE seq = ${seq}`);
    });
    await hub.flush();
    await until(() => ids(live.an!).length >= 3 && ids(live.sup!).length >= 4, 3000);
    await new Promise((r) => setTimeout(r, 200));

    const expected: Record<string, string[]> = {
      op: ['item:101', 'candidate_event:9'],
      an: ['item:101', 'item:104', 'candidate_event:9'],
      sup: ['item:101', 'item:104', 'inbox:7', 'candidate_event:9'],
      sup2: ['item:101', 'item:104', 'candidate_event:9'],
      adm: [],
    };
    for (const [k, want] of Object.entries(expected)) expect(ids(live[k]!), k).toEqual(want);
    // The operator hears of the candidate event only through their own station's item.
    const opEvent = live.op!.messages.flatMap((m) => (m.type === 'changes' ? m.changes : [])).find((c) => c.resource === 'candidate_event');
    expect(opEvent?.summary).toMatchObject({ itemIds: [101], stationCount: 2 });
    const anEvent = live.an!.messages.flatMap((m) => (m.type === 'changes' ? m.changes : [])).find((c) => c.resource === 'candidate_event');
    expect(anEvent?.summary).toMatchObject({ itemIds: [101, 104] });
    // No audience ever leaves the server.
    expect(JSON.stringify(live.an!.messages)).not.toContain('audience');

    // The same filter on a replay.
    for (const [k, want] of Object.entries(expected)) {
      const again = connect(`${base}?since=${start}`, { origin, 'x-test-user': k });
      await again.opened;
      await until(() => again.messages.some((m) => m.type === 'hello'));
      await new Promise((r) => setTimeout(r, 150));
      expect(ids(again), `replay for ${k}`).toEqual(want);
      again.ws.close();
    }
    for (const c of Object.values(live)) c.ws.close();
  });

  it('closes a socket whose session ended with 4401 and one whose rights changed with 4403, and stops sending to them', async () => {
    const ended = connect(base, { origin, 'x-test-user': 'an' });
    const changed = connect(base, { origin, 'x-test-user': 'op' });
    const kept = connect(base, { origin, 'x-test-user': 'sup' });
    for (const c of [ended, changed, kept]) await c.opened;
    await until(() => [ended, changed, kept].every((c) => c.messages.some((m) => m.type === 'hello')));
    verdicts.set('s-an', 'ended');
    verdicts.set('s-op', 'changed');
    const t0 = Date.now();
    await hub.recheckNow();
    expect((await ended.closed).code).toBe(wsSessionEnded);
    expect((await changed.closed).code).toBe(wsRightsChanged);
    expect(Date.now() - t0).toBeLessThan(2000);
    await item(102, 1);
    await hub.flush();
    await until(() => ids(kept).includes('item:102'));
    expect(ids(ended)).not.toContain('item:102');
    expect(ids(changed)).not.toContain('item:102');
    expect(kept.ws.readyState).toBe(WebSocket.OPEN);
    kept.ws.close();
    verdicts.clear();
  });
});

async function latestSeqOf(database: TestDatabase): Promise<number> {
  const [rows] = await database.pool.query('SELECT seq FROM change_counter WHERE id = 1');
  return Number((rows as Array<{ seq: number }>)[0]?.seq ?? 0);
}
