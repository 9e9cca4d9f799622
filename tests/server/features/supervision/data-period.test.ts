import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { latestWindows } from '@server/features/supervision/data-period';
import { createItem, ensureStation } from '@tests/setup/queue-fixtures';
import { createTestContext, type TestContext } from '@tests/setup/test-app';

/**
 * latestWindows against the real MariaDB: the latest window start over all items and over the
 * items the review list shows (labelled/confirmed events, not noise), for every station or one.
 * The expected times are the ones inserted here; millisecond precision is the column's (DATETIME(3)).
 */
describe('latestWindows (real MariaDB)', () => {
  let ctx: TestContext;
  beforeAll(async () => {
    ctx = await createTestContext();
  });
  afterAll(async () => {
    await ctx.close();
  });

  it('is null on an empty table', async () => {
    expect(await latestWindows(ctx.database.db)).toEqual({ latestWindowStart: null, latestLabelledWindowStart: null });
  });

  it('finds the latest item and the latest labelled event, per station too', async () => {
    const db = ctx.database.db;
    await createItem(db, { station: 'KV01', state: 'labelled', labelType: 'earthquake', windowStart: new Date('2026-03-14T09:26:00.125Z') });
    await createItem(db, { station: 'KV01', state: 'new', windowStart: new Date('2026-03-14T11:00:00.000Z') });
    // A dismissal (noise) and a confirmed event at another station, later than both.
    await createItem(db, { station: 'KV02', state: 'labelled', labelType: 'noise', windowStart: new Date('2026-03-15T08:00:00.000Z') });
    await createItem(db, { station: 'KV02', state: 'confirmed', labelType: 'quarry blast', windowStart: new Date('2026-03-13T17:30:00.500Z') });
    expect(await latestWindows(db)).toEqual({ latestWindowStart: '2026-03-15T08:00:00.000Z', latestLabelledWindowStart: '2026-03-14T09:26:00.125Z' });
    const kv01 = await ensureStation(db, 'KV01');
    const kv02 = await ensureStation(db, 'KV02');
    expect(await latestWindows(db, kv01)).toEqual({ latestWindowStart: '2026-03-14T11:00:00.000Z', latestLabelledWindowStart: '2026-03-14T09:26:00.125Z' });
    expect(await latestWindows(db, kv02)).toEqual({ latestWindowStart: '2026-03-15T08:00:00.000Z', latestLabelledWindowStart: '2026-03-13T17:30:00.500Z' });
    expect(await latestWindows(db, 999_999)).toEqual({ latestWindowStart: null, latestLabelledWindowStart: null });
  });
});
