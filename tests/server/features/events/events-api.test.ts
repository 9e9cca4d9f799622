import { and, eq } from 'drizzle-orm';
import type { Express } from 'express';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp } from '@server/app';
import { appJobs } from '@server/jobs/app-jobs';
import { startScheduler } from '@server/jobs/scheduler';
import { changeLog } from '@server/db/schema/change-log';
import { eventOrigins, eventPicks } from '@server/db/schema/events';
import { stations } from '@server/db/schema/stations';
import { onItemsCreated } from '@server/features/events/candidate-events';
import { formatIsoTimeUs } from '@server/formats/iso-time';
import { greatCircleDistanceKm } from '@server/seismo/geodesy';
import type { TrueHypocentre } from '@tests/server/seismo/synthetic';
import { S_FREQUENCY_HZ, sVelocityMS, type SyntheticStation } from '@tests/server/seismo/synthetic-waveforms';
import { fixtureModel, seedSyntheticWindows } from '@tests/setup/event-fixtures';
import { createTestContext, type TestContext } from '@tests/setup/test-app';
import { createPerson, type TestPerson } from '@tests/setup/queue-fixtures';

const origin = 'http://127.0.0.1';
const model = fixtureModel;
const codes = ['EVA1', 'EVA2', 'EVA3', 'EVA4', 'EVA5'];
const centre = { latitudeDeg: 46.25, longitudeDeg: 11.08 };
const placements: ReadonlyArray<readonly [number, number]> = [[20, 10], [95, 18], [170, 14], [240, 22], [310, 16]];
const truth: TrueHypocentre = { latitudeDeg: 46.262, longitudeDeg: 11.07, depthKm: 6, timeS: Date.parse('2026-03-10T04:12:33.250Z') / 1000 };

/**
 * Expected station ML from outside the code (as tests/server/cli/locate.test.ts): Wood-Anderson
 * magnification |H| = Gω²/√((ω₀² − ω²)² + (2hω₀ω)²), T₀ 0.8 s, h 0.7, G 2080 (Uhrhammer & Collins
 * 1990) on the 2 Hz displacement v/ω; ML = log10 A + 1.110 log10(r/100) + 0.00189 (r − 100) + 3.0
 * (Hutton & Boore 1987).
 */
function expectedMl(r: number): number {
  const w = 2 * Math.PI * S_FREQUENCY_HZ;
  const w0 = (2 * Math.PI) / 0.8;
  const a = ((2080 * w * w) / Math.hypot(w0 * w0 - w * w, 2 * 0.7 * w0 * w)) * (sVelocityMS(r) / w) * 1000;
  return Math.log10(a) + 1.11 * Math.log10(r / 100) + 0.00189 * (r - 100) + 3.0;
}

