import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import { count, eq } from 'drizzle-orm';
import type { MySqlTable } from 'drizzle-orm/mysql-core';
import type { Express } from 'express';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { z } from 'zod';
import { uploadResponseSchema } from '@shared/schemas/upload';
import { createApp } from '@server/app';
import { auditLog } from '@server/db/schema/audit-log';
import { changeLog } from '@server/db/schema/change-log';
import { queueItems } from '@server/db/schema/queue-items';
import { ingestTokens } from '@server/db/schema/stations';
import { itemArrivals } from '@server/db/schema/supervisor';
import { uploads, windowChannels, windows } from '@server/db/schema/uploads';
import { windowFeatures } from '@server/db/schema/window-features';
import { encodeMiniSeed3 } from '@server/formats/mseed3-writer';
import { bytesToSamples } from '@server/features/ingest/ingest-upload';
import { createStation, TOKEN_LAST_USED_RESOLUTION_MS, upsertChannel, type Actor } from '@server/features/stations/station-registry';
import { createPerson, type TestPerson } from '@tests/setup/queue-fixtures';
import { createTestContext, type TestContext } from '@tests/setup/test-app';

const fixture = (name: string) => new URL(`../../../fixtures/mseed/${name}`, import.meta.url);
/** libmseed's own decoding of a fixture (tests/fixtures/mseed/README.md: `write-fixtures dump`). */
const libmseedDump = z.object({
  segments: z.array(z.object({ id: z.string(), start_us: z.number(), samprate: z.number(), samples: z.array(z.number()) })),
});
const system: Actor = { userId: null, label: 'test setup', ipAddress: null };
const origin = 'http://127.0.0.1';

/** Deterministic test input (not a check value: the check is that what we wrote is what is stored). */
/** Quiet noise (32-bit LCG, Numerical Recipes constants) with a strong 8 Hz burst from 40 s to 44 s at 100 sps: one STA/LTA trigger. */
function burst(n: number, seed: number): Int32Array {
  let s = seed >>> 0;
  const out = new Int32Array(n);
  for (let i = 0; i < n; i++) {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    const inBurst = i >= 4000 && i < 4400;
    out[i] = Math.round(50 * (s / 2 ** 32 - 0.5) + (inBurst ? 5000 * Math.sin((2 * Math.PI * 8 * i) / 100) : 0));
  }
  return out;
}

function wave(n: number, seed: number): Int32Array {
  const out = new Int32Array(n);
  for (let i = 0; i < n; i++) out[i] = Math.round(800 * Math.sin((2 * Math.PI * 1.3 * i) / 100 + seed) + 300 * Math.sin((2 * Math.PI * 6.1 * i) / 100));
  return out;
}

