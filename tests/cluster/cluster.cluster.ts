import { eq, inArray, sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { WebSocket } from 'ws';
import { serverMessageSchema, type ServerMessage } from '@shared/realtime';
import { uploads, windows } from '@server/db/schema/uploads';
import { encodeMiniSeed3 } from '@server/formats/mseed3-writer';
import { sha256Hex } from '@server/features/ingest/ingest-upload';
import { createStation, upsertChannel, type Actor } from '@server/features/stations/station-registry';
import { createPerson, type TestPerson } from '@tests/setup/queue-fixtures';
import { startTestCluster, type TestCluster } from './cluster-harness';

/**
 * The multi-instance mode on loopback (issue 20): one MariaDB, one Redis, two app instances (A, B)
 * and two analysis workers, all real processes. Every worker holds `hold-…` files on their first
 * attempt (SEISIFT_TEST_WORKER_HOLD_MS, server/cluster/test-hold.ts) so a test can kill it mid-job.
 */
let cluster: TestCluster;
let operator: TestPerson;
let analyst: TestPerson;
let analyst2: TestPerson;
let seq = 0;

/** A one-channel MiniSEED 3 window of station XX.KV02 whose bytes no other call makes (its start time and samples differ). */
function windowFile(): Buffer {
  seq++;
  const start = Date.UTC(2026, 2, 14, 12, 0) * 1000 + seq * 60_000_000;
  return Buffer.from(
    encodeMiniSeed3(
      { network: 'XX', station: 'KV02', location: '00', channel: 'HHZ', sampleRateHz: 100, startTimeUs: start, samples: Int32Array.from({ length: 3000 }, (_, i) => Math.round(200 * Math.sin((i + seq) / 3)) + (i % 7)) },
      { encoding: 'int32' },
    ),
  );
}

async function upload(url: string, bytes: Buffer, filename: string): Promise<{ status: number; body: { files?: Array<{ status: string; uploadId?: number; itemIds?: number[] }> }; retryAfter: string | null }> {
  const form = new FormData();
  form.append('files', new Blob([new Uint8Array(bytes)]), filename);
  const res = await fetch(`${url}/api/uploads`, { method: 'POST', headers: { Cookie: operator.cookie, Origin: url }, body: form });
  return { status: res.status, body: (await res.json()) as never, retryAfter: res.headers.get('retry-after') };
}

/** Stored uploads with these bytes (by sha256), and their windows. */
async function stored(bytes: Buffer): Promise<{ uploads: number; windows: number }> {
  const rows = await cluster.db.db.select({ id: uploads.id }).from(uploads).where(eq(uploads.sha256, sha256Hex(bytes)));
  const w = rows.length ? await cluster.db.db.select({ n: sql<number>`count(*)` }).from(windows).where(inArray(windows.uploadId, rows.map((r) => r.id))) : [{ n: 0 }];
  return { uploads: rows.length, windows: Number(w[0]?.n ?? 0) };
}

function listen(url: string, person: TestPerson): Promise<{ ws: WebSocket; messages: Array<{ at: number; m: ServerMessage }> }> {
  const ws = new WebSocket(`${url.replace('http', 'ws')}/ws`, { headers: { Cookie: person.cookie, Origin: url } });
  const messages: Array<{ at: number; m: ServerMessage }> = [];
  ws.on('message', (data) => messages.push({ at: performance.now(), m: serverMessageSchema.parse(JSON.parse(String(data))) }));
  return new Promise((ok, fail) => {
    ws.once('error', fail);
    const t = setInterval(() => {
      if (messages.some((x) => x.m.type === 'hello')) {
        clearInterval(t);
        ok({ ws, messages });
      }
    }, 10);
  });
}

const post = (url: string, path: string, person: TestPerson | null, body: unknown) =>
  fetch(`${url}${path}`, { method: 'POST', headers: { 'Content-Type': 'application/json', Origin: url, ...(person ? { Cookie: person.cookie } : {}) }, body: JSON.stringify(body) });

beforeAll(async () => {
  cluster = await startTestCluster({
    instances: 2,
    workers: 2,
    env: { SEISIFT_TEST_WORKER_HOLD_MS: '60000', SEISIFT_SIGNIN_MAX_PER_ACCOUNT_ADDRESS: '4', SEISIFT_SIGNIN_SLOWDOWN_AFTER: '100', SEISIFT_INGEST_WAIT_S: '60' },
  });
  const system: Actor = { userId: null, label: 'test', ipAddress: null };
  const db = cluster.db.db;
  const kv02 = await createStation(db, { network: 'XX', code: 'KV02', name: 'Kestrel Valley quarry rim', latitude: 46.28, longitude: 11.1, elevationM: 880 }, system);
  await upsertChannel(db, kv02, { location: '00', code: 'HHZ', sampleRateHz: 100 }, system);
  operator = await createPerson(db, { roles: ['operator'], stationIds: [kv02] });
  analyst = await createPerson(db, { roles: ['analyst'] });
  analyst2 = await createPerson(db, { roles: ['analyst'] });
});
afterAll(async () => {
  await cluster?.stop();
});

describe('multi-instance mode on loopback', () => {
  it('reports Redis and both workers on /api/health of each instance', async () => {
    for (const app of cluster.apps) {
      const body = (await (await fetch(`${app.url}/api/health`)).json()) as { status: string; mode: string; redis: { ok: boolean }; workers: { connected: number } };
      expect(body).toMatchObject({ status: 'ok', mode: 'cluster', redis: { ok: true } });
      expect(body.workers.connected).toBe(2);
    }
  });

  it('an upload to instance A reaches a socket on instance B within 200 ms of A answering', async () => {
    const [a, b] = cluster.apps as [TestCluster['apps'][number], TestCluster['apps'][number]];
    const { ws, messages } = await listen(b.url, analyst);
    const res = await upload(a.url, windowFile(), 'kv02-a.mseed');
    const answeredAt = performance.now();
    expect(res.status).toBe(201);
    const itemId = res.body.files?.[0]?.itemIds?.[0];
    const deadline = answeredAt + 2000;
    let seenAt: number | undefined;
    while (performance.now() < deadline && seenAt === undefined) {
      seenAt = messages.find((x) => x.m.type === 'changes' && x.m.changes.some((c) => c.id === itemId && c.kind === 'created'))?.at;
      if (seenAt === undefined) await new Promise((r) => setTimeout(r, 5));
    }
    ws.close();
    expect(seenAt).toBeDefined();
    // The socket on B hears of the item no later than 200 ms after A's answer (the worker commits
    // and publishes before the job completes, so it is usually before).
    expect((seenAt as number) - answeredAt).toBeLessThan(200);
  });

  it('a worker SIGKILLed inside the transaction: the job is retried by the other and the upload stored once', async () => {
    const bytes = windowFile();
    const pending = upload(cluster.apps[0]?.url ?? '', bytes, 'hold-before-commit-1.mseed');
    const holder = await Promise.race(cluster.workers.map((w, i) => w.waitFor(/holding before-commit/, 60_000).then(() => i)));
    cluster.workers[holder]?.child.kill('SIGKILL');
    const res = await pending;
    expect(res.status).toBe(201);
    expect(res.body.files?.[0]?.status).toBe('created');
    expect(await stored(bytes)).toEqual({ uploads: 1, windows: 1 });
    await cluster.restartWorker(holder);
  });

  it('a worker SIGKILLed after its commit: the retry answers 201 with the same upload, stored once', async () => {
    const bytes = windowFile();
    const pending = upload(cluster.apps[1]?.url ?? '', bytes, 'hold-after-commit-1.mseed');
    const holder = await Promise.race(cluster.workers.map((w, i) => w.waitFor(/holding after-commit/, 60_000).then(() => i)));
    const [row] = await cluster.db.db.select({ id: uploads.id }).from(uploads).where(eq(uploads.sha256, sha256Hex(bytes)));
    cluster.workers[holder]?.child.kill('SIGKILL');
    const res = await pending;
    expect(res.status).toBe(201);
    expect(res.body.files?.[0]).toMatchObject({ status: 'created', uploadId: row?.id });
    expect(await stored(bytes)).toEqual({ uploads: 1, windows: 1 });
    await cluster.restartWorker(holder);
  });

  it('a claim on A conflicts with the same claim on B', async () => {
    const res = await upload(cluster.apps[0]?.url ?? '', windowFile(), 'kv02-claim.mseed');
    const id = res.body.files?.[0]?.itemIds?.[0];
    const [a, b] = cluster.apps.map((x) => x.url) as [string, string];
    const first = await post(a, `/api/queue/items/${id}/claim`, analyst, { version: 1 });
    const second = await post(b, `/api/queue/items/${id}/claim`, analyst2, { version: 1 });
    expect(first.status).toBe(200);
    expect(second.status).toBe(409);
  });

  it('sign-in throttling counts the attempts made on both instances', async () => {
    const [a, b] = cluster.apps.map((x) => x.url) as [string, string];
    const email = 'nobody-here@kestrel.example';
    const statuses: number[] = [];
    // SEISIFT_SIGNIN_MAX_PER_ACCOUNT_ADDRESS = 4: two failures on each instance, then a fifth attempt.
    for (const url of [a, b, a, b, a]) statuses.push((await post(url, '/api/auth/sign-in', null, { email, password: 'not-the-password-1' })).status);
    expect(statuses.slice(0, 4).every((s) => s === 401)).toBe(true);
    expect(statuses[4]).toBe(429);
  });

  it('Redis restarted under load: only 201 or 503 (with Retry-After), never 500, and no acknowledged upload lost', async () => {
    const sent: Array<{ bytes: Buffer; status: number; uploadId?: number; retryAfter: string | null }> = [];
    let go = true;
    const loop = async (url: string) => {
      while (go) {
        const bytes = windowFile();
        const r = await upload(url, bytes, `kv02-load-${seq}.mseed`);
        sent.push({ bytes, status: r.status, uploadId: r.body.files?.[0]?.uploadId, retryAfter: r.retryAfter });
        if (r.status === 503) await new Promise((x) => setTimeout(x, 200));
      }
    };
    const loops = [loop(cluster.apps[0]?.url ?? ''), loop(cluster.apps[1]?.url ?? ''), loop(cluster.apps[0]?.url ?? '')];
    await new Promise((r) => setTimeout(r, 1500));
    await cluster.restartRedis(1500);
    await new Promise((r) => setTimeout(r, 3000));
    go = false;
    await Promise.all(loops);
    const statuses = new Set(sent.map((s) => s.status));
    expect([...statuses].every((s) => s === 201 || s === 503)).toBe(true);
    expect(sent.some((s) => s.status === 201)).toBe(true);
    for (const s of sent.filter((x) => x.status === 503)) expect(s.retryAfter).toMatch(/^\d+$/);
    // Every acknowledged upload is stored, once.
    for (const s of sent.filter((x) => x.status === 201)) expect(await stored(s.bytes)).toEqual({ uploads: 1, windows: 1 });
    // A refused file sent again (as the client is told to) is stored exactly once.
    for (const s of sent.filter((x) => x.status === 503).slice(0, 3)) {
      const again = await upload(cluster.apps[1]?.url ?? '', s.bytes, 'kv02-again.mseed');
      expect([200, 201]).toContain(again.status);
      expect(await stored(s.bytes)).toEqual({ uploads: 1, windows: 1 });
    }
  });
});
