import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { WebSocket } from 'ws';
import { serverMessageSchema, type ServerMessage } from '@shared/realtime';
import { startServer, type RunningServer } from '@server/index';
import { encodeMiniSeed3 } from '@server/formats/mseed3-writer';
import { createStation, upsertChannel, type Actor } from '@server/features/stations/station-registry';
import { createPerson, type TestPerson } from '@tests/setup/queue-fixtures';
import { createTestContext, type TestContext } from '@tests/setup/test-app';

/**
 * The upload → live queue path over a real http server: a signed-in analyst's websocket receives the
 * `created` change of the new item (with its summary) after the upload's transaction commits.
 */
describe('upload announces the new item on the live hub', () => {
  let ctx: TestContext;
  let running: RunningServer;
  let operator: TestPerson;
  let analyst: TestPerson;
  const system: Actor = { userId: null, label: 'test', ipAddress: null };

  beforeAll(async () => {
    ctx = await createTestContext();
    const kv02 = await createStation(ctx.database.db, { network: 'XX', code: 'KV02', name: 'Kestrel Valley quarry rim', latitude: 46.28, longitude: 11.1, elevationM: 880 }, system);
    await upsertChannel(ctx.database.db, kv02, { location: '00', code: 'HHZ', sampleRateHz: 100 }, system);
    operator = await createPerson(ctx.database.db, { roles: ['operator'], stationIds: [kv02] });
    analyst = await createPerson(ctx.database.db, { roles: ['analyst'] });
    running = await startServer(ctx, { host: '127.0.0.1', port: 0, serveClient: false });
  });
  afterAll(async () => {
    await running.close();
    await ctx.close();
  });

  it('sends hello, then the created change with stationId, state, flag, score and windowStart', async () => {
    const ws = new WebSocket(`${running.url.replace('http', 'ws')}/ws`, { headers: { Cookie: analyst.cookie, Origin: running.url } });
    const messages: ServerMessage[] = [];
    const got = (pred: (m: ServerMessage) => boolean) =>
      new Promise<ServerMessage>((resolve, reject) => {
        const timer = setTimeout(() => reject(new Error(`no matching message; got ${JSON.stringify(messages)}`)), 10_000);
        const check = () => {
          const m = messages.find(pred);
          if (m) {
            clearTimeout(timer);
            resolve(m);
          } else setTimeout(check, 20);
        };
        check();
      });
    ws.on('message', (data) => messages.push(serverMessageSchema.parse(JSON.parse(String(data)))));
    await got((m) => m.type === 'hello');

    const bytes = encodeMiniSeed3(
      { network: 'XX', station: 'KV02', location: '00', channel: 'HHZ', sampleRateHz: 100, startTimeUs: Date.UTC(2026, 2, 14, 12, 0) * 1000, samples: Int32Array.from({ length: 6000 }, (_, i) => Math.round(200 * Math.sin(i / 3))) },
      { encoding: 'int32' },
    );
    const form = new FormData();
    form.append('files', new Blob([Buffer.from(bytes)]), 'kv02.mseed');
    const res = await fetch(`${running.url}/api/uploads`, { method: 'POST', headers: { Cookie: operator.cookie, Origin: running.url }, body: form });
    expect(res.status).toBe(201);
    const body = (await res.json()) as { files: Array<{ itemIds: number[]; items: Array<{ flag: string; score: number; windowStart: string }> }> };
    const itemId = body.files[0]?.itemIds[0];
    const change = await got((m) => m.type === 'changes' && m.changes.some((c) => c.id === itemId));
    if (change.type !== 'changes') throw new Error('unexpected message');
    const c = change.changes.find((x) => x.id === itemId);
    expect(c).toMatchObject({ resource: 'item', kind: 'created', version: 1 });
    expect(c?.summary).toMatchObject({ stationId: expect.any(Number), state: 'new', flag: body.files[0]?.items[0]?.flag, score: body.files[0]?.items[0]?.score, windowStart: '2026-03-14T12:00:00.000Z' });
    ws.close();
  });
});
