import { readFileSync } from 'node:fs';
import { and, eq } from 'drizzle-orm';
import type { Express } from 'express';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { z } from 'zod';
import { createApp } from '@server/app';
import { auditLog } from '@server/db/schema/audit-log';
import { channels, stations } from '@server/db/schema/stations';
import { pazMagnitude } from '@server/dsp/response';
import { channelResponseSchema } from '@shared/schemas/station';
import { createPerson, type TestPerson } from '@tests/setup/queue-fixtures';
import { createTestContext, type TestContext } from '@tests/setup/test-app';

const origin = 'http://127.0.0.1';
const fixtureXml = readFileSync(new URL('../../../fixtures/stationxml/xx-kestrel-valley.xml', import.meta.url), 'utf8');

const previewSchema = z.object({
  previewHash: z.string(),
  stations: z.array(
    z.object({
      station: z.string(),
      status: z.string(),
      allowed: z.boolean(),
      fields: z.array(z.object({ field: z.string(), from: z.unknown(), to: z.unknown() })),
      channels: z.array(z.object({ streamId: z.string(), status: z.string(), fields: z.array(z.object({ field: z.string(), from: z.unknown(), to: z.unknown() })), message: z.string().optional() })),
    }),
  ),
  counts: z.object({ newStations: z.number(), changedStations: z.number(), unchangedStations: z.number(), newChannels: z.number(), changedChannels: z.number(), invalid: z.number() }),
});

