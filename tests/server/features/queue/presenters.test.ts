import { eq } from 'drizzle-orm';
import type { Express } from 'express';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp } from '@server/app';
import { queueItems } from '@server/db/schema/queue-items';
import { stations } from '@server/db/schema/stations';
import { windows } from '@server/db/schema/uploads';
import { loadQueueRow } from '@server/features/queue/queue-rows';
import { getCandidateEvent, onItemsCreated } from '@server/features/events/candidate-events';
import { queuePageSchema } from '@shared/schemas/queue';
import { createItem, createPerson, ensureStation, type TestPerson } from '@tests/setup/queue-fixtures';
import { createTestContext, type TestContext } from '@tests/setup/test-app';

/*
 * Queue rows name the candidate event their item belongs to (issue 7: "The queue and review
 * screens show the group"). Geometry as in tests/server/features/supervision/supervisor.test.ts:
 * stations on a meridian 0.1° apart (11.119 km, hand-worked 6371·π/1800 km per 0.1°); allowed lag
 * between neighbours 11.119/3 + 2 = 5.706 s. Arrivals KV11 0 s, KV12 3 s, KV13 7 s form one event
 * of 3 stations; KV14 at 30 s (23 s after KV13) stays alone.
 */
describe('queue rows carry their candidate event (real MariaDB)', () => {
  let ctx: TestContext;
  let app: Express;
  let ana: TestPerson;
  const codes = ['KV11', 'KV12', 'KV13', 'KV14'];
  const offsets = [0, 3, 7, 30];
  const ids: number[] = [];

  beforeAll(async () => {
    ctx = await createTestContext();
    app = createApp(ctx, { serveClient: false });
    ana = await createPerson(ctx.database.db, { roles: ['analyst'], displayName: 'Ana Kestrel' });
    const windowStart = new Date('2026-04-07T08:00:00.000Z');
    for (const [i, code] of codes.entries()) {
      const sid = await ensureStation(ctx.database.db, code);
      await ctx.database.db.update(stations).set({ latitude: 46 + 0.1 * i, longitude: 8 }).where(eq(stations.id, sid));
      const id = await createItem(ctx.database.db, { station: code, windowStart });
      const [row] = await ctx.database.db.select({ windowId: queueItems.windowId }).from(queueItems).where(eq(queueItems.id, id));
      await ctx.database.db
        .update(windows)
        .set({ analysis: { leadChannel: `XX.${code}.00.HHZ`, channels: [{ id: `XX.${code}.00.HHZ`, startTime: windowStart.toISOString(), staLta: { triggers: [{ on: 20 + (offsets[i] ?? 0), off: 40 }] } }] } })
        .where(eq(windows.id, row?.windowId ?? 0));
      ids.push(id);
    }
    await onItemsCreated({ db: ctx.database.db }, ids);
  });
  afterAll(async () => {
    await ctx.close();
  });

  it('GET /api/queue gives members the event id and its station count, and null to the lone item', async () => {
    const res = await request(app).get(`/api/queue?station=${codes.join(',')}&state=new&limit=50`).set('Cookie', ana.cookie).expect(200);
    const page = queuePageSchema.parse(res.body);
    const byId = new Map(page.items.map((r) => [r.id, r]));
    const evId = byId.get(ids[0] ?? 0)?.candidateEvent?.id;
    expect(evId).toBeTypeOf('number');
    const ev = await getCandidateEvent(ctx.database.db, evId ?? 0);
    expect(ev?.members.map((m) => m.itemId)).toEqual(ids.slice(0, 3));
    for (const id of ids.slice(0, 3)) expect(byId.get(id)?.candidateEvent).toEqual({ id: evId, stationCount: 3 });
    expect(byId.get(ids[3] ?? 0)?.candidateEvent).toBeNull();
  });

  it('the single-row loader (item detail, live summaries) says the same', async () => {
    const member = await loadQueueRow(ctx.database.db, eq(queueItems.id, ids[1] ?? 0));
    expect(member?.candidateEvent?.stationCount).toBe(3);
    const alone = await loadQueueRow(ctx.database.db, eq(queueItems.id, ids[3] ?? 0));
    expect(alone?.candidateEvent).toBeNull();
  });
});
