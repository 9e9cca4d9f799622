import { and, eq, isNull } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eventMembers, eventPicks, seismicEvents } from '@server/db/schema/events';
import { onItemsCreated } from '@server/features/events/candidate-events';
import { saveVelocityModel } from '@server/features/events/event-settings';
import { syncEventsFromGroups } from '@server/features/events/event-service';
import { fixtureModel, seedSyntheticWindows } from '@tests/setup/event-fixtures';
import { createPerson } from '@tests/setup/queue-fixtures';
import { createTestContext, type TestContext } from '@tests/setup/test-app';

/**
 * One earthquake stays one event while its candidate group grows: the windows of the far stations
 * arrive first and make an event; the near stations' windows, which arrive later but recorded the
 * P earlier, make another window the group's anchor, so the group's row is replaced. The event must
 * follow its group (not a second event beside it), and an event left over from earlier data with
 * the same windows is merged into the group's event with its analysts' picks. Synthetic windows on a
 * ring (tests/setup/event-fixtures.ts; test input, not check values); real MariaDB.
 */
describe('an event follows its candidate group (real MariaDB)', () => {
  let ctx: TestContext;
  beforeAll(async () => {
    ctx = await createTestContext();
  }, 120_000);
  afterAll(async () => {
    await ctx?.close();
  });

  const activeOf = async (eventId: number) =>
    (await ctx.database.db.select({ itemId: eventMembers.itemId }).from(eventMembers).where(and(eq(eventMembers.eventId, eventId), isNull(eventMembers.removedAt)))).map((r) => r.itemId).sort((a, b) => a - b);
  const eventsHolding = async (itemIds: readonly number[]) => {
    const rows = await ctx.database.db.select({ eventId: eventMembers.eventId, itemId: eventMembers.itemId }).from(eventMembers).where(isNull(eventMembers.removedAt));
    return [...new Set(rows.filter((r) => itemIds.includes(r.itemId)).map((r) => r.eventId))];
  };

  it('keeps one event when later windows change the group anchor, and merges a left-over duplicate with its manual picks', async () => {
    const db = ctx.database.db;
    const sue = await createPerson(db, { roles: ['supervisor'] });
    await db.transaction((tx) => saveVelocityModel(tx, sue, 'XX', { name: fixtureModel.name, layers: fixtureModel.layers, stationCorrections: {} }, null));
    // Far stations (20–24 km) first, then the near ones (8–10 km): the near ones' P is earlier.
    const seeded = await seedSyntheticWindows(db, {
      codes: ['FG01', 'FG02', 'FG03', 'FG04', 'FG05'],
      placements: [[30, 22], [150, 24], [270, 20], [90, 8], [210, 10]],
      truth: { latitudeDeg: 46.27, longitudeDeg: 11.06, depthKm: 5, timeS: Date.parse('2026-03-12T05:06:07.000Z') / 1000 },
    });
    const far = seeded.itemIds.slice(0, 3);
    const near = seeded.itemIds.slice(3);
    await onItemsCreated({ db }, far);
    const [first] = await syncEventsFromGroups({ db });
    if (first === undefined) throw new Error('the far stations made no event');
    expect(await activeOf(first)).toEqual([...far].sort((a, b) => a - b));

    await onItemsCreated({ db }, near);
    for (let round = 0; round < 5 && (await syncEventsFromGroups({ db })).length > 0; round++);
    // One event holds all five windows, and it is the first one (its id and history kept).
    expect(await eventsHolding(seeded.itemIds)).toEqual([first]);
    expect(await activeOf(first)).toEqual([...seeded.itemIds].sort((a, b) => a - b));
    const [ev] = await db.select().from(seismicEvents).where(eq(seismicEvents.id, first));
    expect(ev?.candidateEventId).not.toBeNull();
    expect(ev?.preferredOriginId).not.toBeNull();

    // A duplicate left by earlier data: the same three far windows in an event without a group,
    // with an analyst's pick and a type.
    const now = new Date();
    const [dup] = await db.insert(seismicEvents).values({ network: 'XX', firstArrivalAt: now, eventType: 'earthquake', typeCertainty: 'suspected', version: 1, createdAt: now, updatedAt: now }).$returningId();
    if (!dup) throw new Error('no duplicate id');
    await db.insert(eventMembers).values(far.map((itemId) => ({ eventId: dup.id, itemId, source: 'group' })));
    await db.insert(eventPicks).values({ eventId: dup.id, itemId: far[0] ?? null, streamId: 'XX.FG01.00.HHZ', phase: 'P', timeUs: Date.parse('2026-03-12T05:06:11.000Z') * 1000, uncertaintyS: 0.05, evaluationMode: 'manual', authorUserId: sue.id, createdAt: now, updatedAt: now });
    const touched = await syncEventsFromGroups({ db });
    expect(touched).toContain(first);
    expect(await db.select().from(seismicEvents).where(eq(seismicEvents.id, dup.id))).toEqual([]);
    expect(await eventsHolding(seeded.itemIds)).toEqual([first]);
    const manual = await db.select().from(eventPicks).where(and(eq(eventPicks.eventId, first), eq(eventPicks.evaluationMode, 'manual')));
    expect(manual.map((p) => p.streamId)).toEqual(['XX.FG01.00.HHZ']);
    const [merged] = await db.select().from(seismicEvents).where(eq(seismicEvents.id, first));
    expect(merged?.eventType).toBe('earthquake');
    // Nothing left to do: a second call changes nothing.
    expect(await syncEventsFromGroups({ db })).toEqual([]);
  }, 120_000);
});