describe('station registry API (real MariaDB)', () => {
  let ctx: TestContext;
  let app: Express;
  let admin: TestPerson;
  let operator: TestPerson;
  let analyst: TestPerson;
  let supervisor: TestPerson;
  let stationId: number;

  const send = (method: 'post' | 'patch' | 'put' | 'delete', who: TestPerson | null, url: string) => {
    const r = request(app)[method](url).set('Origin', origin).set('Host', '127.0.0.1');
    return who ? r.set('Cookie', who.cookie) : r;
  };
  const get = (who: TestPerson | null, url: string) => {
    const r = request(app).get(url);
    return who ? r.set('Cookie', who.cookie) : r;
  };

  beforeAll(async () => {
    ctx = await createTestContext();
    app = createApp(ctx, { serveClient: false });
    admin = await createPerson(ctx.database.db, { roles: ['admin'] });
    operator = await createPerson(ctx.database.db, { roles: ['operator'] });
    analyst = await createPerson(ctx.database.db, { roles: ['analyst'] });
    supervisor = await createPerson(ctx.database.db, { roles: ['supervisor'] });
  });
  afterAll(async () => {
    await ctx.close();
  });

  it('creates a station (codes upper-cased) and refuses bad codes with the field named', async () => {
    const ok = await send('post', admin, '/api/stations').send({ network: 'xx', code: 'kv05', name: 'Kestrel Valley south saddle', latitude: 46.2, longitude: 11.08, elevationM: 1105 });
    expect(ok.status).toBe(201);
    expect(ok.body.station.network).toBe('XX');
    expect(ok.body.station.code).toBe('KV05');
    stationId = z.number().parse(ok.body.station.id);
    // SEED 2.4: network 1–2 characters, station 1–5.
    const longNet = await send('post', admin, '/api/stations').send({ network: 'XXX', code: 'KV06', name: 'n', latitude: 0, longitude: 0, elevationM: 0 });
    expect(longNet.status).toBe(400);
    expect(longNet.body.error.message).toBe('network: network code must be 1–2 letters or digits (SEED 2.4)');
    const longSta = await send('post', admin, '/api/stations').send({ network: 'XX', code: 'KV0006', name: 'n', latitude: 0, longitude: 0, elevationM: 0 });
    expect(longSta.body.error.message).toMatch(/^code: station code must be 1–5/);
    const punct = await send('post', admin, '/api/stations').send({ network: 'XX', code: 'KV-1', name: 'n', latitude: 0, longitude: 0, elevationM: 0 });
    expect(punct.status).toBe(400);
    const lat = await send('post', admin, '/api/stations').send({ network: 'XX', code: 'KV07', name: 'n', latitude: 91, longitude: 0, elevationM: 0 });
    expect(lat.body.error.message).toMatch(/^latitude: /);
    const dup = await send('post', admin, '/api/stations').send({ network: 'XX', code: 'KV05', name: 'again', latitude: 0, longitude: 0, elevationM: 0 });
    expect(dup.status).toBe(409);
    expect(dup.body.error.message).toContain('XX.KV05');
  });

  it('channels: 3-character codes; a sample rate the profile cannot use is refused with the profile field', async () => {
    const bad = await send('post', admin, `/api/stations/${stationId}/channels`).send({ location: '00', code: 'HZ', sampleRateHz: 100 });
    expect(bad.status).toBe(400);
    expect(bad.body.error.message).toMatch(/^code: channel code must be exactly 3/);
    // Default high band 2–10 Hz: 10 Hz ≥ 0.45 · 20 Hz = 9 Hz (the engine's rule, server/dsp/bands.ts).
    const slow = await send('post', admin, `/api/stations/${stationId}/channels`).send({ location: '00', code: 'BHZ', sampleRateHz: 20 });
    expect(slow.status).toBe(400);
    expect(slow.body.error.message).toContain('sampleRateHz: ');
    expect(slow.body.error.message).toContain('bands.high.fmax');
    const ok = await send('post', admin, `/api/stations/${stationId}/channels`).send({ location: '00', code: 'HHZ', sampleRateHz: 40, sensitivity: 1.5e9, sensitivityFrequencyHz: 1, sensitivityInputUnits: 'm/s' });
    expect(ok.status).toBe(201);
    expect(ok.body.station.channels[0].streamId).toBe('XX.KV05.00.HHZ');
  });

  it('profile: validated against every channel’s 0.45·fs with field-level messages', async () => {
    const bad = await send('put', admin, `/api/stations/${stationId}/profile`).send({ bands: { high: { fmin: 2, fmax: 18 } } });
    expect(bad.status).toBe(400);
    // 0.45 · 40 Hz = 18 Hz: an upper edge of 18 Hz is refused (the engine refuses edges AT 0.45·fs).
    expect(bad.body.error.message).toBe('profile.bands.high.fmax: must be below 0.45·fs = 18 Hz of XX.KV05.00.HHZ (40 Hz)');
    const shape = await send('put', admin, `/api/stations/${stationId}/profile`).send({ bands: { low: { fmin: 3, fmax: 1 } } });
    expect(shape.status).toBe(400);
    expect(shape.body.error.details.issues[0].path).toMatch(/^profile\.bands\.low/);
    const reject = await send('put', admin, `/api/stations/${stationId}/profile`).send({ bandReject: [{ fmin: 19, fmax: 21 }] });
    expect(reject.body.error.message).toBe('profile.bandReject.0.fmax: must be below the Nyquist frequency 20 Hz of XX.KV05.00.HHZ (40 Hz)');
    const ok = await send('put', admin, `/api/stations/${stationId}/profile`).send({ bands: { high: { fmin: 2, fmax: 15 } }, thresholds: { eventZ: 3.5 } });
    expect(ok.status).toBe(200);
    expect(ok.body.profile.bands.high.fmax).toBe(15);
    expect(ok.body.profile.bands.low.fmin).toBe(0.5);
    const detail = await get(admin, `/api/stations/${stationId}`);
    expect(detail.body.station.profile.thresholds.eventZ).toBe(3.5);
    expect(detail.body.baseline).toMatchObject({ count: 0, source: 'none', inUse: false });
  });

  it('supervisors register stations, operators may not (issue 5); an operator edits their own station, not others; analysts view only', async () => {
    const refused = await send('post', operator, '/api/stations').send({ network: 'XX', code: 'KV06', name: 'Kestrel Valley east forest', latitude: 46.26, longitude: 11.17, elevationM: 960 });
    expect(refused.status).toBe(403);
    const mine = await send('post', supervisor, '/api/stations').send({ network: 'XX', code: 'KV06', name: 'Kestrel Valley east forest', latitude: 46.26, longitude: 11.17, elevationM: 960 });
    expect(mine.status).toBe(201);
    const mineId = z.number().parse(mine.body.station.id);
    // An admin assigns the new station to the operator.
    const assigned = await send('put', admin, `/api/admin/users/${operator.id}/stations`).send({ stationIds: [mineId] });
    expect(assigned.status).toBe(204);
    const edit = await send('patch', operator, `/api/stations/${mineId}`).send({ siteDescription: 'Forest road vault' });
    expect(edit.status).toBe(200);
    expect(edit.body.station.siteDescription).toBe('Forest road vault');
    const foreign = await send('patch', operator, `/api/stations/${stationId}`).send({ name: 'mine now' });
    expect(foreign.status).toBe(403);
    const list = await get(operator, '/api/stations');
    expect(list.body.stations.map((s: { code: string }) => s.code)).toEqual(['KV06']);
    const all = await get(analyst, '/api/stations');
    expect(all.body.stations.map((s: { code: string }) => s.code)).toEqual(['KV05', 'KV06']);
    const anaEdit = await send('patch', analyst, `/api/stations/${stationId}`).send({ name: 'x' });
    expect(anaEdit.status).toBe(403);
    expect((await get(null, '/api/stations')).status).toBe(401);
    const audits = await ctx.database.db.select().from(auditLog).where(and(eq(auditLog.action, 'station.update'), eq(auditLog.targetId, String(mineId))));
    expect(audits).toHaveLength(1);
  });

  it('StationXML import: preview (new stations/channels, ended epochs skipped), apply in one go, sensitivity and response stored', async () => {
    const preview = await send('post', admin, '/api/stations/import/preview').attach('file', Buffer.from(fixtureXml), 'xx.xml');
    expect(preview.status).toBe(200);
    const p = previewSchema.parse(preview.body);
    expect(p.stations.map((s) => [s.station, s.status])).toEqual([
      ['XX.KV01', 'new'],
      ['XX.KV04', 'new'],
    ]);
    const kv01 = p.stations[0];
    expect(kv01?.channels.map((c) => [c.streamId, c.status])).toEqual([
      ['XX.KV01.00.HHZ', 'new'],
      ['XX.KV01.00.HHN', 'skipped'],
    ]);
    // Nothing is written by a preview.
    expect(await ctx.database.db.select().from(stations).where(eq(stations.code, 'KV01'))).toHaveLength(0);

    const stale = await send('post', admin, '/api/stations/import/apply').field('previewHash', '0'.repeat(64)).attach('file', Buffer.from(fixtureXml), 'xx.xml');
    expect(stale.status).toBe(409);
    const applied = await send('post', admin, '/api/stations/import/apply').field('previewHash', p.previewHash).attach('file', Buffer.from(fixtureXml), 'xx.xml');
    expect(applied.status).toBe(200);

    const db = ctx.database.db;
    const [st] = await db.select().from(stations).where(eq(stations.code, 'KV01'));
    // Values as written in the fixture (tests/fixtures/stationxml/xx-kestrel-valley.xml).
    expect(st).toMatchObject({ network: 'XX', name: 'Kestrel Valley north ridge', latitude: 46.5123, longitude: -112.3456, elevationM: 1432.5 });
    const [hhz] = await db.select().from(channels).where(and(eq(channels.stationId, st?.id ?? -1), eq(channels.code, 'HHZ')));
    expect(hhz).toMatchObject({ location: '00', sampleRateHz: 100, sensitivity: 1.2016e9, sensitivityFrequencyHz: 1, sensitivityInputUnits: 'm/s' });
    // The fixture's A0 was computed (numpy, see the file's comment) so |A0·H| = 1 at the normalization
    // frequency; the stored rad/s response must keep that: 1.0 Hz for LAPLACE (RADIANS/SECOND)...
    const r1 = channelResponseSchema.parse(hhz?.response);
    expect(pazMagnitude(r1, 1.0)).toBeCloseTo(1, 9);
    const [kv04] = await db.select().from(stations).where(eq(stations.code, 'KV04'));
    const [ehz] = await db.select().from(channels).where(eq(channels.stationId, kv04?.id ?? -1));
    expect(ehz).toMatchObject({ location: '', code: 'EHZ', sampleRateHz: 200, sensitivity: 6.29e8, sensitivityFrequencyHz: 5 });
    // ...and 5.0 Hz for the LAPLACE (HERTZ) stage after conversion to rad/s (s = 2πf, SEED 2.4 blockette 53).
    const r4 = channelResponseSchema.parse(ehz?.response);
    expect(pazMagnitude(r4, 5.0)).toBeCloseTo(1, 9);
    const imports = await db.select().from(auditLog).where(eq(auditLog.action, 'stationxml.import'));
    expect(imports).toHaveLength(1);

    const again = previewSchema.parse((await send('post', admin, '/api/stations/import/preview').attach('file', Buffer.from(fixtureXml), 'xx.xml')).body);
    expect(again.stations.map((s) => s.status)).toEqual(['unchanged', 'unchanged']);

    const edited = fixtureXml.replace('<SampleRate>200</SampleRate>', '<SampleRate>250</SampleRate>').replace('Kestrel Valley pumping station', 'Kestrel Valley pump house');
    const diff = previewSchema.parse((await send('post', admin, '/api/stations/import/preview').attach('file', Buffer.from(edited), 'xx.xml')).body);
    const kv04p = diff.stations.find((s) => s.station === 'XX.KV04');
    expect(kv04p?.status).toBe('changed');
    expect(kv04p?.fields).toEqual([{ field: 'name', from: 'Kestrel Valley pumping station', to: 'Kestrel Valley pump house' }]);
    expect(kv04p?.channels[0]?.fields).toEqual([{ field: 'sampleRateHz', from: 200, to: 250 }]);
    // An operator not assigned to KV04 may preview but sees nothing stored for it (status refused);
    // applying leaves it out, so it stays as it was.
    const opPreview = previewSchema.parse((await send('post', operator, '/api/stations/import/preview').attach('file', Buffer.from(edited), 'xx.xml')).body);
    const opKv04 = opPreview.stations.find((s) => s.station === 'XX.KV04');
    expect(opKv04).toMatchObject({ status: 'refused', allowed: false, fields: [], channels: [] });
    expect(JSON.stringify(opPreview)).not.toContain('Kestrel Valley pumping station');
    const opApply = await send('post', operator, '/api/stations/import/apply').field('previewHash', opPreview.previewHash).attach('file', Buffer.from(edited), 'xx.xml');
    expect(opApply.status).toBe(200);
    const kv04After = previewSchema.parse((await send('post', admin, '/api/stations/import/preview').attach('file', Buffer.from(edited), 'xx.xml')).body);
    expect(kv04After.stations.find((s) => s.station === 'XX.KV04')?.status).toBe('changed');
    // The same document naming an unregistered station instead: the operator's answers are the
    // same but for the code (no existence oracle), and nothing is registered; an admin sees it as new.
    const unregistered = edited.replace('code="KV04"', 'code="KV97"');
    const opNew = previewSchema.parse((await send('post', operator, '/api/stations/import/preview').attach('file', Buffer.from(unregistered), 'xx.xml')).body);
    const opKv97 = opNew.stations.find((s) => s.station === 'XX.KV97');
    expect({ ...opKv97, station: 'XX.KV04' }).toEqual(opKv04);
    expect(opNew.counts).toEqual(opPreview.counts);
    const opApplyNew = await send('post', operator, '/api/stations/import/apply').field('previewHash', opNew.previewHash).attach('file', Buffer.from(unregistered), 'xx.xml');
    expect(opApplyNew.status).toBe(opApply.status);
    expect(JSON.stringify(opApplyNew.body).replaceAll('KV97', 'KV04')).toBe(JSON.stringify(opApply.body));
    const adminNew = previewSchema.parse((await send('post', admin, '/api/stations/import/preview').attach('file', Buffer.from(unregistered), 'xx.xml')).body);
    expect(adminNew.stations.find((s) => s.station === 'XX.KV97')?.status).toBe('new');
  });

  it('StationXML that is not well-formed: 422 naming the problem', async () => {
    const res = await send('post', admin, '/api/stations/import/preview').attach('file', Buffer.from('<FDSNStationXML><Network code="XX">'), 'broken.xml');
    expect(res.status).toBe(422);
    expect(res.body.error.message).toMatch(/StationXML/);
  });

  it('GET /api/openapi.json describes the station and upload routes from the zod schemas', async () => {
    const res = await get(null, '/api/openapi.json');
    expect(res.status).toBe(200);
    const doc = z
      .object({ openapi: z.string(), paths: z.record(z.string(), z.record(z.string(), z.unknown())) })
      .parse(res.body);
    expect(doc.openapi).toMatch(/^3\.0\./);
    expect(Object.keys(doc.paths)).toEqual(expect.arrayContaining(['/api/uploads', '/api/stations', '/api/stations/{id}/profile', '/api/stations/{id}/tokens']));
    // The create body carries the same limits the route checks (stationFieldsSchema).
    const body = JSON.stringify(doc.paths['/api/stations']?.post);
    expect(body).toContain('"maximum":90');
    expect(body).toContain('^[A-Za-z0-9]{1,2}$');
    expect(JSON.stringify(doc.paths['/api/uploads']?.post)).toContain('multipart/form-data');
  });
});
