import { and, eq } from 'drizzle-orm';
import type { Express } from 'express';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp } from '@server/app';
import { auditLog } from '@server/db/schema/audit-log';
import { queueItems } from '@server/db/schema/queue-items';
import { seedSyntheticEvent, type SeededEvent } from '@tests/setup/event-fixtures';
import { createTestContext, type TestContext } from '@tests/setup/test-app';
import { createPerson, type TestPerson } from '@tests/setup/queue-fixtures';

const origin = 'http://127.0.0.1';

/**
 * POST /api/supervisor/events/:id/return (server/features/supervision/event-return.ts) against a real
 * MariaDB: a five-station synthetic event (tests/setup/event-fixtures.ts; test input, not check
 * values), one member window labelled by an analyst, the event set final by the supervisor, then
 * returned: 401, 403, 400 naming the field, 404, 409 on a stale version, and the happy path (the
 * status back to preliminary, the labelled window back in the queue, the comment on every member,
 * one audit row).
 */
describe('returning an event to the analysts', () => {
  let ctx: TestContext;
  let app: Express;
  let ana: TestPerson;
  let sue: TestPerson;
  let seeded: SeededEvent;

  const post = (p: TestPerson | null, url: string, body: object) => {
    const r = request(app).post(url).set('Origin', origin).set('Host', '127.0.0.1').send(body);
    return p ? r.set('Cookie', p.cookie) : r;
  };
  const get = (p: TestPerson, url: string) => request(app).get(url).set('Cookie', p.cookie);
  const eventVersion = async () => (await get(sue, `/api/events/${seeded.eventId}`).expect(200)).body.event.version as number;

  beforeAll(async () => {
    ctx = await createTestContext();
    app = createApp(ctx, { serveClient: false });
    const db = ctx.database.db;
    ana = await createPerson(db, { roles: ['analyst'] });
    sue = await createPerson(db, { roles: ['supervisor'] });
    seeded = await seedSyntheticEvent(db, {
      codes: ['RTA1', 'RTA2', 'RTA3', 'RTA4', 'RTA5'],
      placements: [[20, 10], [95, 18], [170, 14], [240, 22], [310, 16]],
      truth: { latitudeDeg: 46.262, longitudeDeg: 11.07, depthKm: 6, timeS: Date.parse('2026-03-11T02:00:10.000Z') / 1000 },
      supervisor: sue,
    });
    // One member window labelled by an analyst; the others stay new.
    const first = seeded.itemIds[0] as number;
    const claimed = await post(ana, `/api/queue/items/${first}/claim`, { version: 1 }).expect(200);
    await post(ana, `/api/queue/items/${first}/label`, { version: claimed.body.version, label: { eventType: 'earthquake', certainty: 'known' } }).expect(200);
    const v = await eventVersion();
    await request(app).put(`/api/events/${seeded.eventId}/label`).set('Origin', origin).set('Host', '127.0.0.1').set('Cookie', sue.cookie).send({ eventType: 'earthquake', typeCertainty: 'known', evaluationStatus: 'final', eventVersion: v }).expect(200);
  }, 180_000);
  afterAll(async () => {
    await ctx?.close();
  });

  it('401 without a session, 403 for an analyst, 400 naming the field, 404 for a missing event, 409 on a stale version', async () => {
    const url = `/api/supervisor/events/${seeded.eventId}/return`;
    const v = await eventVersion();
    await post(null, url, { eventVersion: v, comment: 'look again at KV03' }).expect(401);
    await post(ana, url, { eventVersion: v, comment: 'look again at KV03' }).expect(403);
    const bad = await post(sue, url, { eventVersion: v, comment: 'x' }).expect(400);
    expect(bad.body.error.code).toBe('validation_failed');
    expect(bad.body.error.message).toMatch(/comment/);
    await post(sue, '/api/supervisor/events/999999991/return', { eventVersion: 1, comment: 'look again' }).expect(404);
    const stale = await post(sue, url, { eventVersion: v + 5, comment: 'look again' }).expect(409);
    expect(stale.body.error.message).toMatch(/changed since you loaded it/);
    // Nothing was written by the refused calls.
    expect((await get(sue, `/api/events/${seeded.eventId}`).expect(200)).body.event.evaluationStatus).toBe('final');
  });

  it('sets the event back to preliminary, returns the labelled window to the queue, and puts the comment on every member', async () => {
    const v = await eventVersion();
    const [labelled, untouched] = seeded.itemIds as [number, number];
    const res = await post(sue, `/api/supervisor/events/${seeded.eventId}/return`, { eventVersion: v, comment: 'S on RTA2 looks 1 s late; check it' }).expect(200);
    expect(res.body).toEqual({ eventId: seeded.eventId, eventVersion: v + 1, evaluationStatus: 'preliminary', returnedItemIds: [labelled] });
    const ev = (await get(sue, `/api/events/${seeded.eventId}`).expect(200)).body.event;
    expect(ev).toMatchObject({ evaluationStatus: 'preliminary', version: v + 1 });
    const db = ctx.database.db;
    const [row] = await db.select({ state: queueItems.state, claimed: queueItems.claimedByUserId }).from(queueItems).where(eq(queueItems.id, labelled));
    expect(row).toEqual({ state: 'returned', claimed: null });
    const [other] = await db.select({ state: queueItems.state }).from(queueItems).where(eq(queueItems.id, untouched));
    expect(other?.state).toBe('new');
    for (const id of [labelled, untouched]) {
      const note = (await get(ana, `/api/supervisor/items/${id}/review-note`).expect(200)).body.note;
      expect(note.returnComment).toBe('S on RTA2 looks 1 s late; check it');
    }
    const audits = await db.select().from(auditLog).where(and(eq(auditLog.action, 'review.event_returned'), eq(auditLog.targetId, String(seeded.eventId))));
    expect(audits).toHaveLength(1);
    // The reviewed catalogue no longer holds it.
    const xml = (await get(sue, '/api/supervisor/export?from=2026-03-11T00:00:00.000Z&to=2026-03-12T00:00:00.000Z&status=final&format=quakeml').expect(200)).text;
    expect(xml).not.toContain(`event/event/${seeded.eventId}"`);
  });
});
