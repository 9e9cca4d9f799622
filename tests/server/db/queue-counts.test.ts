import { eq, sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { queueCounts } from '@server/db/schema/queue-counts';
import { queueItems } from '@server/db/schema/queue-items';
import { createTestDatabase, type TestDatabase } from '@tests/setup/test-db';
import { createItem } from '@tests/setup/queue-fixtures';

/**
 * queue_counts (migration 0006) against the count it stands for: a GROUP BY over queue_items
 * itself, after every kind of write the triggers must follow.
 */
describe('queue_counts kept by triggers', () => {
  let db: TestDatabase;
  beforeAll(async () => {
    db = await createTestDatabase();
  });
  afterAll(async () => {
    await db?.close();
  });

  const truth = async () => {
    const rows = await db.db
      .select({ stationId: queueItems.stationId, state: queueItems.state, flag: queueItems.flag, labelKey: sql<string>`COALESCE(${queueItems.labelType}, '')`, n: sql<number>`COUNT(*)` })
      .from(queueItems)
      .groupBy(queueItems.stationId, queueItems.state, queueItems.flag, sql`COALESCE(${queueItems.labelType}, '')`);
    return rows.map((r) => `${r.stationId}|${r.state}|${r.flag}|${r.labelKey}=${Number(r.n)}`).sort();
  };
  const kept = async () => {
    const rows = await db.db.select().from(queueCounts);
    return rows.filter((r) => r.n !== 0).map((r) => `${r.stationId}|${r.state}|${r.flag}|${r.labelKey}=${r.n}`).sort();
  };

  it('follow inserts, state, flag and label changes, multi-row updates and deletes', async () => {
    const ids: number[] = [];
    for (let i = 0; i < 6; i++) ids.push(await createItem(db.db, { station: i % 2 ? 'KV01' : 'KV02' }));
    expect(await kept()).toEqual(await truth());
    const [a, b, c] = ids as [number, number, number];
    await db.db.update(queueItems).set({ state: 'in review' }).where(eq(queueItems.id, a));
    await db.db.update(queueItems).set({ state: 'labelled', labelType: 'earthquake' }).where(eq(queueItems.id, b));
    await db.db.update(queueItems).set({ flag: 'likely event' }).where(eq(queueItems.id, c));
    expect(await kept()).toEqual(await truth());
    // One statement moving several rows (as the claim-lapse job does), and an update that changes no key.
    await db.db.update(queueItems).set({ state: 'dismissed', labelType: 'noise' }).where(sql`${queueItems.id} IN (${a}, ${c})`);
    await db.db.update(queueItems).set({ version: 7 }).where(eq(queueItems.id, b));
    expect(await kept()).toEqual(await truth());
    await db.db.delete(queueItems).where(eq(queueItems.id, b));
    expect(await kept()).toEqual(await truth());
    const total = (await kept()).reduce((s, r) => s + Number(r.split('=')[1]), 0);
    expect(total).toBe(5);
  });
});
