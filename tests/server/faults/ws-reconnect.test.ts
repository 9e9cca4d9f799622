import { WebSocket } from 'ws';
import { z } from 'zod';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { serverMessageSchema } from '@shared/realtime';
import { startServer, type RunningServer } from '@server/index';
import { createTestContext, type TestContext } from '@tests/setup/test-app';
import { seedIngestToken, seedPerson, seedStation } from '@tests/faults/support/fixtures';
import { makeWindowFile } from '@tests/faults/support/windows';

/**
 * Websocket clients cut off and reconnecting during a burst of uploads receive every change
 * exactly once (issue 9). Six signed-in clients follow /ws; while three uploaders send 36 windows,
 * each client's connection is cut (terminated without a close handshake, as a dropped network
 * does) every 250–450 ms and reconnects with `?since=<last seq seen>` (the protocol of
 * shared/realtime.ts). At the end every client's list of received sequence numbers must equal the
 * change log after its first `hello`, in order, with no gap and no repeat.
 */

const START_US = 1_783_000_000_000_000;
const UPLOADS = 36;
const CLIENTS = 6;

interface Follower {
  seqs: number[];
  lastSeq: number;
  firstHello: number | undefined;
  cuts: number;
  ws: WebSocket | undefined;
  stopped: boolean;
}

describe('websocket clients cut off during a burst', () => {
  let ctx: TestContext;
  let running: RunningServer;

  beforeAll(async () => {
    ctx = await createTestContext();
    running = await startServer(ctx, { host: '127.0.0.1', port: 0, serveClient: false });
  });
  afterAll(async () => {
    await running?.close();
    await ctx?.close();
  });

  it('delivers every change once to every client', async () => {
    const stationId = await seedStation(ctx.database.db, 'KV04');
    const token = await seedIngestToken(ctx.database.db, stationId);
    const wsUrl = running.url.replace(/^http/, 'ws');

    const connect = (f: Follower, cookie: string) => {
      if (f.stopped) return;
      const ws = new WebSocket(`${wsUrl}/ws${f.firstHello === undefined ? '' : `?since=${f.lastSeq}`}`, { headers: { Cookie: cookie, Origin: running.url } });
      f.ws = ws;
      ws.on('message', (data: Buffer) => {
        const msg = serverMessageSchema.parse(JSON.parse(data.toString('utf8')));
        if (msg.type === 'hello') {
          if (f.firstHello === undefined) {
            f.firstHello = msg.seq;
            f.lastSeq = msg.seq;
          }
        } else if (msg.type === 'changes') {
          for (const c of msg.changes) {
            f.seqs.push(c.seq);
            f.lastSeq = c.seq;
          }
        } else {
          throw new Error(`unexpected refetch: ${msg.reason}`);
        }
      });
      ws.on('close', () => {
        if (!f.stopped) setTimeout(() => connect(f, cookie), 20);
      });
      ws.on('error', () => {});
    };

    const followers: Follower[] = [];
    const cookies: string[] = [];
    for (let i = 0; i < CLIENTS; i++) {
      const person = await seedPerson(ctx.database.db, { roles: ['analyst'] });
      const f: Follower = { seqs: [], lastSeq: 0, firstHello: undefined, cuts: 0, ws: undefined, stopped: false };
      followers.push(f);
      cookies.push(person.cookie);
      connect(f, person.cookie);
    }
    const waitFor = async (check: () => boolean, ms: number) => {
      const deadline = Date.now() + ms;
      while (!check() && Date.now() < deadline) await new Promise((r) => setTimeout(r, 20));
      return check();
    };
    expect(await waitFor(() => followers.every((f) => f.firstHello !== undefined), 10_000)).toBe(true);

    // Cut each client off at its own pace (deterministic: 250 + 40·i ms) while the burst runs.
    let bursting = true;
    const cutters = followers.map(async (f, i) => {
      while (bursting) {
        await new Promise((r) => setTimeout(r, 250 + 40 * i));
        if (f.ws && f.ws.readyState === WebSocket.OPEN) {
          f.ws.terminate();
          f.cuts++;
        }
      }
    });
    let next = 0;
    let created = 0;
    const uploader = async () => {
      while (next < UPLOADS) {
        const i = next++;
        const form = new FormData();
        form.append('files', new Blob([Buffer.from(makeWindowFile('KV04', START_US + i * 120_000_000, { seed: i }))]), `kv04-${i}.mseed`);
        const res = await fetch(`${running.url}/api/uploads`, { method: 'POST', headers: { Authorization: `Bearer ${token}` }, body: form });
        if (res.status === 201) created++;
        await res.arrayBuffer();
      }
    };
    await Promise.all([uploader(), uploader(), uploader()]);
    bursting = false;
    await Promise.all(cutters);
    expect(created).toBe(UPLOADS);

    const [rows] = await ctx.database.pool.query('SELECT seq FROM change_log ORDER BY seq');
    const allSeqs = z.array(z.object({ seq: z.coerce.number() })).parse(rows).map((r) => r.seq);
    const latest = allSeqs[allSeqs.length - 1] ?? 0;
    expect(await waitFor(() => followers.every((f) => f.lastSeq === latest), 15_000)).toBe(true);
    for (const f of followers) f.stopped = true;
    for (const f of followers) f.ws?.close();

    console.log(`ws-reconnect: ${UPLOADS} uploads, ${CLIENTS} clients, cuts per client ${followers.map((f) => f.cuts).join(',')}`);
    for (const f of followers) {
      expect(f.cuts).toBeGreaterThanOrEqual(2);
      const expected = allSeqs.filter((s) => s > (f.firstHello ?? 0));
      expect(expected.length).toBe(UPLOADS);
      expect(f.seqs).toEqual(expected); // every change, once, in order
    }
  }, 120_000);
});
