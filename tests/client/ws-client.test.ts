import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { WebSocket } from 'ws';
import { wsPolicyViolation, type ChangeMessage } from '../../shared/realtime';
import { adaptSocket, backoffDelayMs, createLiveClient, type LiveState, type SocketLike } from '../../client/src/lib/ws-client';
import { startServer, type RunningServer } from '../../server/index';
import { createTestContext, type TestContext } from '../setup/test-app';
import { createItem, createPerson, type TestPerson } from '../setup/queue-fixtures';

async function until(check: () => boolean, ms = 5000): Promise<void> {
  const end = Date.now() + ms;
  while (!check()) {
    if (Date.now() > end) throw new Error('timed out waiting');
    await new Promise((r) => setTimeout(r, 20));
  }
}

describe('backoffDelayMs (exponential backoff with jitter, common practice)', () => {
  const o = { initialMs: 500, maxMs: 15_000, jitter: 0.5 };
  it('doubles from the first delay up to the cap; jitter shortens by up to its fraction', () => {
    // Hand-worked: 500·2^k for k = 0..4 → 500, 1000, 2000, 4000, 8000; k = 5 → 16000 capped at 15000.
    expect([0, 1, 2, 3, 4, 5, 9].map((k) => backoffDelayMs(k, o, 0))).toEqual([500, 1000, 2000, 4000, 8000, 15_000, 15_000]);
    // random 0.5 with jitter 0.5: 4000 · (1 − 0.25) = 3000.
    expect(backoffDelayMs(3, o, 0.5)).toBe(3000);
    expect(backoffDelayMs(3, o, 0.999)).toBeGreaterThanOrEqual(2000);
  });
});

describe('live client against the real server and sessions', () => {
  let ctx: TestContext;
  let running: RunningServer;
  let ana: TestPerson;
  let wsUrl: string;
  let origin: string;

  beforeAll(async () => {
    ctx = await createTestContext();
    running = await startServer(ctx, { host: '127.0.0.1', port: 0, serveClient: false });
    origin = running.url;
    wsUrl = `${running.url.replace('http', 'ws')}/ws`;
    ana = await createPerson(ctx.database.db, { roles: ['analyst'] });
  });
  afterAll(async () => {
    await running.close();
    await ctx.close();
  });

  it('refuses a socket without a session with the policy code, and the client reads offline', async () => {
    const raw = new WebSocket(wsUrl, { headers: { origin } });
    const code = await new Promise<number>((ok) => raw.once('close', (c) => ok(c)));
    expect(code).toBe(wsPolicyViolation);
    const states: LiveState[] = [];
    const client = createLiveClient({
      url: wsUrl,
      connect: (u) => adaptSocket(new WebSocket(u, { headers: { origin } })),
      onChanges: () => {},
      onRefetch: () => {},
      onState: (s) => states.push(s),
      backoff: { initialMs: 50, maxMs: 10_000 },
    });
    await until(() => states.includes('offline'));
    expect(client.state()).toBe('offline');
    client.stop();
  });

  it('after a disconnect, items created meanwhile all arrive once, in order, with nothing lost', async () => {
    const received: ChangeMessage[] = [];
    let blocked = false;
    let current: WebSocket | null = null;
    const states: LiveState[] = [];
    const client = createLiveClient({
      url: wsUrl,
      connect: (u): SocketLike => {
        // While "the network is down" every attempt goes to a closed port and fails.
        const ws = new WebSocket(blocked ? 'ws://127.0.0.1:9/ws' : u, { headers: { origin, cookie: ana.cookie } });
        ws.on('error', () => {});
        current = ws;
        return adaptSocket(ws);
      },
      onChanges: (c) => received.push(...c),
      onRefetch: (reason) => {
        throw new Error(`unexpected refetch: ${reason}`);
      },
      onState: (s) => states.push(s),
      backoff: { initialMs: 40, maxMs: 200 },
    });
    await until(() => client.state() === 'live');
    const before: number[] = [];
    for (let i = 0; i < 3; i++) before.push(await createItem(ctx.database.db, { station: 'KV01' }));
    ctx.hub.notify();
    await until(() => received.length >= 3);

    // Drop the connection abruptly and keep it down while items arrive.
    blocked = true;
    (current as WebSocket | null)?.terminate();
    await until(() => client.state() !== 'live');
    const during: number[] = [];
    for (let i = 0; i < 7; i++) during.push(await createItem(ctx.database.db, { station: 'KV02' }));
    ctx.hub.notify();
    await new Promise((r) => setTimeout(r, 300));
    blocked = false;
    // More items while the client is catching up.
    const racing = Promise.all(Array.from({ length: 5 }, () => createItem(ctx.database.db, { station: 'KV03' })));
    const late = await racing;
    ctx.hub.notify();
    const expected = [...before, ...during, ...late];
    await until(() => received.length >= expected.length);
    await new Promise((r) => setTimeout(r, 400));
    ctx.hub.notify();
    await ctx.hub.flush();

    const ids = received.map((c) => c.id);
    expect(ids.sort((a, b) => a - b)).toEqual([...expected].sort((a, b) => a - b));
    const seqs = received.map((c) => c.seq);
    expect(new Set(seqs).size).toBe(seqs.length);
    expect([...seqs].sort((a, b) => a - b)).toEqual(seqs);
    // Consecutive: nothing between the first and the last change was skipped.
    expect(seqs[seqs.length - 1]! - seqs[0]! + 1).toBe(seqs.length);
    expect(received.every((c) => c.resource === 'item' && c.kind === 'created' && c.summary !== null)).toBe(true);
    expect(states).toContain('connecting');
    expect(client.state()).toBe('live');
    client.stop();
  });
});
