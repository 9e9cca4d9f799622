import { readFileSync } from 'node:fs';
import type { Express } from 'express';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { z } from 'zod';
import { createApp } from '@server/app';
import { encodeMiniSeed3 } from '@server/formats/mseed3-writer';
import { createStation, createToken, upsertChannel, type Actor } from '@server/features/stations/station-registry';
import { createPerson, type TestPerson } from '@tests/setup/queue-fixtures';
import { createTestContext, type TestContext } from '@tests/setup/test-app';

/**
 * Role × route matrix for every station, token, import, upload and OpenAPI route: the status each
 * kind of caller gets, as the one policy module (shared/auth/policies.ts) says. `opMine` is an
 * operator assigned to the station, `opOther` one who is not.
 */
type Who = 'anonymous' | 'opMine' | 'opOther' | 'analyst' | 'supervisor' | 'admin';
const everyone: Who[] = ['anonymous', 'opMine', 'opOther', 'analyst', 'supervisor', 'admin'];
const origin = 'http://127.0.0.1';
const system: Actor = { userId: null, label: 'matrix setup', ipAddress: null };
const xml = readFileSync(new URL('../../../fixtures/stationxml/xx-kestrel-valley.xml', import.meta.url), 'utf8');

describe('role × route matrix: stations, tokens, import, uploads, OpenAPI', () => {
  let ctx: TestContext;
  let app: Express;
  let stationId = 0;
  const people = {} as Record<Exclude<Who, 'anonymous'>, TestPerson>;
  let n = 0;
  const next = () => ++n;

  beforeAll(async () => {
    ctx = await createTestContext();
    app = createApp(ctx, { serveClient: false });
    const db = ctx.database.db;
    stationId = await createStation(db, { network: 'XX', code: 'KV03', name: 'Kestrel Valley highway bridge', latitude: 46.25, longitude: 11.06, elevationM: 540 }, system);
    await upsertChannel(db, stationId, { location: '00', code: 'HHZ', sampleRateHz: 100 }, system);
    people.opMine = await createPerson(db, { roles: ['operator'], stationIds: [stationId] });
    people.opOther = await createPerson(db, { roles: ['operator'] });
    people.analyst = await createPerson(db, { roles: ['analyst'] });
    people.supervisor = await createPerson(db, { roles: ['supervisor'] });
    people.admin = await createPerson(db, { roles: ['admin'] });
    // The import rows apply an already-applied document (nothing changes), so only access is tested.
    const { previewStationXml, applyStationXml } = await import('@server/features/stations/stationxml-import');
    const { preview } = await previewStationXml(db, xml, null);
    await applyStationXml(db, xml, preview.previewHash, { roles: ['admin'], stationIds: [], isOperator: false }, system);
  });
  afterAll(async () => {
    await ctx.close();
  });

  const call = (method: 'get' | 'post' | 'patch' | 'put' | 'delete', url: string, who: Who) => {
    const r = request(app)[method](url).set('Origin', origin).set('Host', '127.0.0.1');
    return who === 'anonymous' ? r : r.set('Cookie', people[who].cookie);
  };
  const newChannel = async () => {
    const code = `HH${'ABCDEFGHIJKLMNOPQRSTUVWXY'[next() % 25]}`;
    await upsertChannel(ctx.database.db, stationId, { location: '10', code, sampleRateHz: 100 }, system);
    const detail = await request(app).get(`/api/stations/${stationId}`).set('Cookie', people.admin.cookie);
    const ch = z.array(z.object({ id: z.number(), code: z.string(), location: z.string() })).parse(detail.body.station.channels).find((c) => c.code === code && c.location === '10');
    return ch?.id ?? -1;
  };
  const newToken = async () => (await createToken(ctx.database.db, stationId, `t${next()}`, system)).token.id;
  const previewHash = async () => {
    const res = await call('post', '/api/stations/import/preview', 'admin').attach('file', Buffer.from(xml), 'x.xml');
    return z.string().parse(res.body.previewHash);
  };
  const waveform = () =>
    Buffer.from(
      encodeMiniSeed3(
        { network: 'XX', station: 'KV03', location: '00', channel: 'HHZ', sampleRateHz: 100, startTimeUs: Date.UTC(2026, 2, 14, 8, next(), 0) * 1000, samples: Int32Array.from({ length: 3000 }, (_, i) => Math.round(500 * Math.sin(i / 7 + n))) },
        { encoding: 'int32' },
      ),
    );

  /** One row: route, how to send it, expected status per caller. */
  const rows: Array<{ route: string; run: (who: Who) => Promise<{ status: number }>; expect: Record<Who, number> }> = [
    { route: 'GET /api/stations', run: (w) => call('get', '/api/stations', w), expect: { anonymous: 401, opMine: 200, opOther: 200, analyst: 200, supervisor: 200, admin: 200 } },
    {
      route: 'POST /api/stations',
      run: (w) => call('post', '/api/stations', w).send({ network: 'XX', code: `M${next()}`, name: 'Matrix station', latitude: 46, longitude: 11, elevationM: 0 }),
      expect: { anonymous: 401, opMine: 403, opOther: 403, analyst: 403, supervisor: 201, admin: 201 },
    },
    { route: 'GET /api/stations/:id', run: (w) => call('get', `/api/stations/${stationId}`, w), expect: { anonymous: 401, opMine: 200, opOther: 403, analyst: 200, supervisor: 200, admin: 200 } },
    {
      route: 'PATCH /api/stations/:id',
      run: (w) => call('patch', `/api/stations/${stationId}`, w).send({ siteDescription: `edited ${next()}` }),
      expect: { anonymous: 401, opMine: 200, opOther: 403, analyst: 403, supervisor: 200, admin: 200 },
    },
    {
      route: 'PUT /api/stations/:id/profile',
      run: (w) => call('put', `/api/stations/${stationId}/profile`, w).send({ thresholds: { eventZ: 3 } }),
      expect: { anonymous: 401, opMine: 200, opOther: 403, analyst: 403, supervisor: 200, admin: 200 },
    },
    {
      route: 'POST /api/stations/:id/channels',
      run: (w) => call('post', `/api/stations/${stationId}/channels`, w).send({ location: '00', code: 'HHN', sampleRateHz: 100 }),
      expect: { anonymous: 401, opMine: 201, opOther: 403, analyst: 403, supervisor: 201, admin: 201 },
    },
    {
      route: 'DELETE /api/stations/:id/channels/:channelId',
      run: async (w) => call('delete', `/api/stations/${stationId}/channels/${await newChannel()}`, w),
      expect: { anonymous: 401, opMine: 204, opOther: 403, analyst: 403, supervisor: 204, admin: 204 },
    },
    { route: 'GET /api/stations/:id/tokens', run: (w) => call('get', `/api/stations/${stationId}/tokens`, w), expect: { anonymous: 401, opMine: 200, opOther: 403, analyst: 403, supervisor: 403, admin: 200 } },
    {
      route: 'POST /api/stations/:id/tokens',
      run: (w) => call('post', `/api/stations/${stationId}/tokens`, w).send({ label: 'matrix' }),
      expect: { anonymous: 401, opMine: 201, opOther: 403, analyst: 403, supervisor: 403, admin: 201 },
    },
    {
      route: 'POST /api/stations/:id/tokens/:tokenId/revoke',
      run: async (w) => call('post', `/api/stations/${stationId}/tokens/${await newToken()}/revoke`, w),
      expect: { anonymous: 401, opMine: 200, opOther: 403, analyst: 403, supervisor: 403, admin: 200 },
    },
    { route: 'GET /api/stations/:id/health', run: (w) => call('get', `/api/stations/${stationId}/health`, w), expect: { anonymous: 401, opMine: 200, opOther: 403, analyst: 200, supervisor: 200, admin: 200 } },
    {
      route: 'POST /api/stations/import/preview',
      run: (w) => call('post', '/api/stations/import/preview', w).attach('file', Buffer.from(xml), 'x.xml'),
      expect: { anonymous: 401, opMine: 200, opOther: 200, analyst: 200, supervisor: 200, admin: 200 },
    },
    {
      route: 'POST /api/stations/import/apply (no change)',
      run: async (w) => call('post', '/api/stations/import/apply', w).field('previewHash', await previewHash()).attach('file', Buffer.from(xml), 'x.xml'),
      expect: { anonymous: 401, opMine: 200, opOther: 200, analyst: 200, supervisor: 200, admin: 200 },
    },
    {
      route: 'POST /api/uploads',
      run: (w) => call('post', '/api/uploads', w).attach('files', waveform(), 'kv03.mseed'),
      expect: { anonymous: 401, opMine: 201, opOther: 403, analyst: 403, supervisor: 403, admin: 403 },
    },
    { route: 'GET /api/openapi.json', run: (w) => call('get', '/api/openapi.json', w), expect: { anonymous: 200, opMine: 200, opOther: 200, analyst: 200, supervisor: 200, admin: 200 } },
  ];

  for (const row of rows) {
    it(row.route, async () => {
      const got: Partial<Record<Who, number>> = {};
      for (const who of everyone) got[who] = (await row.run(who)).status;
      expect(got).toEqual(row.expect);
    });
  }
});
