import { Writable } from 'node:stream';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp } from '@server/app';
import type { AppContext } from '@server/context';
import { createLogger } from '@server/logger';
import { contextOver } from '@tests/faults/support/context';
import { createTestDatabase, type TestDatabase } from '@tests/setup/test-db';
import { seedIngestToken, seedPerson, seedStation } from '@tests/faults/support/fixtures';

/**
 * Secrets never reach the logs: the app's real logger (server/logger.ts, pino with redaction) at
 * level `trace` writes into a buffer; requests carry a valid session cookie, an ingest token, a
 * wrong bearer token and a password (sign-in body, and a malformed body around it); then every
 * captured line is searched for each secret. The capture must hold request lines (and the
 * `[redacted]` marker) so a logger that wrote nothing could not pass.
 */

const password = 'kestrel-Secret-Pass-7781';
const wrongBearer = 'kvi_NOT-A-REAL-TOKEN-but-secret-9f3a2c';

describe('no secrets in logs', () => {
  let database: TestDatabase;
  let ctx: AppContext;
  let closeContext: (() => Promise<void>) | undefined;
  const lines: string[] = [];
  const secrets: Record<string, string> = { password, wrongBearer };

  beforeAll(async () => {
    database = await createTestDatabase();
    const sink = new Writable({
      write(chunk: Buffer, _enc, done) {
        lines.push(...chunk.toString('utf8').split('\n').filter((l) => l !== ''));
        done();
      },
    });
    const logger = createLogger('trace', sink);
    const built = await contextOver(database, logger, { LOG_LEVEL: 'trace' });
    ctx = built.ctx;
    closeContext = built.close;
    const person = await seedPerson(database.db, { roles: ['operator'], password, email: 'redaction.check@kestrel.example' });
    secrets.sessionId = person.sessionId;
    const stationId = await seedStation(database.db, 'KV01');
    secrets.ingestToken = await seedIngestToken(database.db, stationId);
  });

  afterAll(async () => {
    await closeContext?.();
    await database?.drop();
  });

  it('redacts cookies, tokens and passwords in every request line', async () => {
    const app = createApp(ctx, { serveClient: false });
    const origin = 'http://127.0.0.1';
    const cookie = `seisift_session=${secrets.sessionId ?? ''}`;
    const responses = [
      await request(app).get('/api/queue').set('Cookie', cookie),
      await request(app).get('/api/no-such-route').set('Cookie', cookie),
      await request(app).get('/api/queue').set('Authorization', `Bearer ${wrongBearer}`),
      await request(app).post('/api/uploads').set('Authorization', `Bearer ${secrets.ingestToken ?? ''}`).attach('files', Buffer.from('not a waveform'), 'x.mseed'),
      await request(app).post('/api/auth/sign-in').set('Origin', origin).set('Host', '127.0.0.1').send({ email: 'redaction.check@kestrel.example', password }),
      await request(app).post('/api/auth/sign-in').set('Origin', origin).set('Host', '127.0.0.1').send({ email: 'redaction.check@kestrel.example', password: `${password}-wrong` }),
      await request(app)
        .post('/api/auth/sign-in')
        .set('Origin', origin)
        .set('Host', '127.0.0.1')
        .set('Content-Type', 'application/json')
        .send(`{"email":"redaction.check@kestrel.example","password":"${password}"`),
    ];
    // Any session cookie the server handed out is a secret too.
    for (const r of responses) {
      const setCookie = r.headers['set-cookie'];
      for (const c of Array.isArray(setCookie) ? setCookie : typeof setCookie === 'string' ? [setCookie] : []) {
        const value = /^seisift_session=([^;]*)/.exec(c)?.[1];
        if (value) secrets[`issued cookie ${value.slice(0, 4)}`] = value;
      }
    }
    // A direct log call of an object holding secrets, as a route might do by mistake.
    ctx.logger.info({ body: { email: 'x@kestrel.example', password }, auth: { token: secrets.ingestToken } }, 'route log with a body');
    ctx.logger.warn({ password, token: wrongBearer }, 'top-level secrets');
    ctx.logger.error({ request: { body: { password } }, headers: { cookie } }, 'nested secrets');

    const text = lines.join('\n');
    expect(lines.length).toBeGreaterThanOrEqual(responses.length);
    expect(text).toContain('/api/queue');
    expect(text).toContain('[redacted]');
    for (const [name, value] of Object.entries(secrets)) {
      expect(value.length, name).toBeGreaterThan(8);
      expect(text.includes(value), `${name} appears in the log`).toBe(false);
    }
  });
});
