import { createHash } from 'node:crypto';
import { z } from 'zod';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { freePort } from '@server/bootstrap/common';
import { createDatabaseClient, type DatabaseClient } from '@server/db/client';
import { startChildServer, type ChildServer } from '@tests/faults/support/child-server';
import { seedIngestToken, seedStation } from '@tests/faults/support/fixtures';
import { startThrowawayDb, type ThrowawayDb } from '@tests/faults/support/private-db';
import { makeWindowFile } from '@tests/faults/support/windows';

/**
 * The server killed with SIGKILL in the middle of a burst of uploads, then restarted (issue 9).
 * The server runs as a child process (tests/faults/serve.ts) over a throw-away MariaDB; four
 * clients upload 120 s 3-component Steim-2 windows with an ingest token as fast as they are
 * answered; after a number of 201s the process is killed without warning, while requests are in
 * flight. After a restart on the same port: every upload that was answered 201 is present and
 * complete (its original bytes equal what was sent, by sha256 and byte for byte; one window;
 * three channels of 12 000 samples; window features; one queue item; one change-log row), no
 * upload in the database is half written (each has all of those, whether or not its answer got
 * out before the kill), and uploads are accepted again, with a retried in-flight file answered as
 * created or as a duplicate — never stored twice.
 */

const START_US = 1_782_000_000_000_000;
/** Kill/restart rounds: 1 under npm test, more under `npm run test:faults` (FAULT_ROUNDS). */
const ROUNDS = Number(process.env.FAULT_ROUNDS ?? 1);
const uploadResponse = z.object({ files: z.array(z.object({ status: z.string(), uploadId: z.number().int().optional(), itemIds: z.array(z.number().int()).optional() })) });
const countRow = z.array(z.object({ n: z.coerce.number() }));

async function count(client: DatabaseClient, sql: string, params: unknown[] = []): Promise<number> {
  const [rows] = await client.pool.query(sql, params);
  return countRow.parse(rows)[0]?.n ?? NaN;
}

