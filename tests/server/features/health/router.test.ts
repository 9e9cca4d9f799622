import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp } from '@server/app';
import { createTestContext, type TestContext } from '@tests/setup/test-app';

describe('GET /api/health (real MariaDB)', () => {
  let ctx: TestContext;
  beforeAll(async () => {
    ctx = await createTestContext();
  });
  afterAll(async () => {
    await ctx.close();
  });

  it('reports the database as ok and the app version', async () => {
    const res = await request(createApp(ctx, { serveClient: false })).get('/api/health');
    expect(res.status).toBe(200);
    expect(res.body.status).toBe('ok');
    expect(res.body.database.ok).toBe(true);
    expect(res.body.version).toMatch(/^\d+\.\d+\.\d+/);
  });

  it('answers unknown API routes with the one error shape', async () => {
    const res = await request(createApp(ctx, { serveClient: false })).get('/api/no-such-thing');
    expect(res.status).toBe(404);
    expect(res.body).toEqual({ error: { code: 'not_found', message: 'No API route GET /api/no-such-thing' } });
  });

  it('answers malformed JSON with 400 validation_failed, no stack trace', async () => {
    const res = await request(createApp(ctx, { serveClient: false }))
      .post('/api/health')
      .set('Content-Type', 'application/json')
      .send('{"broken":');
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe('validation_failed');
    expect(JSON.stringify(res.body)).not.toMatch(/at .*\.ts/);
  });
});
