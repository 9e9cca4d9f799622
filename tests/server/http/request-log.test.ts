import { Writable } from 'node:stream';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp } from '@server/app';
import type { AppContext } from '@server/context';
import { requestLogFields } from '@server/http/request-log';
import { createLogger } from '@server/logger';
import { contextOver } from '@tests/faults/support/context';
import { seedPerson } from '@tests/faults/support/fixtures';
import { createTestDatabase, type TestDatabase } from '@tests/setup/test-db';

/**
 * Request logging: the app's real logger writes into a buffer while requests with a session
 * cookie, long headers and a query string go through the real app; every request leaves exactly
 * one line with exactly method, path, status, ms and user id (besides pino's level and time), and
 * none of the headers.
 */
describe('one short JSON line per request', () => {
  let database: TestDatabase;
  let ctx: AppContext;
  let closeContext: (() => Promise<void>) | undefined;
  const lines: string[] = [];

  beforeAll(async () => {
    database = await createTestDatabase();
    const sink = new Writable({
      write(chunk: Buffer, _enc, done) {
        lines.push(...chunk.toString('utf8').split('\n').filter((l) => l !== ''));
        done();
      },
    });
    const built = await contextOver(database, createLogger('info', sink), { LOG_LEVEL: 'info' });
    ctx = built.ctx;
    closeContext = built.close;
  });

  afterAll(async () => {
    await closeContext?.();
    await database?.drop();
  });

  it('logs method, path, status, time and user id only', async () => {
    const person = await seedPerson(database.db, { roles: ['analyst'] });
    const app = createApp(ctx, { serveClient: false });
    const noisy = { 'User-Agent': `kestrel-probe/1.0 ${'x'.repeat(300)}`, 'X-Trace-Note': 'header-value-that-must-not-be-logged', Accept: 'application/json' };
    const before = lines.length;
    await request(app).get('/api/queue?sort=score&station=KV01').set('Cookie', person.cookie).set(noisy).expect(200);
    await request(app).get('/api/queue').set(noisy).expect(401);
    await request(app).get('/api/no-such-route?x=1').set('Cookie', person.cookie).expect(404);
    await request(app).get('/api/health').expect(200);
    // Lines are written when the response finishes; give the last one a moment.
    await new Promise((r) => setTimeout(r, 50));
    const logged = lines.slice(before).map((l) => JSON.parse(l) as Record<string, unknown>);
    const requestLines = logged.filter((l) => 'method' in l);
    expect(requestLines.map((l) => [l.method, l.path, l.status, l.userId])).toEqual([
      ['GET', '/api/queue', 200, person.id],
      ['GET', '/api/queue', 401, null],
      ['GET', '/api/no-such-route', 404, person.id],
    ]);
    for (const l of requestLines) {
      expect(Object.keys(l).sort()).toEqual(['level', 'method', 'ms', 'path', 'status', 'time', 'userId']);
      expect(typeof l.ms).toBe('number');
      expect(l.ms).toBeGreaterThanOrEqual(0);
    }
    expect(requestLines.map((l) => l.level)).toEqual([30, 40, 40]); // pino levels: info, warn, warn
    const text = lines.slice(before).join('\n');
    for (const secret of [person.sessionId, 'header-value-that-must-not-be-logged', 'kestrel-probe', 'sort=score']) expect(text).not.toContain(secret);
    // Short lines: a request line stays far under the headers' size (the old lines carried every header).
    for (const l of lines.slice(before).filter((x) => x.includes('"method"'))) expect(l.length).toBeLessThan(160);
  });

  it('keeps the fields plain: path without query, ms to 0.1', () => {
    expect(requestLogFields({ method: 'POST', originalUrl: '/api/uploads?dry=1' }, 201, 12.345, 'u1')).toEqual({ method: 'POST', path: '/api/uploads', status: 201, ms: 12.3, userId: 'u1' });
  });
});
