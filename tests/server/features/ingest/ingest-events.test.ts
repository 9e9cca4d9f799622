import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp } from '@server/app';
import { saveVelocityModel } from '@server/features/events/event-settings';
import { greatCircleDistanceKm } from '@server/seismo/geodesy';
import type { TrueHypocentre } from '@tests/server/seismo/synthetic';
import { stationMiniSeed } from '@tests/server/seismo/synthetic-waveforms';
import { fixtureModel, seedSyntheticStations } from '@tests/setup/event-fixtures';
import { createPerson } from '@tests/setup/queue-fixtures';
import { createTestContext, type TestContext } from '@tests/setup/test-app';

const origin = 'http://127.0.0.1';
const truth: TrueHypocentre = { latitudeDeg: 46.21, longitudeDeg: 11.12, depthKm: 7, timeS: Date.parse('2026-03-11T02:40:10.500Z') / 1000 };

describe('ingest builds the event as soon as a candidate group forms (real MariaDB, worker pool)', () => {
  let ctx: TestContext;

  beforeAll(async () => {
    ctx = await createTestContext();
  }, 60_000);
  afterAll(async () => {
    await ctx?.close();
  });

  it('after the last upload the event is listed, located near the synthetic source, with no job run and no read building it', async () => {
    const db = ctx.database.db;
    const app = createApp(ctx, { serveClient: false });
    const { stationIds, synth } = await seedSyntheticStations(db, { codes: ['IGE1', 'IGE2', 'IGE3', 'IGE4'], placements: [[10, 11], [100, 15], [190, 13], [280, 17]], truth });
    const operator = await createPerson(db, { roles: ['operator'], stationIds });
    // The network's model is the one the synthetic records were made with.
    const supervisor = await createPerson(db, { roles: ['supervisor'] });
    await db.transaction((tx) => saveVelocityModel(tx, { id: supervisor.id, email: supervisor.email }, 'XX', { name: fixtureModel.name, layers: fixtureModel.layers, stationCorrections: {} }, null));
    for (const s of synth) {
      const res = await request(app).post('/api/uploads').set('Origin', origin).set('Host', '127.0.0.1').set('Cookie', operator.cookie).attach('files', Buffer.from(stationMiniSeed(s)), `${s.code}.mseed`);
      expect(res.status).toBe(201);
    }
    const list = await request(app).get('/api/events').set('Cookie', operator.cookie).expect(200);
    expect(list.body.events).toHaveLength(1);
    const ev = list.body.events[0];
    expect(ev.stationCount).toBe(4);
    // The synthetic arrivals come from the engine's own travel times (tests/server/seismo/synthetic.ts),
    // so the automatic location lands within a kilometre of the source they were made from.
    expect(greatCircleDistanceKm({ latitudeDeg: ev.latitude, longitudeDeg: ev.longitude }, truth)).toBeLessThan(1);
  }, 120_000);
});
