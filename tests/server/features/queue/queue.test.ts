import { and, eq } from 'drizzle-orm';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Express } from 'express';
import { queuePageSchema, queueQuerySchema, queueRowMatches, queueRowSchema, queueItemDetailSchema, tracesResponseSchema, type QueueRow } from '@shared/schemas/queue';
import { createApp } from '@server/app';
import { auditLog } from '@server/db/schema/audit-log';
import { changeLog } from '@server/db/schema/change-log';
import { queueItems } from '@server/db/schema/queue-items';
import { defaultProcessingProfile } from '@shared/schemas/processing-profile';
import { preprocessTrace } from '@server/dsp/preprocess';
import { DISPLAY_TOLERANCE, roundCurveForDisplay } from '@server/dsp/display-precision';
import { createTestContext, type TestContext } from '@tests/setup/test-app';
import { createItem, createPerson, ensureStation, syntheticStreams, type TestPerson } from '@tests/setup/queue-fixtures';

const origin = 'http://127.0.0.1';

describe('queue API (real MariaDB, supertest)', () => {
  let ctx: TestContext;
  let app: Express;
  let ana: TestPerson;
  let ben: TestPerson;
  let operator: TestPerson;
  let admin: TestPerson;

  const get = (p: TestPerson | null, url: string) => {
    const r = request(app).get(url);
    return p ? r.set('Cookie', p.cookie) : r;
  };
  const post = (p: TestPerson | null, url: string, body: object) => {
    const r = request(app).post(url).set('Origin', origin).set('Host', '127.0.0.1').send(body);
    return p ? r.set('Cookie', p.cookie) : r;
  };

  beforeAll(async () => {
    ctx = await createTestContext();
    app = createApp(ctx, { serveClient: false });
    const kv02 = await ensureStation(ctx.database.db, 'KV02');
    await ensureStation(ctx.database.db, 'KV01');
    ana = await createPerson(ctx.database.db, { roles: ['analyst'], displayName: 'Ana Kestrel' });
    ben = await createPerson(ctx.database.db, { roles: ['analyst'], displayName: 'Ben Valley' });
    operator = await createPerson(ctx.database.db, { roles: ['operator'], stationIds: [kv02] });
    admin = await createPerson(ctx.database.db, { roles: ['admin'] });
  });
  afterAll(async () => {
    await ctx.close();
  });

  describe('access', () => {
    it('401 without a session, on reads and writes', async () => {
      const id = await createItem(ctx.database.db);
      expect((await get(null, '/api/queue')).status).toBe(401);
      expect((await get(null, `/api/queue/items/${id}`)).status).toBe(401);
      const r = await post(null, `/api/queue/items/${id}/claim`, { version: 1 });
      expect(r.status).toBe(401);
      expect(r.body.error.code).toBe('unauthenticated');
    });

    it('403 for roles without the queue (admin) and for claims by an operator', async () => {
      const id = await createItem(ctx.database.db, { station: 'KV02' });
      const list = await get(admin, '/api/queue');
      expect(list.status).toBe(403);
      expect(list.body.error.code).toBe('forbidden');
      const claim = await post(operator, `/api/queue/items/${id}/claim`, { version: 1 });
      expect(claim.status).toBe(403);
      expect(claim.body.error.message).toMatch(/claim queue items/);
    });

    it('an operator sees only the items of their own stations (others are 404)', async () => {
      const mine = await createItem(ctx.database.db, { station: 'KV02' });
      const other = await createItem(ctx.database.db, { station: 'KV01' });
      const list = queuePageSchema.parse((await get(operator, '/api/queue?limit=500')).body);
      const ids = list.items.map((i) => i.id);
      expect(ids).toContain(mine);
      expect(ids).not.toContain(other);
      expect(list.items.every((i) => i.station === 'XX.KV02')).toBe(true);
      expect((await get(operator, `/api/queue/items/${other}`)).status).toBe(404);
      expect((await get(operator, `/api/queue/items/${mine}`)).status).toBe(200);
    });

    it('400 naming the field for a bad query, id or body', async () => {
      const bad = await get(ana, '/api/queue?state=lost');
      expect(bad.status).toBe(400);
      expect(bad.body.error.code).toBe('validation_failed');
      expect(bad.body.error.message).toMatch(/^state\.0: /);
      const range = await get(ana, '/api/queue?scoreMin=5&scoreMax=1');
      expect(range.status).toBe(400);
      expect(range.body.error.message).toMatch(/^scoreMin: /);
      expect((await get(ana, '/api/queue?cursor=nonsense')).body.error.message).toMatch(/^cursor: /);
      expect((await get(ana, '/api/queue/items/abc')).body.error.message).toMatch(/^id: /);
      const id = await createItem(ctx.database.db);
      const body = await post(ana, `/api/queue/items/${id}/claim`, {});
      expect(body.status).toBe(400);
      expect(body.body.error.message).toMatch(/^version: /);
      const label = await post(ana, `/api/queue/items/${id}/label`, { version: 1, label: { eventType: 'big one' } });
      expect(label.status).toBe(400);
      expect(label.body.error.message).toMatch(/^label\.eventType: /);
      expect((await post(ana, '/api/queue/items/999999/claim', { version: 1 })).status).toBe(404);
    });
  });

  describe('life cycle', () => {
    it('claim → label: states, versions, one audit row and one change per step', async () => {
      const id = await createItem(ctx.database.db);
      const claimed = queueRowSchema.parse((await post(ana, `/api/queue/items/${id}/claim`, { version: 1 }).expect(200)).body);
      expect(claimed).toMatchObject({ state: 'in review', version: 2, claimedBy: { id: ana.id, displayName: 'Ana Kestrel' } });
      const label = {
        eventType: 'earthquake',
        certainty: 'known',
        distanceClass: 'local',
        picks: [{ phase: 'P', time: '2026-03-14T09:26:53.589123Z', onset: 'impulsive', polarity: 'positive', streamId: 'XX.KV01.00.HHZ' }],
        note: 'clear P on Z',
      };
      const done = queueRowSchema.parse((await post(ana, `/api/queue/items/${id}/label`, { version: 2, label }).expect(200)).body);
      expect(done).toMatchObject({ state: 'labelled', version: 3, labelType: 'earthquake', updatedBy: { id: ana.id } });
      const detail = queueItemDetailSchema.parse((await get(ana, `/api/queue/items/${id}`).expect(200)).body);
      expect(detail.label).toMatchObject({ kind: 'event', eventType: 'earthquake', picks: [{ phase: 'P', time: '2026-03-14T09:26:53.589123Z' }] });
      const audits = await ctx.database.db.select().from(auditLog).where(and(eq(auditLog.targetType, 'queue_item'), eq(auditLog.targetId, String(id))));
      expect(audits.map((a) => a.action)).toEqual(['queue.claimed', 'queue.labelled']);
      expect(audits.every((a) => a.actorUserId === ana.id)).toBe(true);
      const changes = await ctx.database.db.select().from(changeLog).where(eq(changeLog.resourceId, id));
      expect(changes.map((c) => [c.kind, c.version])).toEqual([
        ['created', 1],
        ['updated', 2],
        ['updated', 3],
      ]);
    });

    it('release gives the item back; dismiss and escalate need the claim and keep their reasons', async () => {
      const a = await createItem(ctx.database.db);
      await post(ana, `/api/queue/items/${a}/claim`, { version: 1 }).expect(200);
      const released = queueRowSchema.parse((await post(ana, `/api/queue/items/${a}/release`, { version: 2 }).expect(200)).body);
      expect(released).toMatchObject({ state: 'new', claimedBy: null, version: 3 });

      const b = await createItem(ctx.database.db);
      const notClaimed = await post(ana, `/api/queue/items/${b}/dismiss`, { version: 1, noiseReason: 'traffic' });
      expect(notClaimed.status).toBe(409);
      expect(notClaimed.body.error.message).toMatch(/is new; you can dismiss it only when it is in review/);
      await post(ana, `/api/queue/items/${b}/claim`, { version: 1 }).expect(200);
      const dismissed = await post(ana, `/api/queue/items/${b}/dismiss`, { version: 2, noiseReason: 'traffic', note: 'lorry' }).expect(200);
      expect(dismissed.body).toMatchObject({ state: 'dismissed', labelType: 'noise' });

      const c = await createItem(ctx.database.db);
      await post(ana, `/api/queue/items/${c}/claim`, { version: 1 }).expect(200);
      const noReason = await post(ana, `/api/queue/items/${c}/escalate`, { version: 2, reason: '' });
      expect(noReason.status).toBe(400);
      expect(noReason.body.error.message).toMatch(/^reason: /);
      const esc = await post(ana, `/api/queue/items/${c}/escalate`, { version: 2, reason: 'felt reports near KV03?' }).expect(200);
      expect(esc.body).toMatchObject({ state: 'escalated', claimedBy: { id: ana.id } });
      const detail = queueItemDetailSchema.parse((await get(ana, `/api/queue/items/${c}`)).body);
      expect(detail.label).toEqual({ kind: 'escalation', reason: 'felt reports near KV03?' });
    });

    it('409 on a stale version names who changed the item and how; nothing is overwritten', async () => {
      const id = await createItem(ctx.database.db);
      await post(ben, `/api/queue/items/${id}/claim`, { version: 1 }).expect(200);
      const stale = await post(ana, `/api/queue/items/${id}/claim`, { version: 1 });
      expect(stale.status).toBe(409);
      expect(stale.body.error.code).toBe('conflict');
      expect(stale.body.error.message).toMatch(/changed since you loaded it \(version 1, now 2\): Ben Valley claimed it at \d{4}-\d\d-\d\dT[\d:.]+Z; it is now in review \(claimed by Ben Valley\)/);
      expect(stale.body.error.details).toMatchObject({ state: 'in review', version: 2, claimedBy: { displayName: 'Ben Valley' }, lastChange: { action: 'queue.claimed' } });
      // Ana cannot label Ben's claim even with the current version.
      const foreign = await post(ana, `/api/queue/items/${id}/label`, { version: 2, label: { eventType: 'earthquake' } });
      expect(foreign.status).toBe(409);
      expect(foreign.body.error.message).toMatch(/claimed by Ben Valley, not you/);
      const [row] = await ctx.database.db.select().from(queueItems).where(eq(queueItems.id, id));
      expect(row).toMatchObject({ state: 'in review', version: 2, claimedByUserId: ben.id, label: null });
    });

    it('twenty concurrent claims of one item: exactly one wins, nineteen get 409', async () => {
      const id = await createItem(ctx.database.db);
      const people = await Promise.all(Array.from({ length: 20 }, (_, i) => createPerson(ctx.database.db, { roles: ['analyst'], displayName: `Analyst ${i + 1}` })));
      const results = await Promise.all(people.map((p) => post(p, `/api/queue/items/${id}/claim`, { version: 1 })));
      const statuses = results.map((r) => r.status);
      expect(statuses.filter((s) => s === 200)).toHaveLength(1);
      expect(statuses.filter((s) => s === 409)).toHaveLength(19);
      const winner = people[statuses.indexOf(200)];
      const [row] = await ctx.database.db.select().from(queueItems).where(eq(queueItems.id, id));
      expect(row).toMatchObject({ version: 2, claimedByUserId: winner?.id, state: 'in review' });
      const audits = await ctx.database.db.select().from(auditLog).where(and(eq(auditLog.targetType, 'queue_item'), eq(auditLog.targetId, String(id))));
      expect(audits).toHaveLength(1);
      const changes = await ctx.database.db.select().from(changeLog).where(eq(changeLog.resourceId, id));
      expect(changes).toHaveLength(2);
      for (const r of results.filter((x) => x.status === 409)) expect(r.body.error.message).toContain(winner?.displayName ?? '?');
    });
  });

  describe('list: filters, order, keyset pages, counts', () => {
    let ids: number[];
    let db: TestContext['database']['db'];
    beforeAll(async () => {
      db = ctx.database.db;
      // A separate set on stations KV05/KV06 so earlier tests' items do not interfere.
      const base = Date.parse('2026-03-14T00:00:00.000Z');
      ids = [];
      for (let i = 0; i < 130; i++) {
        ids.push(
          await createItem(db, {
            station: i % 2 === 0 ? 'KV05' : 'KV06',
            score: Math.round(((i * 37) % 101) / 10 - 2) + (i % 3) * 0.25,
            flag: i % 5 === 0 ? 'likely event' : i % 5 === 1 ? 'likely noise' : 'needs eyes',
            state: i % 10 === 9 ? 'labelled' : 'new',
            labelType: i % 10 === 9 ? (i % 20 === 19 ? 'quarry blast' : 'earthquake') : null,
            createdAt: new Date(base + (i % 7) * 60_000 + Math.floor(i / 7) * 1000),
            windowStart: new Date(base + i * 60_000),
          }),
        );
      }
    });
    const all = async (p: TestPerson, qs: string, limit: number, start: string | null = null) => {
      const rows: QueueRow[] = [];
      let cursor: string | null = start;
      let pages = 0;
      do {
        const res = await get(p, `/api/queue?${qs}&limit=${limit}${cursor ? `&cursor=${encodeURIComponent(cursor)}` : ''}`);
        if (res.status !== 200) throw new Error(`${qs}: ${res.status} ${JSON.stringify(res.body)}`);
        const page = queuePageSchema.parse(res.body);
        rows.push(...page.items);
        cursor = page.nextCursor;
        pages++;
      } while (cursor && pages < 100);
      return rows;
    };

    it('score order: every matching row once, highest first, id breaking ties', async () => {
      const rows = await all(ana, 'station=KV05,XX.KV06&sort=score', 17);
      expect(rows).toHaveLength(130);
      expect(new Set(rows.map((r) => r.id)).size).toBe(130);
      for (let i = 1; i < rows.length; i++) {
        const a = rows[i - 1] as QueueRow;
        const b = rows[i] as QueueRow;
        expect(a.score > b.score || (a.score === b.score && a.id > b.id)).toBe(true);
      }
    });

    it('age order: oldest arrival first; a row added while paging does not shift later pages', async () => {
      const first = queuePageSchema.parse((await get(ana, '/api/queue?station=KV05,KV06&sort=age&limit=20').expect(200)).body);
      // A new arrival older than everything would land before the cursor: it must not repeat rows.
      await createItem(db, { station: 'KV05', createdAt: new Date('2026-03-13T00:00:00.000Z') });
      const rest = await all(ana, 'station=KV05,KV06&sort=age', 50, first.nextCursor);
      const rows = [...first.items, ...rest];
      expect(rows).toHaveLength(130);
      expect(new Set(rows.map((r) => r.id)).size).toBe(130);
      for (let i = 1; i < rows.length; i++) {
        const a = rows[i - 1] as QueueRow;
        const b = rows[i] as QueueRow;
        expect(a.createdAt < b.createdAt || (a.createdAt === b.createdAt && a.id < b.id)).toBe(true);
      }
      const cross = await get(ana, `/api/queue?sort=score&cursor=${encodeURIComponent(first.nextCursor ?? '')}`);
      expect(cross.status).toBe(400);
      expect(cross.body.error.message).toMatch(/cursor: made for sort=age/);
    });

    it('filters: state, station, flag, score range, time range and label', async () => {
      const check = async (qs: string, expected: (i: number) => boolean) => {
        const rows = await all(ana, qs.includes('station=') ? qs : `station=KV05,KV06&${qs}`, 500);
        const want = ids.filter((_, i) => expected(i)).sort((a, b) => a - b);
        expect(rows.map((r) => r.id).filter((id) => ids.includes(id)).sort((a, b) => a - b)).toEqual(want);
      };
      const score = (i: number) => Math.round(((i * 37) % 101) / 10 - 2) + (i % 3) * 0.25;
      await check('state=labelled', (i) => i % 10 === 9);
      await check('station=KV06', (i) => i % 2 === 1);
      await check('flag=likely event,likely noise', (i) => i % 5 <= 1);
      await check('scoreMin=2&scoreMax=5.25', (i) => score(i) >= 2 && score(i) <= 5.25);
      await check('from=2026-03-14T00:30:00.000Z&to=2026-03-14T01:00:00.000Z', (i) => i >= 30 && i < 60);
      await check('label=quarry blast', (i) => i % 20 === 19);
      await check('label=none&state=new', (i) => i % 10 !== 9);
      await check('label=earthquake&flag=likely event', (i) => i % 10 === 9 && i % 20 !== 19 && i % 5 === 0);
    });

    it('the client-side matcher used for live rows agrees with the server on every filter', async () => {
      // No state parameter: every state.
      const every = await all(ana, 'station=KV05,KV06', 500);
      for (const qs of ['state=labelled', 'station=XX.KV06', 'flag=likely noise', 'scoreMin=1&scoreMax=4', 'from=2026-03-14T01:00:00.000Z', 'label=none', 'label=quarry blast,earthquake']) {
        const server = (await all(ana, `station=KV05,KV06&${qs}`.replace('station=KV05,KV06&station=', 'station='), 500)).map((r) => r.id).sort((a, b) => a - b);
        const q = queueQuerySchema.parse(Object.fromEntries(new URLSearchParams(qs)));
        const client = every.filter((r) => queueRowMatches(r, q)).map((r) => r.id).sort((a, b) => a - b);
        expect(client, qs).toEqual(server);
      }
    });

    it('counts per state under the other filters, and a total for the selected states', async () => {
      const page = queuePageSchema.parse((await get(ana, '/api/queue?station=KV06&state=labelled&limit=1').expect(200)).body);
      const kv06 = ids.filter((_, i) => i % 2 === 1);
      const labelled = ids.filter((_, i) => i % 2 === 1 && i % 10 === 9).length;
      expect(page.counts.labelled).toBe(labelled);
      expect(page.counts.new).toBe(kv06.length - labelled);
      expect(page.counts['in review']).toBe(0);
      expect(page.total).toBe(labelled);
      expect(page.items).toHaveLength(1);
    });
  });

  describe('item detail and traces', () => {
    it('detail carries the analysis and the channels; traces are decimated, full resolution on zoom', async () => {
      const id = await createItem(ctx.database.db, { station: 'KV03', withSamples: true, burstAtS: 50, durationS: 90 });
      const detail = queueItemDetailSchema.parse((await get(ana, `/api/queue/items/${id}`).expect(200)).body);
      expect(detail.channels.map((c) => c.streamId)).toEqual(['XX.KV03.00.HHE', 'XX.KV03.00.HHN', 'XX.KV03.00.HHZ']);
      expect(detail.claimIdleMinutes).toBe(15);
      const whole = tracesResponseSchema.parse((await get(ana, `/api/queue/items/${id}/traces?points=1000`).expect(200)).body);
      const z = whole.channels.find((c) => c.streamId.endsWith('HHZ'));
      expect(z).toBeDefined();
      if (!z) return;
      // 9000 samples into 1000 points: buckets of ceil(2·9000/1000) = 18 samples, at most 2 points each.
      expect(z.bucket).toBe(18);
      expect(z.raw.length).toBeLessThanOrEqual(1000);
      expect(z.times).toHaveLength(z.raw.length);
      expect(z.low).toHaveLength(z.raw.length);
      expect(z.staLta).toHaveLength(z.raw.length);
      // The pre-processed trace from the engine's own steps, for the decimation checks.
      const streams = syntheticStreams('KV03', Date.parse(detail.windowStart) * 1000, { burstAtS: 50, durationS: 90 });
      const pre = preprocessTrace(streams[0]?.samples ?? new Float64Array(), defaultProcessingProfile.preprocess.taperAlpha);
      // Min/max decimation keeps every bucket's extremes (hand-checkable): the global max and min
      // survive. The answer is rounded for drawing (tracesForDisplay, server/dsp/display-precision.ts:
      // 4 significant digits at the curve's peak, each value within DISPLAY_TOLERANCE = 0.05 % of the
      // peak) except the peak sample itself, which is exact: the larger extreme of the engine's
      // pre-processed trace (the reference) comes back to the last digit, the other within that tolerance.
      const prePeak = Math.max(Math.max(...pre), -Math.min(...pre));
      const exactExtreme = Math.max(...pre) >= -Math.min(...pre) ? [Math.max(...z.raw), Math.max(...pre)] : [Math.min(...z.raw), Math.min(...pre)];
      expect(exactExtreme[0]).toBe(exactExtreme[1]);
      expect(Math.abs(Math.max(...z.raw) - Math.max(...pre))).toBeLessThanOrEqual(prePeak * DISPLAY_TOLERANCE);
      expect(Math.abs(Math.min(...z.raw) - Math.min(...pre))).toBeLessThanOrEqual(prePeak * DISPLAY_TOLERANCE);
      // Triggers equal the ones the engine stored in the analysis (same samples, same profile).
      const analysis = detail.analysis as { channels: Array<{ id: string; staLta: { triggers: Array<{ on: number; off: number | null }> } }> };
      expect(z.triggers).toEqual(analysis.channels.find((c) => c.id.endsWith('HHZ'))?.staLta.triggers.map((t) => ({ on: t.on, off: t.off })));
      expect(z.triggers.length).toBeGreaterThan(0);
      // Zoom: 4 s at 100 Hz = 400 samples ≤ points/2 → every sample, equal to the engine's pre-processing.
      const zoom = tracesResponseSchema.parse((await get(ana, `/api/queue/items/${id}/traces?from=50&to=54&points=1000`).expect(200)).body);
      const zz = zoom.channels.find((c) => c.streamId.endsWith('HHZ'));
      expect(zz?.bucket).toBe(1);
      expect(zz?.raw).toHaveLength(400);
      // Every sample of the engine's pre-processing (the reference), as the display rounding writes it:
      // exactly `roundCurveForDisplay` of those samples, so each within 0.05 % of their peak.
      const span = Array.from(pre.subarray(5000, 5400));
      expect(zz?.raw).toEqual(roundCurveForDisplay(span));
      const spanPeak = Math.max(...span.map(Math.abs));
      zz?.raw.forEach((v, i) => expect(Math.abs(v - (span[i] as number))).toBeLessThanOrEqual(spanPeak * DISPLAY_TOLERANCE));
      // Times to the microsecond: the 5000th sample at 100 Hz is 50 s exactly.
      expect(zz?.times[0]).toBe(50);
      const outside = await get(ana, `/api/queue/items/${id}/traces?from=500&to=600`);
      expect(outside.status).toBe(400);
      expect(outside.body.error.message).toMatch(/^from: 500 s is outside the window/);
    });
  });
});
