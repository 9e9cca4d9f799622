import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { WebSocket } from 'ws';
import { wsPolicyViolation, wsRightsChanged, wsSessionEnded, type ChangeMessage } from '@shared/realtime';
import { adaptSocket, backoffDelayMs, createLiveClient, type LiveState, type SocketLike } from '@client/lib/ws-client';
import { startServer, type RunningServer } from '@server/index';
import { createTestContext, type TestContext } from '@tests/setup/test-app';
import { createItem, createPerson, type TestPerson } from '@tests/setup/queue-fixtures';

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

/** A socket the test drives by hand. */
class FakeSocket implements SocketLike {
  readyState = 1;
  onopen: SocketLike['onopen'] = null;
  onmessage: SocketLike['onmessage'] = null;
  onclose: SocketLike['onclose'] = null;
  onerror: SocketLike['onerror'] = null;
  closed = false;
  constructor(readonly url: string) {}
  send(m: object) {
    this.onmessage?.({ data: JSON.stringify(m) });
  }
  drop(code = 1006) {
    this.readyState = 3;
    this.onclose?.({ code, reason: '' });
  }
  close() {
    this.closed = true;
  }
}

const change = (seq: number, id = seq) => ({ seq, resource: 'item', id, kind: 'created' as const, version: 1, summary: null, at: '2026-03-14T09:00:00.000Z' });

describe('live client protocol (fake sockets)', () => {
  it('resumes with since=last seq, drops repeats, asks for a refetch when told, ignores junk', async () => {
    const sockets: FakeSocket[] = [];
    const got: number[] = [];
    const refetches: string[] = [];
    const client = createLiveClient({
      url: 'ws://x/ws',
      connect: (u) => {
        const s = new FakeSocket(u);
        sockets.push(s);
        return s;
      },
      onChanges: (cs) => got.push(...cs.map((c) => c.seq)),
      onRefetch: (r) => refetches.push(r),
      backoff: { initialMs: 1, maxMs: 5, jitter: 0 },
    });
    expect(sockets[0]?.url).toBe('ws://x/ws');
    sockets[0]?.send({ type: 'hello', seq: 10 });
    expect(client.state()).toBe('live');
    sockets[0]?.send({ type: 'changes', changes: [change(11), change(12)] });
    sockets[0]?.send({ type: 'changes', changes: [change(12), change(13)] });
    sockets[0]?.onmessage?.({ data: 'not json' });
    sockets[0]?.send({ type: 'nonsense' });
    expect(got).toEqual([11, 12, 13]);
    sockets[0]?.drop();
    expect(client.state()).toBe('connecting');
    await until(() => sockets.length === 2);
    expect(sockets[1]?.url).toBe('ws://x/ws?since=13');
    sockets[1]?.send({ type: 'hello', seq: 20 });
    sockets[1]?.send({ type: 'changes', changes: [change(13), change(14)] });
    expect(got).toEqual([11, 12, 13, 14]);
    sockets[1]?.send({ type: 'refetch', seq: 30, reason: 'changes after 14 are no longer kept' });
    expect(refetches).toEqual(['changes after 14 are no longer kept']);
    expect(client.lastSeq()).toBe(30);
    // A server whose sequence went backwards (a new database) also means: reload everything.
    sockets[1]?.drop();
    await until(() => sockets.length === 3);
    sockets[2]?.send({ type: 'hello', seq: 2 });
    expect(refetches).toHaveLength(2);
    expect(client.lastSeq()).toBe(2);
    client.stop();
    expect(sockets[2]?.closed).toBe(true);
    expect(client.state()).toBe('offline');
  });

  it('reads offline after repeated failures and after a policy close, and keeps retrying', async () => {
    const sockets: FakeSocket[] = [];
    const client = createLiveClient({
      url: 'ws://x/ws',
      connect: (u) => {
        const s = new FakeSocket(u);
        sockets.push(s);
        return s;
      },
      onChanges: () => {},
      onRefetch: () => {},
      backoff: { initialMs: 1, maxMs: 5, jitter: 0 },
      offlineAfter: 2,
    });
    sockets[0]?.drop();
    expect(client.state()).toBe('connecting');
    await until(() => sockets.length === 2);
    sockets[1]?.drop();
    expect(client.state()).toBe('offline');
    await until(() => sockets.length === 3);
    sockets[2]?.send({ type: 'hello', seq: 0 });
    expect(client.state()).toBe('live');
    sockets[2]?.drop(wsPolicyViolation);
    expect(client.state()).toBe('offline');
    await until(() => sockets.length === 4);
    client.stop();
  });
});

describe('live client: closes for an ended session (4401) and for changed rights (4403)', () => {
  it('4403: reconnects at once and asks for a refetch after the new hello; 4401: tells the app and reads offline', async () => {
    const sockets: FakeSocket[] = [];
    const refetches: string[] = [];
    let ended = 0;
    const client = createLiveClient({
      url: 'ws://x/ws',
      connect: (u) => {
        const s = new FakeSocket(u);
        sockets.push(s);
        return s;
      },
      onChanges: () => {},
      onRefetch: (r) => refetches.push(r),
      onSessionEnded: () => ended++,
      backoff: { initialMs: 1, maxMs: 10_000, jitter: 0 },
    });
    sockets[0]?.send({ type: 'hello', seq: 5 });
    sockets[0]?.drop(wsRightsChanged);
    expect(client.state()).toBe('connecting');
    await until(() => sockets.length === 2, 500);
    expect(refetches).toEqual([]);
    sockets[1]?.send({ type: 'hello', seq: 6 });
    expect(refetches).toEqual(['your roles or stations changed']);
    sockets[1]?.drop(wsSessionEnded);
    expect(ended).toBe(1);
    expect(client.state()).toBe('offline');
    // The next attempt waits the longest delay (10 s here), not the first one.
    await new Promise((r) => setTimeout(r, 100));
    expect(sockets).toHaveLength(2);
    client.stop();
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
