import { NETWORK_DEFAULT_BASELINE } from '@server/dsp/score';
import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { z } from 'zod';
import { queueItems } from '@server/db/schema/queue-items';
import { windowFeatures } from '@server/db/schema/window-features';
import { noiseSelect, stationBaseline } from '@server/features/stations/station-baseline';
import { createItem, ensureStation } from '@tests/setup/queue-fixtures';
import { createTestContext, type TestContext } from '@tests/setup/test-app';
import type { ItemState } from '@shared/schemas/item-states';
import type { Flag } from '@shared/schemas/flags';

describe('station noise baseline (real MariaDB)', () => {
  let ctx: TestContext;
  let kv05: number;
  const t0 = Date.UTC(2026, 2, 1);

  /** An item with its window features, as ingest writes them. */
  const window = async (code: string, i: number, state: ItemState, flag: Flag, log10Ratio: number, staLtaPeak: number) => {
    const db = ctx.database.db;
    const windowStart = new Date(t0 + i * 60_000);
    const id = await createItem(db, { station: code, state, flag, windowStart, createdAt: windowStart });
    const [item] = await db.select().from(queueItems).where(eq(queueItems.id, id));
    if (!item) throw new Error('no item');
    await db.insert(windowFeatures).values({ windowId: item.windowId, stationId: item.stationId, windowStart, leadChannel: `XX.${code}.00.HHZ`, leadLog10Ratio: log10Ratio, leadStaLtaPeak: staLtaPeak, noiseLevelDb: -140, noiseLevelUnits: 'dB (m/s²)²/Hz', flag, createdAt: windowStart });
  };

  beforeAll(async () => {
    ctx = await createTestContext();
    kv05 = await ensureStation(ctx.database.db, 'KV05');
  });
  afterAll(async () => {
    await ctx.close();
  });

  it('no windows: no baseline, the view says so', async () => {
    const r = await stationBaseline(ctx.database.db, kv05, 20);
    expect(r.baseline).toBeNull();
    expect(r.view).toMatchObject({ count: 0, source: 'none', log10Ratio: null, staLtaPeak: null, minWindows: 20, inUse: false });
    expect(r.view.networkDefault).toEqual({ log10Ratio: NETWORK_DEFAULT_BASELINE.log10Ratio, staLtaPeak: NETWORK_DEFAULT_BASELINE.staLtaPeak });
  });

  it('until enough dismissals exist, the automatic "likely noise" windows are used (not labelled or escalated ones)', async () => {
    // Hand-worked: log10 ratios 0.1, 0.2, 0.3, 0.4, 10 → median 0.3; |x − 0.3| = 0.2, 0.1, 0, 0.1, 9.7 → MAD 0.1.
    // STA/LTA peaks 1, 2, 2, 3, 9 → median 2; |x − 2| = 1, 0, 0, 1, 7 → MAD 1.
    const vals: Array<[number, number]> = [[0.1, 1], [0.2, 2], [0.3, 2], [0.4, 3], [10, 9]];
    for (const [i, [r, p]] of vals.entries()) await window('KV05', i, 'new', 'likely noise', r, p);
    await window('KV05', 10, 'labelled', 'likely noise', 50, 50);
    await window('KV05', 11, 'new', 'likely event', 40, 40);
    const r = await stationBaseline(ctx.database.db, kv05, 20);
    expect(r.view.source).toBe('flagged');
    expect(r.view.count).toBe(5);
    expect(r.baseline?.log10Ratio.median).toBeCloseTo(0.3, 12);
    expect(r.baseline?.log10Ratio.mad).toBeCloseTo(0.1, 12);
    expect(r.baseline?.staLtaPeak).toEqual({ median: 2, mad: 1 });
    expect(r.view.inUse).toBe(false);
  });

  it('analyst dismissals take over once there are minWindows of them', async () => {
    // Hand-worked: ratios −0.2, 0, 0.2 → median 0, MAD 0.2; peaks 1.5, 2, 2.5 → median 2, MAD 0.5.
    const vals: Array<[number, number]> = [[-0.2, 1.5], [0, 2], [0.2, 2.5]];
    for (const [i, [r, p]] of vals.entries()) await window('KV05', 20 + i, 'dismissed', 'needs eyes', r, p);
    const r = await stationBaseline(ctx.database.db, kv05, 3);
    expect(r.view.source).toBe('dismissed');
    expect(r.view.count).toBe(3);
    expect(r.baseline?.log10Ratio.median).toBeCloseTo(0, 12);
    expect(r.baseline?.log10Ratio.mad).toBeCloseTo(0.2, 12);
    expect(r.baseline?.staLtaPeak.median).toBeCloseTo(2, 12);
    expect(r.baseline?.staLtaPeak.mad).toBeCloseTo(0.5, 12);
    expect(r.view.inUse).toBe(true);
  });

  it("reads each noise set along an index, newest first, however long the station's history", async () => {
    // A station with a long history and no dismissal: 400 windows the engine did not call noise.
    const db = ctx.database.db;
    const kv06 = await ensureStation(db, 'KV06');
    for (let i = 0; i < 400; i++) await window('KV06', 100 + i, 'new', i % 10 === 0 ? 'likely noise' : 'needs eyes', 0.1, 1);
    const plans: Record<string, Array<{ table: string; key: string | null; Extra: string | null }>> = {};
    for (const mode of ['dismissed', 'flagged'] as const) {
      const { sql: text, params } = noiseSelect(db, kv06, mode).toSQL();
      const [rows] = await ctx.database.pool.query(`EXPLAIN ${text}`, params);
      plans[mode] = z.array(z.object({ table: z.string(), key: z.string().nullable(), Extra: z.string().nullable() }).loose()).parse(rows);
    }
    // MariaDB EXPLAIN: the first row is the table the join starts from; no filesort means the
    // index order is used and the LIMIT stops the scan (MariaDB manual, EXPLAIN).
    expect(plans.dismissed?.[0]).toMatchObject({ table: 'queue_items', key: 'queue_items_station_window_cover_idx' });
    expect(plans.flagged?.[0]).toMatchObject({ table: 'window_features', key: 'window_features_station_flag_start_idx' });
    for (const plan of Object.values(plans)) expect(plan[0]?.Extra ?? '').not.toContain('filesort');
    const r = await stationBaseline(db, kv06, 20);
    expect(r.view).toMatchObject({ source: 'flagged', count: 40 });
  });
});
