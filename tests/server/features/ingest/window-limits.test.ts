/**
 * The per-window limits through POST /api/uploads: a window one sample over the default (1 h at
 * 200 sps per channel: 720 000 samples, 3600 s) is refused with 413 naming the limit and its
 * setting, and nothing is stored; a window of exactly the limit is accepted; the settings
 * (SEISIFT_MAX_WINDOW_SAMPLES, SEISIFT_MAX_WINDOW_S) move the limit, for CSV as for MiniSEED.
 */
import request from 'supertest';
import { afterAll, describe, expect, it } from 'vitest';
import { uploadResponseSchema } from '@shared/schemas/upload';
import { createApp } from '@server/app';
import { encodeMiniSeed3 } from '@server/formats/mseed3-writer';
import { ingestRowCounts, seedIngestToken, seedStation } from '@tests/faults/support/fixtures';
import { createTestContext, type TestContext } from '@tests/setup/test-app';

const T0 = Date.UTC(2026, 2, 14, 9) * 1000;
/** Deterministic test noise (LCG, Numerical Recipes constants; common practice), not a check value. */
function noise(n: number, seed: number): Int32Array {
  let s = seed >>> 0;
  return Int32Array.from({ length: n }, () => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    return (s >>> 20) - 2048;
  });
}
const mseed = (n: number, fs: number, seed: number, startUs = T0) =>
  Buffer.from(encodeMiniSeed3({ network: 'XX', station: 'KV01', location: '00', channel: 'HHZ', sampleRateHz: fs, startTimeUs: startUs, samples: noise(n, seed) }, { encoding: 'int32' }));

describe('per-window limits on upload (real MariaDB, worker pool)', () => {
  const contexts: TestContext[] = [];
  afterAll(async () => {
    for (const c of contexts) await c.close();
  });
  async function setUp(env: Record<string, string> = {}) {
    const ctx = await createTestContext(env);
    contexts.push(ctx);
    const token = await seedIngestToken(ctx.database.db, await seedStation(ctx.database.db, 'KV01', 200));
    const app = createApp(ctx, { serveClient: false });
    const post = (bytes: Buffer, name: string, fields: Record<string, string> = {}) => {
      let r = request(app).post('/api/uploads').set('Authorization', `Bearer ${token}`);
      for (const [k, v] of Object.entries(fields)) r = r.field(k, v);
      return r.attach('files', bytes, name);
    };
    return { ctx, post };
  }

  it('default limits: 720 001 samples at 200 sps → 413 naming the limit, nothing stored; exactly 720 000 → 201', async () => {
    const { ctx, post } = await setUp();
    const before = await ingestRowCounts(ctx.database.pool);
    const over = await post(mseed(720_001, 200, 1), 'hour-and-a-bit.mseed');
    expect(over.status).toBe(413);
    const o = uploadResponseSchema.parse(over.body).files[0];
    expect(o).toMatchObject({ status: 'rejected', httpStatus: 413, code: 'too_large' });
    expect(o?.message).toBe(
      'hour-and-a-bit.mseed: stream XX.KV01.00.HHZ holds 720 001 samples over 1.0 h; a window may hold at most 720 000 samples and 3 600 s per channel (SEISIFT_MAX_WINDOW_SAMPLES, SEISIFT_MAX_WINDOW_S)',
    );
    expect(await ingestRowCounts(ctx.database.pool)).toEqual(before);
    const exact = await post(mseed(720_000, 200, 2, T0 + 7200e6), 'hour.mseed');
    expect(exact.status).toBe(201);
  }, 120_000);

  it('configured limits: SEISIFT_MAX_WINDOW_S refuses a long CSV window, SEISIFT_MAX_WINDOW_SAMPLES a dense one', async () => {
    const { post } = await setUp({ SEISIFT_MAX_WINDOW_S: '60', SEISIFT_MAX_WINDOW_SAMPLES: '10000' });
    // 61 s at 100 sps (6100 samples): over the span.
    const rows = Array.from({ length: 6100 }, (_, i) => `${(i / 100).toFixed(2)},${(i * 7919) % 97}`);
    const csv = Buffer.from(['# start=2026-03-14T09:00:00Z', 't_seconds,counts', ...rows].join('\n'));
    const long = await post(csv, 'long.csv', { streamId: 'XX.KV01.00.HHZ' });
    expect(long.status).toBe(413);
    expect(uploadResponseSchema.parse(long.body).files[0]?.message).toMatch(/^long\.csv: stream XX\.KV01\.00\.HHZ holds 6 100 samples over 61\.0 s; a window may hold at most 10 000 samples and 60 s per channel \(SEISIFT_MAX_WINDOW_SAMPLES, SEISIFT_MAX_WINDOW_S\)$/);
    // 50 s at 200 sps (10 000 samples): at the limit, accepted; 10 001 refused.
    expect((await post(mseed(10_000, 200, 3), 'ok.mseed')).status).toBe(201);
    const dense = await post(mseed(10_001, 200, 4, T0 + 3600e6), 'dense.mseed');
    expect(dense.status).toBe(413);
    expect(uploadResponseSchema.parse(dense.body).files[0]?.message).toContain('holds 10 001 samples');
  }, 120_000);
});
