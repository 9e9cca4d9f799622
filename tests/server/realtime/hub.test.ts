import { createServer, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { WebSocket } from 'ws';
import { serverMessageSchema, wsPolicyViolation, type ServerMessage } from '@shared/realtime';
import { recordChange } from '@server/realtime/change-log';
import { createHub, type RealtimeHub } from '@server/realtime/hub';
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
      await recordChange(tx, { resource: 'item', resourceId: id, kind: 'created', version: 1, summary: { n: id } });
    });
    hub.notify();
  }

  beforeAll(async () => {
    database = await createTestDatabase();
    hub = createHub({
      db: database.db,
      logger: createLogger('silent'),
      authenticate: async (req) => (req.headers['x-test-user'] ? { userId: String(req.headers['x-test-user']) } : null),
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