describe('events API (real MariaDB, supertest)', () => {
  let ctx: TestContext;
  let app: Express;
  let ana: TestPerson;
  let sue: TestPerson;
  let op: TestPerson;
  let opFar: TestPerson;
  const itemIds: number[] = [];
  const stationIds: number[] = [];
  let eventId = 0;
  let synth: SyntheticStation[] = [];

  const send = (method: 'post' | 'put' | 'delete', p: TestPerson | null, url: string, body?: object) => {
    const r = request(app)[method](url).set('Origin', origin).set('Host', '127.0.0.1');
    const withBody = body ? r.send(body) : r;
    return p ? withBody.set('Cookie', p.cookie) : withBody;
  };
  const get = (p: TestPerson | null, url: string) => (p ? request(app).get(url).set('Cookie', p.cookie) : request(app).get(url));
  const detail = async () => (await get(ana, `/api/events/${eventId}`).expect(200)).body;

  beforeAll(async () => {
    ctx = await createTestContext();
    app = createApp(ctx, { serveClient: false });
    const db = ctx.database.db;
    // Stations on a ring with a broadband response in the registry, one window per station stored as
    // ingest stores it (tests/setup/event-fixtures.ts).
    const seeded = await seedSyntheticWindows(db, { codes, placements, centre, truth, stationName: 'Event test' });
    stationIds.push(...seeded.stationIds);
    itemIds.push(...seeded.itemIds);
    synth = seeded.synth;
    const now = new Date();
    ana = await createPerson(db, { roles: ['analyst'] });
    sue = await createPerson(db, { roles: ['supervisor'] });
    op = await createPerson(db, { roles: ['operator'], stationIds: [stationIds[0] as number] });
    const far = await db.insert(stations).values({ network: 'XX', code: 'EVZ9', name: 'Far away', latitude: 40, longitude: 5, elevationM: 0, createdAt: now, updatedAt: now });
    opFar = await createPerson(db, { roles: ['operator'], stationIds: [far[0].insertId] });
    // The windows form one candidate event (grouping by time and distance); the event is built from
    // it by the scheduler's catch-up job or the ingest, never by a read (the first test).
    await onItemsCreated({ db }, itemIds);
    // The network's model, as a supervisor sets it.
    await send('put', sue, '/api/events/velocity-models/XX', model).expect(200);
  }, 120_000);
  afterAll(async () => {
    await ctx?.close();
  });

  it('401 without a session, 403 for an admin-less role without the right, 400 naming the bad field', async () => {
    await get(null, '/api/events').expect(401);
    await send('put', ana, '/api/events/velocity-models/XX', model).expect(403);
    const bad = await get(ana, '/api/events?limit=0').expect(400);
    expect(bad.body.error.message).toMatch(/^limit: /);
  });

  it('builds the event from the candidate group in the catch-up job (the list, a read, builds nothing): automatic picks, located near the truth, ML from Wood-Anderson + Hutton & Boore', async () => {
    expect((await get(ana, '/api/events').expect(200)).body.events).toEqual([]);
    const scheduler = startScheduler(appJobs(ctx), ctx.logger);
    try {
      await scheduler.runNow('arrivals catch-up');
    } finally {
      await scheduler.stop();
    }
    const list = await get(ana, '/api/events').expect(200);
    expect(list.body.caution).toMatch(/triage aids/);
    expect(list.body.events).toHaveLength(1);
    const row = list.body.events[0];
    eventId = row.id;
    expect(row.stationCount).toBe(5);
    expect(row.evaluationMode).toBe('automatic');
    expect(greatCircleDistanceKm({ latitudeDeg: row.latitude, longitudeDeg: row.longitude }, truth)).toBeLessThan(1);
    const d = await detail();
    expect(d.picks.analyst).toEqual([]);
    expect(d.picks.automatic.length).toBe(10);
    expect(d.picks.automatic.every((p: { author: string | null }) => p.author === null)).toBe(true);
    expect(d.picks.usedForLocation).toBe('automatic');
    expect(d.origin.velocityModel).toEqual({ name: 'Kestrel test half-space', isDefault: false });
    expect(d.origin.uncertainty.ellipse.semiMajorKm).toBeGreaterThan(0);
    expect(d.arrivals).toHaveLength(10);
    for (const sm of d.stationMagnitudes) {
      const st = synth.find((s) => sm.station === `XX.${s.code}`);
      expect(Math.abs(sm.value - expectedMl(st?.hypocentralKm ?? NaN))).toBeLessThan(0.05);
    }
    expect(d.magnitude.stationCount).toBe(5);
    const mls = synth.map((s) => expectedMl(s.hypocentralKm)).sort((a, b) => a - b);
    expect(Math.abs(d.magnitude.value - (mls[2] as number))).toBeLessThan(0.05);
  });

  it('operators see the event only through one of their stations', async () => {
    expect((await get(op, '/api/events').expect(200)).body.events).toHaveLength(1);
    await get(op, `/api/events/${eventId}`).expect(200);
    expect((await get(opFar, '/api/events').expect(200)).body.events).toHaveLength(0);
    await get(opFar, `/api/events/${eventId}`).expect(404);
    await send('post', op, `/api/events/${eventId}/picks/accept`, { eventVersion: 1 }).expect(403);
  });

  it("accepting the suggestions makes them the analyst's picks; moving one relocates in one step and pushes a live update", async () => {
    let d = await detail();
    const before = (await ctx.database.db.select().from(changeLog).where(and(eq(changeLog.resource, 'event'), eq(changeLog.resourceId, eventId)))).length;
    d = (await send('post', ana, `/api/events/${eventId}/picks/accept`, { eventVersion: d.event.version }).expect(200)).body;
    expect(d.picks.analyst).toHaveLength(10);
    expect(d.picks.analyst.every((p: { author: string }) => p.author === ana.displayName)).toBe(true);
    expect(d.picks.usedForLocation).toBe('manual');
    expect(d.event.evaluationMode).toBe('manual');
    const stale = await send('post', ana, `/api/events/${eventId}/relocate`, { eventVersion: d.event.version - 1 }).expect(409);
    expect(stale.body.error.code).toBe('conflict');
    // Replace the first station's P by the exact synthetic onset + 0.8 s: the origin must move.
    const p = d.picks.analyst.find((x: { streamId: string; phase: string }) => x.streamId === 'XX.EVA1.00.HHZ' && x.phase === 'P');
    const st = synth[0];
    if (!p || !st) throw new Error('no P pick at EVA1');
    const moved = (await send('put', ana, `/api/events/${eventId}/picks/${p.id}`, { phase: 'P', time: formatIsoTimeUs(st.pTimeUs + 800_000), uncertaintyS: 0.05, onset: 'impulsive', polarity: 'positive', eventVersion: d.event.version }).expect(200)).body;
    expect(moved.origin.id).not.toBe(d.origin.id);
    expect(Math.abs(moved.arrivals.find((a: { streamId: string; phase: string }) => a.streamId === 'XX.EVA1.00.HHZ' && a.phase === 'P').residualS)).toBeGreaterThan(0.05);
    expect(moved.origins.filter((o: { preferred: boolean }) => o.preferred)).toHaveLength(1);
    const after = await ctx.database.db.select().from(changeLog).where(and(eq(changeLog.resource, 'event'), eq(changeLog.resourceId, eventId)));
    expect(after.length).toBe(before + 2);
    expect(after.at(-1)?.audience).toMatchObject({ action: 'event.view', stationIds: expect.arrayContaining(stationIds) });
  });

  it("refuses a pick on a station that is not a member (422), a duplicate analyst's pick (409), a bad body (400)", async () => {
    const d = await detail();
    const foreign = await send('post', ana, `/api/events/${eventId}/picks`, { streamId: 'XX.EVZ9.00.HHZ', phase: 'P', time: '2026-03-10T04:12:35.000Z', uncertaintyS: 0.1, eventVersion: d.event.version }).expect(422);
    expect(foreign.body.error.message).toMatch(/XX\.EVZ9 has no window in this event/);
    const dup = await send('post', ana, `/api/events/${eventId}/picks`, { streamId: 'XX.EVA2.00.HHZ', phase: 'P', time: formatIsoTimeUs(synth[1]?.pTimeUs ?? 0), uncertaintyS: 0.1, eventVersion: d.event.version }).expect(409);
    expect(dup.body.error.message).toMatch(/already has an analyst's P pick/);
    const bad = await send('post', ana, `/api/events/${eventId}/picks`, { streamId: 'XX.EVA2.00.HHZ', phase: 'Pn', time: 'now', uncertaintyS: 0.1, eventVersion: d.event.version }).expect(400);
    expect(bad.body.error.message).toMatch(/^phase: /);
  });

  it('deleting a pick relocates without it; picks stay apart from the suggestions', async () => {
    let d = await detail();
    const s = d.picks.analyst.find((x: { streamId: string; phase: string }) => x.streamId.startsWith('XX.EVA1.') && x.phase === 'P');
    d = (await send('delete', ana, `/api/events/${eventId}/picks/${s.id}?eventVersion=${d.event.version}`).expect(200)).body;
    expect(d.picks.analyst).toHaveLength(9);
    expect(d.picks.automatic).toHaveLength(10);
    expect(d.origin.usedPhases).toBe(9);
    const rows = await ctx.database.db.select().from(eventPicks).where(eq(eventPicks.eventId, eventId));
    expect(rows.filter((r) => r.evaluationMode === 'manual').every((r) => r.authorUserId === ana.id)).toBe(true);
    expect(rows.filter((r) => r.evaluationMode === 'automatic').every((r) => r.authorUserId === null)).toBe(true);
  });

  it("an analyst's amplitude ten times the reading on both horizontals raises that station's ML by 1.0", async () => {
    let d = await detail();
    const sm = d.stationMagnitudes.find((x: { station: string }) => x.station === 'XX.EVA3');
    for (const cha of ['HHN', 'HHE']) {
      const a = d.amplitudes.find((x: { streamId: string }) => x.streamId === `XX.EVA3.00.${cha}`);
      d = (await send('put', ana, `/api/events/${eventId}/amplitudes`, { streamId: a.streamId, amplitudeMm: a.amplitudeMm * 10, periodS: a.periodS, time: a.time, eventVersion: d.event.version }).expect(200)).body;
    }
    const sm2 = d.stationMagnitudes.find((x: { station: string }) => x.station === 'XX.EVA3');
    // The origin is the same (no pick changed), so the distance term is unchanged: +log10(10).
    expect(sm2.value - sm.value).toBeCloseTo(1, 6);
    expect(d.amplitudes.filter((x: { evaluationMode: string }) => x.evaluationMode === 'manual')).toHaveLength(2);
    const z = await send('put', ana, `/api/events/${eventId}/amplitudes`, { streamId: 'XX.EVA3.00.HHZ', amplitudeMm: 1, time: d.amplitudes[0].time, eventVersion: d.event.version }).expect(422);
    expect(z.body.error.message).toMatch(/horizontal channels only/);
    d = (await send('delete', ana, `/api/events/${eventId}/amplitudes/XX.EVA3.00.HHN?eventVersion=${d.event.version}`).expect(200)).body;
    expect(d.amplitudes.filter((x: { evaluationMode: string }) => x.evaluationMode === 'manual')).toHaveLength(1);
  });

  it('removing a member relocates without its station; adding it back restores it', async () => {
    let d = await detail();
    const itemId = itemIds[4] as number;
    d = (await send('delete', ana, `/api/events/${eventId}/members/${itemId}?eventVersion=${d.event.version}`).expect(200)).body;
    expect(d.event.stationCount).toBe(4);
    expect(d.arrivals.some((a: { streamId: string }) => a.streamId.startsWith('XX.EVA5.'))).toBe(false);
    expect(d.members.find((m: { itemId: number }) => m.itemId === itemId).removed).toBe(true);
    d = (await send('post', ana, `/api/events/${eventId}/members`, { itemId, eventVersion: d.event.version }).expect(200)).body;
    expect(d.event.stationCount).toBe(5);
    expect(d.arrivals.some((a: { streamId: string }) => a.streamId.startsWith('XX.EVA5.'))).toBe(true);
    await send('post', ana, `/api/events/${eventId}/members`, { itemId, eventVersion: d.event.version }).expect(409);
  });

  it('relocates with the depth fixed on request and says so; labels the event', async () => {
    let d = await detail();
    d = (await send('post', ana, `/api/events/${eventId}/relocate`, { fixedDepthKm: 3, eventVersion: d.event.version }).expect(200)).body;
    expect(d.origin.depthFixed).toBe(true);
    expect(d.origin.depthKm).toBe(3);
    await send('put', ana, `/api/events/${eventId}/label`, { eventType: 'earthquake', typeCertainty: 'known', evaluationStatus: 'confirmed', eventVersion: d.event.version }).expect(403);
    d = (await send('put', ana, `/api/events/${eventId}/label`, { eventType: 'earthquake', typeCertainty: 'known', eventVersion: d.event.version }).expect(200)).body;
    d = (await send('put', sue, `/api/events/${eventId}/label`, { eventType: 'earthquake', typeCertainty: 'known', evaluationStatus: 'reviewed', eventVersion: d.event.version }).expect(200)).body;
    expect(d.event).toMatchObject({ eventType: 'earthquake', typeCertainty: 'known', evaluationStatus: 'reviewed' });
    const origins = await ctx.database.db.select().from(eventOrigins).where(eq(eventOrigins.eventId, eventId));
    expect(origins.length).toBeGreaterThan(5);
  });

  it('the catalogue export lists the reviewed event once, with its origin and ML (QuakeML and CSV)', async () => {
    const q = 'from=2026-03-10T00:00:00.000Z&to=2026-03-11T00:00:00.000Z&status=reviewed';
    const xml = (await get(sue, `/api/supervisor/export?${q}&format=quakeml`).expect(200)).text;
    expect(xml.match(/<event publicID=/g)).toHaveLength(1);
    expect(xml).toContain(`<event publicID="smi:seisift.local/event/event/${eventId}">`);
    expect(xml).toMatch(/<origin publicID="smi:seisift\.local\/origin\/\d+-\d+">/);
    expect(xml.match(/<arrival /g)?.length).toBe(9);
    expect(xml).toMatch(/<magnitude publicID=/);
    const d = await detail();
    const csv = (await get(sue, `/api/supervisor/export?${q}&format=csv`).expect(200)).text.trim().split('\r\n');
    expect(csv).toHaveLength(2);
    const header = (csv[0] ?? '').split(',');
    const row = (csv[1] ?? '').split(',');
    expect(Number(row[header.indexOf('ml')])).toBeCloseTo(d.magnitude.value, 2);
    expect(Number(row[header.indexOf('depth_km')])).toBe(3);
    expect(row[header.indexOf('depth_fixed')]).toBe('true');
  });

  it('velocity model: the default is labelled as one; a supervisor edits it; bad layers are refused naming the layer', async () => {
    const other = (await get(ana, '/api/events/velocity-models/ZZ').expect(200)).body;
    expect(other.isDefault).toBe(true);
    expect(other.note).toMatch(/placeholder/);
    const mine = (await get(ana, '/api/events/velocity-models/XX').expect(200)).body;
    expect(mine).toMatchObject({ isDefault: false, name: 'Kestrel test half-space', version: 1 });
    const bad = await send('put', sue, '/api/events/velocity-models/XX', { name: 'bad', layers: [{ topKm: 0, vpKmS: 6, vsKmS: 3.5 }, { topKm: 0, vpKmS: 7, vsKmS: 4 }], version: 1 }).expect(400);
    expect(bad.body.error.message).toMatch(/layer 2: top 0 km is not below/);
    await send('put', sue, '/api/events/velocity-models/XX', { ...model, version: 7 }).expect(409);
    const saved = (await send('put', sue, '/api/events/velocity-models/XX', { name: 'Kestrel two layers', layers: [{ topKm: 0, vpKmS: 6, vsKmS: 3.46 }, { topKm: 30, vpKmS: 8, vsKmS: 4.62 }], stationCorrections: { 'XX.EVA1': 0.1 }, version: 1 }).expect(200)).body;
    expect(saved).toMatchObject({ version: 2, stationCorrections: { 'XX.EVA1': 0.1 } });
  });
});
