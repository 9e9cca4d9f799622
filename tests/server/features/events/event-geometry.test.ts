import type { Express } from 'express';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp } from '@server/app';
import { eventGeometrySchema } from '@shared/schemas/event-geometry';
import { eventTracesSchema } from '@shared/schemas/event-traces';
import { eventDetailSchema } from '@shared/schemas/events';
import { seedSyntheticEvent, fixtureModel, type SeededEvent } from '@tests/setup/event-fixtures';
import { createTestContext, type TestContext } from '@tests/setup/test-app';
import { onItemsCreated } from '@server/features/events/candidate-events';
import { syncEventsFromGroups } from '@server/features/events/event-service';
import { eventListSchema } from '@shared/schemas/events';
import { DISPLAY_TOLERANCE } from '@server/dsp/display-precision';
import { itemTraces } from '@server/features/queue/queue-traces';
import { createItem, createPerson, type TestPerson } from '@tests/setup/queue-fixtures';

/** Haversine great-circle distance (Sinnott 1984, Sky & Telescope 68:159) on a 6371 km sphere, km. */
function haversineKm(lat1: number, lon1: number, lat2: number, lon2: number): number {
  const r = Math.PI / 180;
  const a = Math.sin(((lat2 - lat1) * r) / 2) ** 2 + Math.cos(lat1 * r) * Math.cos(lat2 * r) * Math.sin(((lon2 - lon1) * r) / 2) ** 2;
  return 2 * 6371 * Math.asin(Math.sqrt(a));
}