describe('SIGKILL during an upload burst', () => {
  let db: ThrowawayDb;
  let client: DatabaseClient;
  let server: ChildServer | undefined;

  beforeAll(async () => {
    db = await startThrowawayDb('fault-kill');
    client = createDatabaseClient(db.url);
  });

  afterAll(async () => {
    await server?.kill('SIGKILL');
    await client?.close();
    await db?.cleanup();
  });

  it('keeps every upload answered 201, whole, and none half written', async () => {
    const stationId = await seedStation(client.db, 'KV03');
    const token = await seedIngestToken(client.db, stationId);
    const port = await freePort();
    const acknowledged = new Map<number, { sha256: string; bytes: Uint8Array; itemIds: number[] }>();
    const inFlight = new Map<number, Uint8Array>();
    let next = 0;
    const statusCounts: Record<string, number> = {};
    let url = '';

    const send = async (i: number, bytes: Uint8Array) => {
      const form = new FormData();
      form.append('files', new Blob([Buffer.from(bytes)]), `kv03-${i}.mseed`);
      const res = await fetch(`${url}/api/uploads`, { method: 'POST', headers: { Authorization: `Bearer ${token}` }, body: form });
      return { status: res.status, body: uploadResponse.parse(await res.json()) };
    };

    for (let round = 1; round <= ROUNDS; round++) {
      server = await startChildServer({ databaseUrl: db.url, port });
      url = server.url;
      let killed = false;
      let lost = 0;
      const uploader = async () => {
        while (!killed) {
          const i = next++;
          const bytes = makeWindowFile('KV03', START_US + i * 120_000_000, { seed: i });
          inFlight.set(i, bytes);
          try {
            const r = await send(i, bytes);
            statusCounts[r.status] = (statusCounts[r.status] ?? 0) + 1;
            const f = r.body.files[0];
            if (r.status === 201 && f?.uploadId !== undefined) {
              acknowledged.set(f.uploadId, { sha256: createHash('sha256').update(bytes).digest('hex'), bytes, itemIds: f.itemIds ?? [] });
              inFlight.delete(i);
            }
          } catch {
            // The connection died with the server: this upload's fate is unknown to the client.
            lost++;
          }
        }
      };
      const target = acknowledged.size + 12;
      const workers = [uploader(), uploader(), uploader(), uploader()];
      const deadline = Date.now() + 60_000;
      while (acknowledged.size < target && Date.now() < deadline) await new Promise((r) => setTimeout(r, 20));
      expect(acknowledged.size).toBeGreaterThanOrEqual(target);
      killed = true; // no new requests; those in flight meet the kill
      await server.kill('SIGKILL');
      await Promise.all(workers);
      statusCounts.connectionLost = (statusCounts.connectionLost ?? 0) + lost;
      console.log(`kill-during-burst round ${round}/${ROUNDS}: ${acknowledged.size} answered 201 so far; outcomes ${JSON.stringify(statusCounts)}; ${lost} in flight at the kill`);
      expect(lost).toBeGreaterThan(0); // the kill really hit requests in flight
    }

    server = await startChildServer({ databaseUrl: db.url, port });
    url = server.url;

    // Every acknowledged upload: present, same bytes, complete.
    for (const [uploadId, sent] of acknowledged) {
      const [rows] = await client.pool.query('SELECT sha256, original FROM uploads WHERE id = ?', [uploadId]);
      const row = z.array(z.object({ sha256: z.string(), original: z.instanceof(Buffer) })).length(1).parse(rows)[0];
      expect(row?.sha256).toBe(sent.sha256);
      expect(row && Buffer.compare(row.original, Buffer.from(sent.bytes))).toBe(0);
      expect(await count(client, 'SELECT COUNT(*) AS n FROM windows WHERE upload_id = ?', [uploadId])).toBe(1);
      expect(await count(client, 'SELECT COUNT(*) AS n FROM window_channels c JOIN windows w ON w.id = c.window_id WHERE w.upload_id = ? AND c.sample_count = 12000', [uploadId])).toBe(3);
      for (const itemId of sent.itemIds) {
        expect(await count(client, 'SELECT COUNT(*) AS n FROM queue_items q JOIN windows w ON w.id = q.window_id WHERE q.id = ? AND w.upload_id = ?', [itemId, uploadId])).toBe(1);
      }
    }
    // No upload in the database is half written (answered or not).
    const uploadsTotal = await count(client, 'SELECT COUNT(*) AS n FROM uploads');
    expect(uploadsTotal).toBeGreaterThanOrEqual(acknowledged.size);
    expect(await count(client, 'SELECT COUNT(*) AS n FROM uploads u WHERE (SELECT COUNT(*) FROM windows w WHERE w.upload_id = u.id) <> 1')).toBe(0);
    expect(await count(client, 'SELECT COUNT(*) AS n FROM windows w WHERE (SELECT COUNT(*) FROM window_channels c WHERE c.window_id = w.id) <> 3')).toBe(0);
    expect(await count(client, 'SELECT COUNT(*) AS n FROM windows w WHERE NOT EXISTS (SELECT 1 FROM queue_items q WHERE q.window_id = w.id) OR NOT EXISTS (SELECT 1 FROM window_features f WHERE f.window_id = w.id)')).toBe(0);
    expect(await count(client, 'SELECT COUNT(*) AS n FROM change_log')).toBe(await count(client, 'SELECT COUNT(*) AS n FROM queue_items'));

    // Work resumes; a file whose answer was lost is retried: created now or found as a duplicate, never twice.
    for (const [i, bytes] of [...inFlight].slice(0, 4)) {
      const r = await send(i, bytes);
      expect([200, 201]).toContain(r.status);
    }
    const fresh = await send(next + 1, makeWindowFile('KV03', START_US + (next + 1) * 120_000_000, { seed: next + 1 }));
    expect(fresh.status).toBe(201);
    expect(await count(client, 'SELECT COUNT(*) AS n FROM (SELECT sha256 FROM uploads GROUP BY sha256 HAVING COUNT(*) > 1) d')).toBe(0);
  }, 180_000);
});