describe('POST /api/uploads (real MariaDB, worker pool)', () => {
  let ctx: TestContext;
  let app: Express;
  let kv01: number;
  let kv02: number;
  let kv03: number;
  let operator: TestPerson;
  let otherOperator: TestPerson;
  let analyst: TestPerson;

  const post = (who: TestPerson | null, a: Express = app) => {
    const r = request(a).post('/api/uploads').set('Origin', origin).set('Host', '127.0.0.1');
    return who ? r.set('Cookie', who.cookie) : r;
  };
  const rows = async () => {
    const db = ctx.database.db;
    const n = async (t: MySqlTable) => (await db.select({ n: count() }).from(t))[0]?.n ?? -1;
    return {
      uploads: await n(uploads),
      windows: await n(windows),
      channels: await n(windowChannels),
      items: await n(queueItems),
      features: await n(windowFeatures),
      audit: await n(auditLog),
      changes: await n(changeLog),
      arrivals: await n(itemArrivals),
    };
  };

  beforeAll(async () => {
    ctx = await createTestContext();
    app = createApp(ctx, { serveClient: false });
    const db = ctx.database.db;
    const base = { latitude: 46.3, longitude: 11.05, elevationM: 900 };
    kv01 = await createStation(db, { network: 'XX', code: 'KV01', name: 'Kestrel Valley north ridge', ...base }, system);
    kv02 = await createStation(db, { network: 'XX', code: 'KV02', name: 'Kestrel Valley quarry rim', ...base }, system);
    kv03 = await createStation(db, { network: 'XX', code: 'KV03', name: 'Kestrel Valley highway bridge', ...base }, system);
    await upsertChannel(db, kv01, { location: '00', code: 'HHZ', sampleRateHz: 100, sensitivity: 1.5e9, sensitivityFrequencyHz: 1, sensitivityInputUnits: 'm/s' }, system);
    await upsertChannel(db, kv02, { location: '00', code: 'HHZ', sampleRateHz: 200 }, system);
    operator = await createPerson(db, { roles: ['operator'], stationIds: [kv01, kv02] });
    otherOperator = await createPerson(db, { roles: ['operator'], stationIds: [kv03] });
    analyst = await createPerson(db, { roles: ['analyst'] });
  });
  afterAll(async () => {
    await ctx.close();
  });

  it('MiniSEED 2 (libmseed fixture): 201, one new item, samples stored exactly as libmseed decodes them, original bytes kept', async () => {
    const bytes = readFileSync(fixture('steim2-be-8192.mseed'));
    const before = await rows();
    const res = await post(operator).attach('files', bytes, 'XX.KV02.steim2.mseed');
    expect(res.status).toBe(201);
    const body = uploadResponseSchema.parse(res.body);
    const [out] = body.files;
    expect(out?.status).toBe('created');
    expect(out?.itemIds).toHaveLength(1);
    expect(out?.items?.[0]?.station).toBe('XX.KV02');
    const db = ctx.database.db;
    const [item] = await db.select().from(queueItems).where(eq(queueItems.id, out?.itemIds?.[0] ?? -1));
    expect(item?.state).toBe('new');
    expect(item?.stationId).toBe(kv02);
    const [up] = await db.select().from(uploads).where(eq(uploads.id, out?.uploadId ?? -1));
    expect(up?.format).toBe('mseed2');
    expect(Buffer.compare(up?.original ?? Buffer.alloc(0), bytes)).toBe(0);
    // sha256 as Node's crypto computes it over the same bytes (FIPS 180-4).
    expect(up?.sha256).toBe(createHash('sha256').update(bytes).digest('hex'));
    // Reference: libmseed 2.19's decoding of the same file (tests/fixtures/mseed/*.json), exact.
    const ref = libmseedDump.parse(JSON.parse(readFileSync(fixture('steim2-be-8192.json'), 'utf8')));
    const seg = ref.segments[0];
    const [wc] = await db.select().from(windowChannels).innerJoin(windows, eq(windows.id, windowChannels.windowId)).where(eq(windows.uploadId, up?.id ?? -1));
    expect(wc?.window_channels.streamId).toBe(seg?.id);
    expect(wc?.window_channels.startTimeUs).toBe(seg?.start_us);
    expect(wc?.window_channels.sampleRateHz).toBe(seg?.samprate);
    expect(Array.from(bytesToSamples(wc?.window_channels.samples ?? Buffer.alloc(0)))).toEqual(seg?.samples);
    const after = await rows();
    expect(after.uploads - before.uploads).toBe(1);
    expect(after.windows - before.windows).toBe(1);
    expect(after.items - before.items).toBe(1);
    expect(after.features - before.features).toBe(1);
    expect(after.changes - before.changes).toBe(1);
    const [change] = await db.select().from(changeLog).where(eq(changeLog.resourceId, item?.id ?? -1));
    expect(change?.resource).toBe('item');
    expect(change?.kind).toBe('created');
    expect(change?.summary).toMatchObject({ stationId: kv02, state: 'new', flag: item?.flag, score: item?.score });
    const audits = await db.select().from(auditLog).where(eq(auditLog.action, 'upload.create'));
    expect(audits.some((a) => a.targetId === String(up?.id) && a.actorUserId === operator.id)).toBe(true);
  });

  it('the same file twice returns the existing item (200 duplicate), no second row', async () => {
    const bytes = readFileSync(fixture('steim2-be-8192.mseed'));
    const before = await rows();
    const res = await post(operator).attach('files', bytes, 'renamed-copy.mseed');
    expect(res.status).toBe(200);
    const out = uploadResponseSchema.parse(res.body).files[0];
    expect(out?.status).toBe('duplicate');
    expect(out?.itemIds).toHaveLength(1);
    expect(out?.message).toMatch(/already uploaded as "XX\.KV02\.steim2\.mseed"/);
    expect(await rows()).toEqual(before);
  });

  it('MiniSEED 3 written by our encoder: 201, samples round-trip, physical units from the sensitivity', async () => {
    const samples = wave(6000, 1);
    const bytes = encodeMiniSeed3(
      { network: 'XX', station: 'KV01', location: '00', channel: 'HHZ', sampleRateHz: 100, startTimeUs: Date.UTC(2026, 2, 14, 9, 0, 0) * 1000, samples },
      { encoding: 'steim2' },
    );
    const res = await post(operator).attach('files', Buffer.from(bytes), 'XX.KV01.mseed3');
    expect(res.status).toBe(201);
    const out = uploadResponseSchema.parse(res.body).files[0];
    const db = ctx.database.db;
    const [w] = await db.select().from(windows).where(eq(windows.uploadId, out?.uploadId ?? -1));
    const [wc] = await db.select().from(windowChannels).where(eq(windowChannels.windowId, w?.id ?? -1));
    expect(Array.from(bytesToSamples(wc?.samples ?? Buffer.alloc(0)))).toEqual(Array.from(samples));
    const analysis = z.object({ channels: z.array(z.object({ units: z.string() })) }).parse(w?.analysis);
    expect(analysis.channels[0]?.units).toBe('m/s');
    const [up] = await db.select({ format: uploads.format }).from(uploads).where(eq(uploads.id, out?.uploadId ?? -1));
    expect(up?.format).toBe('mseed3');
  });

  it('CSV with a streamId field: 201; without one: 422 with the decoder reason', async () => {
    const samples = wave(4000, 2);
    const start = Date.UTC(2026, 2, 14, 10, 0, 0) / 1000;
    const csv = ['t_seconds,counts', ...Array.from(samples, (v, i) => `${(start + i / 100).toFixed(2)},${v}`)].join('\n');
    const ok = await post(operator).field('streamId', 'XX.KV01.00.HHZ').attach('files', Buffer.from(csv), 'kv01-nördlich.csv');
    expect(ok.status).toBe(201);
    const out = uploadResponseSchema.parse(ok.body).files[0];
    expect(out?.filename).toBe('kv01-nördlich.csv');
    expect(out?.items?.[0]?.channels).toEqual(['XX.KV01.00.HHZ']);
    const other = ['t_seconds,counts', ...Array.from(wave(4000, 5), (v, i) => `${(start + i / 100).toFixed(2)},${v}`)].join('\n');
    const bad = await post(operator).attach('files', Buffer.from(other), 'no-stream.csv');
    expect(bad.status).toBe(422);
    const refused = uploadResponseSchema.parse(bad.body).files[0];
    expect(refused?.status).toBe('rejected');
    expect(refused?.message).toMatch(/^no-stream\.csv: .*stream/i);
  });

  it('CSV with relative seconds takes its start from the startTime field (winning over # start=); a bad startTime is 400; a gapped MiniSEED window is 422 naming the gap', async () => {
    const samples = wave(4000, 3);
    const body = ['t_seconds,counts', ...Array.from(samples, (v, i) => `${(i / 100).toFixed(2)},${v}`)].join('\n');
    const ok = await post(operator).field('streamId', 'XX.KV01.00.HHZ').field('startTime', '2026-03-14 11:00:00.25').attach('files', Buffer.from(body), 'relative.csv');
    expect(ok.status).toBe(201);
    const out = uploadResponseSchema.parse(ok.body).files[0];
    expect(out?.items?.[0]?.windowStart).toBe('2026-03-14T11:00:00.250Z');
    const commented = `# start=2026-03-14T09:00:00Z\n${body.replace('t_seconds', 't_s')}`;
    const over = await post(operator).field('streamId', 'XX.KV01.00.HHZ').field('startTime', '2026-03-14T12:00:00Z').attach('files', Buffer.from(commented), 'commented.csv');
    expect(uploadResponseSchema.parse(over.body).files[0]?.items?.[0]?.windowStart).toBe('2026-03-14T12:00:00.000Z');
    const none = await post(operator).field('streamId', 'XX.KV01.00.HHZ').attach('files', Buffer.from(`${body}\n`), 'nostart.csv');
    expect(none.status).toBe(422);
    expect(uploadResponseSchema.parse(none.body).files[0]?.message).toMatch(/no start time is given; give the start time with the upload/u);
    const bad = await post(operator).field('startTime', '14/03/2026 11:00').attach('files', Buffer.from(body), 'bad.csv');
    expect(bad.status).toBe(400);
    expect(JSON.stringify(bad.body)).toMatch(/startTime must be an ISO-8601 UTC time/u);
    const gap = await post(operator).attach('files', readFileSync(fixture('gap-overlap.mseed')), 'gap.mseed');
    expect(gap.status).toBe(422);
    expect(uploadResponseSchema.parse(gap.body).files[0]?.message).toMatch(/^gap\.mseed: samples cannot be placed exactly at their times .*gap of 2\.5 s/u);
  });

  it('a multi-stream file makes one item per station window', async () => {
    const res = await post(operator).attach('files', readFileSync(fixture('multi-stream.mseed')), 'multi.mseed');
    expect(res.status).toBe(201);
    const out = uploadResponseSchema.parse(res.body).files[0];
    expect(out?.items?.map((i) => i.station).sort()).toEqual(['XX.KV01', 'XX.KV02']);
  });

  it('401 without a session or token; 403 for a role that does not upload', async () => {
    const bytes = readFileSync(fixture('int32-be-4096.mseed'));
    const anon = await post(null).attach('files', bytes, 'a.mseed');
    expect(anon.status).toBe(401);
    expect(anon.body.error.code).toBe('unauthenticated');
    const ana = await post(analyst).attach('files', bytes, 'a.mseed');
    expect(ana.status).toBe(403);
    expect(ana.body.error.code).toBe('forbidden');
  });

  it('a station outside the operator\'s scope and an unregistered one: the same 403 naming the stream; good files of the request still succeed', async () => {
    const kv01File = encodeMiniSeed3(
      { network: 'XX', station: 'KV01', location: '00', channel: 'HHZ', sampleRateHz: 100, startTimeUs: Date.UTC(2026, 2, 14, 11, 0, 0) * 1000, samples: wave(4000, 3) },
      { encoding: 'int32' },
    );
    const scope = await post(otherOperator).attach('files', Buffer.from(kv01File), 'kv01.mseed');
    expect(scope.status).toBe(403);
    expect(uploadResponseSchema.parse(scope.body).files[0]?.message).toContain('stream XX.KV01.00.HHZ');
    const unknown = encodeMiniSeed3(
      { network: 'XX', station: 'KV09', location: '00', channel: 'HHZ', sampleRateHz: 100, startTimeUs: Date.UTC(2026, 2, 14, 11, 0, 0) * 1000, samples: wave(4000, 4) },
      { encoding: 'int32' },
    );
    const mixed = await post(operator)
      .attach('files', Buffer.from(unknown), 'kv09.mseed')
      .attach('files', Buffer.from('this is not a waveform'), 'notes.txt')
      .attach('files', Buffer.from(kv01File), 'kv01.mseed');
    expect(mixed.status).toBe(201);
    const files = uploadResponseSchema.parse(mixed.body).files;
    expect(files.map((f) => [f.filename, f.status, f.httpStatus])).toEqual([
      ['kv09.mseed', 'rejected', 403],
      ['notes.txt', 'rejected', 422],
      ['kv01.mseed', 'created', 201],
    ]);
    expect(files[0]?.message).toBe('kv09.mseed: stream XX.KV09.00.HHZ: station XX.KV09 is not registered or is not one of your stations');
    // No existence oracle: someone else's registered station gets the very same words.
    const scopeOutcome = uploadResponseSchema.parse(scope.body).files[0];
    expect(scopeOutcome?.message).toBe('kv01.mseed: stream XX.KV01.00.HHZ: station XX.KV01 is not registered or is not one of your stations');
    expect([scopeOutcome?.httpStatus, scopeOutcome?.code]).toEqual([files[0]?.httpStatus, files[0]?.code]);
    // Nor a duplicate oracle: the same bytes, now stored for KV01, answer the other operator as before.
    const again = uploadResponseSchema.parse((await post(otherOperator).attach('files', Buffer.from(kv01File), 'kv01.mseed')).body).files[0];
    expect(again).toEqual(scopeOutcome);
    expect(files[1]?.message).toMatch(/^notes\.txt: /);
  });

  it('ingest tokens: shown once, stored as SHA-256, Bearer upload for its own station only, last use recorded, revocation refuses', async () => {
    const created = await request(app).post(`/api/stations/${kv01}/tokens`).set('Origin', origin).set('Host', '127.0.0.1').set('Cookie', operator.cookie).send({ label: 'acquisition PC' });
    expect(created.status).toBe(201);
    const secret = z.string().parse(created.body.secret);
    const tokenId = z.number().parse(created.body.token.id);
    const db = ctx.database.db;
    const [stored] = await db.select().from(ingestTokens).where(eq(ingestTokens.id, tokenId));
    expect(stored?.tokenHash).toBe(createHash('sha256').update(secret).digest('hex'));
    expect(JSON.stringify(stored)).not.toContain(secret);
    const listed = await request(app).get(`/api/stations/${kv01}/tokens`).set('Cookie', operator.cookie);
    expect(JSON.stringify(listed.body)).not.toContain(secret);
    expect(listed.body.tokens[0].lastUsedAt).toBeNull();

    const file = (seed: number, station = 'KV01') =>
      Buffer.from(
        encodeMiniSeed3(
          { network: 'XX', station, location: '00', channel: 'HHZ', sampleRateHz: station === 'KV01' ? 100 : 200, startTimeUs: Date.UTC(2026, 2, 14, 12, seed, 0) * 1000, samples: wave(4000, seed) },
          { encoding: 'steim1' },
        ),
      );
    // A script: no Origin, no cookie, just the token (curl).
    const ok = await request(app).post('/api/uploads').set('Authorization', `Bearer ${secret}`).attach('files', file(10), 'script.mseed');
    expect(ok.status).toBe(201);
    const [up] = await db.select().from(uploads).where(eq(uploads.id, z.number().parse(ok.body.files[0].uploadId)));
    expect(up?.ingestTokenId).toBe(tokenId);
    expect(up?.uploadedByUserId).toBeNull();
    const [used] = await db.select().from(ingestTokens).where(eq(ingestTokens.id, tokenId));
    expect(used?.lastUsedAt).toBeInstanceOf(Date);
    // Last use is kept to the minute: a second upload at once leaves it, one after a stale mark moves it.
    expect((await request(app).post('/api/uploads').set('Authorization', `Bearer ${secret}`).attach('files', file(13), 'again.mseed')).status).toBe(201);
    const [again] = await db.select().from(ingestTokens).where(eq(ingestTokens.id, tokenId));
    expect(again?.lastUsedAt?.getTime()).toBe(used?.lastUsedAt?.getTime());
    const stale = new Date(Date.now() - TOKEN_LAST_USED_RESOLUTION_MS - 1000);
    await db.update(ingestTokens).set({ lastUsedAt: stale }).where(eq(ingestTokens.id, tokenId));
    expect((await request(app).post('/api/uploads').set('Authorization', `Bearer ${secret}`).attach('files', file(14), 'later.mseed')).status).toBe(201);
    const [later] = await db.select().from(ingestTokens).where(eq(ingestTokens.id, tokenId));
    expect(later?.lastUsedAt?.getTime()).toBeGreaterThan(stale.getTime() + TOKEN_LAST_USED_RESOLUTION_MS);

    const other = await request(app).post('/api/uploads').set('Authorization', `Bearer ${secret}`).attach('files', file(11, 'KV02'), 'kv02.mseed');
    expect(other.status).toBe(403);
    expect(other.body.files[0].message).toContain("stream XX.KV02.00.HHZ: station XX.KV02 is not this ingest token's station");

    const wrong = await request(app).post('/api/uploads').set('Authorization', 'Bearer ssi_not-a-token').attach('files', file(12), 'x.mseed');
    expect(wrong.status).toBe(401);

    const revoked = await request(app).post(`/api/stations/${kv01}/tokens/${tokenId}/revoke`).set('Origin', origin).set('Host', '127.0.0.1').set('Cookie', operator.cookie);
    expect(revoked.status).toBe(200);
    expect(revoked.body.token.revokedAt).not.toBeNull();
    const after = await request(app).post('/api/uploads').set('Authorization', `Bearer ${secret}`).attach('files', file(13), 'late.mseed');
    expect(after.status).toBe(401);
    expect(after.body.error.message).toMatch(/unknown or revoked/);
  });

  it('413 over the per-file size or the file count, naming the limit', async () => {
    const small = await createTestContext({ SEISIFT_MAX_UPLOAD_BYTES: '4096', SEISIFT_MAX_UPLOAD_FILES: '2' });
    try {
      const p2 = await createPerson(small.database.db, { roles: ['operator'] });
      const a = createApp(small, { serveClient: false });
      const big = await post(p2, a).attach('files', readFileSync(fixture('steim2-be-8192.mseed')), 'big.mseed');
      expect(big.status).toBe(413);
      expect(big.body.error.message).toContain('limit of');
      expect(big.body.error.message).toContain('SEISIFT_MAX_UPLOAD_BYTES = 4096 bytes');
      const f = readFileSync(fixture('int16-be-256.mseed'));
      const many = await post(p2, a).attach('files', f, '1.mseed').attach('files', f, '2.mseed').attach('files', f, '3.mseed');
      expect(many.status).toBe(413);
      expect(many.body.error.message).toContain('More than 2 files');
      expect((await small.database.db.select({ n: count() }).from(uploads))[0]?.n).toBe(0);
    } finally {
      await small.close();
    }
  });

  it('a failure injected between analysis and commit leaves no row behind', async () => {
    const failing = createApp(ctx, {
      serveClient: false,
      uploads: {
        beforeCommit: async () => {
          throw new Error('injected failure before commit');
        },
      },
    });
    const before = await rows();
    const bytes = encodeMiniSeed3(
      { network: 'XX', station: 'KV01', location: '00', channel: 'HHZ', sampleRateHz: 100, startTimeUs: Date.UTC(2026, 2, 14, 13, 0, 0) * 1000, samples: burst(6000, 7) },
      { encoding: 'steim2' },
    );
    const res = await post(operator, failing).attach('files', Buffer.from(bytes), 'doomed.mseed');
    expect(res.status).toBe(500);
    const out = uploadResponseSchema.parse(res.body).files[0];
    expect(out?.status).toBe('rejected');
    expect(out?.message).toContain('nothing was saved');
    expect(await rows()).toEqual(before);
    // And the same file goes through afterwards (no half-written upload blocks it as a duplicate).
    const again = await post(operator).attach('files', Buffer.from(bytes), 'doomed.mseed');
    expect(again.status).toBe(201);
    // The window triggers, so the same transaction also wrote its arrival for candidate events
    // (the rolled-back attempt above left none).
    const itemId = z.number().parse(again.body.files[0].itemIds[0]);
    const [arrival] = await ctx.database.db.select().from(itemArrivals).where(eq(itemArrivals.itemId, itemId));
    expect(arrival?.arrivalAt.getTime()).toBeGreaterThan(Date.UTC(2026, 2, 14, 13, 0, 39));
    expect(arrival?.arrivalAt.getTime()).toBeLessThan(Date.UTC(2026, 2, 14, 13, 0, 45));
    expect((await rows()).arrivals).toBe(before.arrivals + 1);
  });
});