describe('GET /api/events/:id/geometry (real MariaDB)', () => {
  let ctx: TestContext;
  let app: Express;
  let ana: TestPerson;
  let opFar: TestPerson;
  let seeded: SeededEvent;

  beforeAll(async () => {
    ctx = await createTestContext();
    app = createApp(ctx, { serveClient: false });
    const db = ctx.database.db;
    const sue = await createPerson(db, { roles: ['supervisor'] });
    ana = await createPerson(db, { roles: ['analyst'] });
    seeded = await seedSyntheticEvent(db, {
      codes: ['GE01', 'GE02', 'GE03', 'GE04'],
      placements: [[10, 12], [120, 15], [220, 9], [300, 20]],
      truth: { latitudeDeg: 46.27, longitudeDeg: 11.06, depthKm: 5, timeS: Date.parse('2026-03-11T02:00:10.500Z') / 1000 },
      supervisor: sue,
    });
    opFar = await createPerson(db, { roles: ['operator'], stationIds: [] });
  }, 120_000);
  afterAll(async () => {
    await ctx?.close();
  });

  it('401 without a session, 400 naming a bad id, 404 for an operator with none of its stations', async () => {
    await request(app).get(`/api/events/${seeded.eventId}/geometry`).expect(401);
    const bad = await request(app).get('/api/events/x/geometry').set('Cookie', ana.cookie).expect(400);
    expect(bad.body.error.message).toMatch(/^id: /);
    await request(app).get(`/api/events/${seeded.eventId}/geometry`).set('Cookie', opFar.cookie).expect(404);
    await request(app).get('/api/events/999999/geometry').set('Cookie', ana.cookie).expect(404);
  });

  it('predicts first P and S from the preferred origin as r/v in the half-space (exact; common practice) and matches the residuals', async () => {
    const g = eventGeometrySchema.parse((await request(app).get(`/api/events/${seeded.eventId}/geometry`).set('Cookie', ana.cookie).expect(200)).body);
    const d = eventDetailSchema.parse((await request(app).get(`/api/events/${seeded.eventId}`).set('Cookie', ana.cookie).expect(200)).body);
    expect(g.caution).toMatch(/triage aids/);
    const o = d.origin;
    if (!o) throw new Error('the event was not located');
    expect(g.stations.filter((s) => s.member)).toHaveLength(4);
    const layer = fixtureModel.layers[0] as { vpKmS: number; vsKmS: number };
    for (const s of g.stations) {
      const epi = haversineKm(o.latitude, o.longitude, s.latitude, s.longitude);
      expect(Math.abs((s.distanceKm ?? NaN) - epi)).toBeLessThan(1e-6);
      const hypo = Math.hypot(epi, o.depthKm);
      const t0 = Date.parse(o.time);
      expect(Math.abs(Date.parse(s.predicted.P ?? '') - (t0 + (hypo / layer.vpKmS) * 1000))).toBeLessThanOrEqual(1);
      expect(Math.abs(Date.parse(s.predicted.S ?? '') - (t0 + (hypo / layer.vsKmS) * 1000))).toBeLessThanOrEqual(1);
    }
    // A pick's residual is its time minus the prediction drawn on the screen.
    for (const a of d.arrivals) {
      const pick = d.picks.automatic.find((p) => p.id === a.pickId);
      const st = g.stations.find((s) => a.streamId.startsWith(`${s.station}.`));
      if (!pick || !st) continue;
      const predicted = a.phase === 'S' ? st.predicted.S : st.predicted.P;
      expect(Math.abs((Date.parse(pick.time) - Date.parse(predicted ?? '')) / 1000 - a.residualS)).toBeLessThan(0.003);
    }
  });

  it('GET /api/events/:id/traces: 401, 400 for bad points, 404 out of scope; every member channel, the same pre-processed trace the engine gives the review screen', async () => {
    await request(app).get(`/api/events/${seeded.eventId}/traces`).expect(401);
    const bad = await request(app).get(`/api/events/${seeded.eventId}/traces?points=5`).set('Cookie', ana.cookie).expect(400);
    expect(bad.body.error.message).toMatch(/points/);
    await request(app).get(`/api/events/${seeded.eventId}/traces`).set('Cookie', opFar.cookie).expect(404);
    await request(app).get('/api/events/999999/traces').set('Cookie', ana.cookie).expect(404);
    const t = eventTracesSchema.parse((await request(app).get(`/api/events/${seeded.eventId}/traces?points=2000`).set('Cookie', ana.cookie).expect(200)).body);
    expect(t.members.map((m) => m.itemId).sort((a, b) => a - b)).toEqual([...seeded.itemIds].sort((a, b) => a - b));
    for (const m of t.members) {
      expect(m.channels.map((c) => c.streamId.split('.')[3])).toEqual(['HHE', 'HHN', 'HHZ']);
      // The review screen's traces of the same window (the engine's own chain, server/dsp/channel-chain.ts):
      // the same pre-processed samples at the same decimation, in m/s from the registry's sensitivity.
      // Read unrounded (`itemTraces`, what the traces route computes before `tracesForDisplay` rounds
      // it for drawing), so this compares the record section with the engine's exact numbers.
      const q = await itemTraces(ctx.database.db, m.itemId, { points: 2000 }, 'all');
      for (const c of m.channels) {
        const r = q.channels.find((x) => x.streamId === c.streamId);
        if (!r) throw new Error(`no review trace of ${c.streamId}`);
        expect(c.units).toBe('m/s');
        expect(c.bucket).toBe(r.bucket);
        expect(c.values).toHaveLength(r.raw.length);
        // The record section's values are rounded for display (server/dsp/display-precision.ts:
        // 4 significant digits at the trace's peak, so each value within 0.05 % of the peak, below a
        // pixel), so they match the engine's chain to that tolerance, not to the last digit; the peak
        // itself keeps its 4 digits.
        const peak = Math.max(...r.raw.map(Math.abs));
        c.values.forEach((v, i) => expect(Math.abs(v - (r.raw[i] as number))).toBeLessThanOrEqual(peak * DISPLAY_TOLERANCE * (1 + 1e-9)));
        expect(Math.abs(Math.max(...c.values.map(Math.abs)) - peak)).toBeLessThanOrEqual(peak * 5e-4);
        expect(DISPLAY_TOLERANCE).toBe(5e-4);
        expect(c.values.every((v) => Number(v.toPrecision(4)) === v)).toBe(true);
        // Times: the first sample's instant plus the offset of each point (both screens on one clock).
        const start = Date.parse(c.startTime);
        expect(Math.abs(start + (c.times.at(-1) ?? 0) * 1000 - (Date.parse(r.startTime) + (r.times.at(-1) ?? 0) * 1000))).toBeLessThanOrEqual(1);
      }
    }
  });

  it('a group the picks cannot locate (three stations at one place) becomes an event refused with why, and the list still answers', async () => {
    const db = ctx.database.db;
    // createItem's stations share one position: the epicentre is unconstrained (test input).
    const windowStart = new Date(Date.UTC(2026, 2, 9, 7, 0, 0));
    const ids: number[] = [];
    for (const code of ['GZ01', 'GZ02', 'GZ03']) ids.push(await createItem(db, { station: code, withSamples: true, burstAtS: 50, durationS: 120, windowStart, score: 5 }));
    await onItemsCreated({ db }, ids);
    await syncEventsFromGroups({ db });
    const list = eventListSchema.parse((await request(app).get('/api/events').set('Cookie', ana.cookie).expect(200)).body);
    const ev = list.events.find((e) => e.memberItemIds.some((id) => ids.includes(id)));
    if (!ev) throw new Error('no event built from the co-located group');
    const d = eventDetailSchema.parse((await request(app).get(`/api/events/${ev.id}`).set('Cookie', ana.cookie).expect(200)).body);
    expect(d.origin).toBeNull();
    expect(d.event.locationRefusal).toMatch(/do not constrain the epicentre/);
  });
});
