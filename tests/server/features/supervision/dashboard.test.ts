import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { dashboard, medianOf } from '@server/features/supervision/dashboard';
import { claimItem, dismissItem, labelItem } from '@server/features/queue/queue-transitions';
import { createTestContext, type TestContext } from '@tests/setup/test-app';
import { createItem, createPerson } from '@tests/setup/queue-fixtures';

// Hand-worked medians (definition: the middle value of the sorted list, or the mean of the two
// middle values for an even count — common practice).
describe('medianOf', () => {
  it('takes the middle of an odd list and the mean of the middle pair of an even one', () => {
    expect(medianOf([7, 1, 4])).toBe(4); // sorted 1 4 7
    expect(medianOf([10, 2, 8, 4])).toBe(6); // sorted 2 4 8 10 → (4 + 8)/2
    expect(medianOf([3.5])).toBe(3.5);
  });
  it('is null for an empty list and leaves its input unsorted', () => {
    expect(medianOf([])).toBeNull();
    const xs = [3, 1, 2];
    medianOf(xs);
    expect(xs).toEqual([3, 1, 2]);
  });
});

describe('dashboard over a real database', () => {
  let ctx: TestContext;
  beforeAll(async () => {
    ctx = await createTestContext();
  });
  afterAll(async () => {
    await ctx.close();
  });

  /*
   * Hand-worked: three items flagged `likely event` arrive 10, 30 and 50 minutes before they are
   * triaged (all triaged "now"); two are dismissed as noise and one labelled an earthquake.
   * Median time to triage = 30 min; false-alarm rate = 2 noise / 3 with a ground truth = 0.667;
   * workload = 3 actions for the one analyst. Tolerance 0.5 min for the test's own run time.
   */
  it('gives the median time to triage, the false-alarm rate and the workload of the day', async () => {
    const db = ctx.database.db;
    const ana = await createPerson(db, { roles: ['analyst'], displayName: 'Ana Kestrel' });
    const actor = { id: ana.id, displayName: ana.displayName, email: ana.email };
    const now = Date.now();
    const ids: number[] = [];
    for (const minutes of [10, 30, 50]) ids.push(await createItem(db, { station: 'KV01', flag: 'likely event', createdAt: new Date(now - minutes * 60_000) }));
    const deps = { db };
    for (const [i, id] of ids.entries()) {
      const c = await claimItem(deps, actor, id, 1);
      if (i < 2) await dismissItem(deps, actor, id, c.version, { noiseReason: 'traffic', note: '' });
      else await labelItem(deps, actor, id, c.version, { eventType: 'earthquake', certainty: 'suspected', distanceClass: null, picks: [], note: '' });
    }
    const today = new Date(Date.UTC(new Date(now).getUTCFullYear(), new Date(now).getUTCMonth(), new Date(now).getUTCDate()));
    const from = new Date(today.getTime() - 86_400_000);
    const d = await dashboard(db, { from, to: new Date(today.getTime() + 86_400_000) });
    expect(d.days).toHaveLength(2);
    const last = d.days.length - 1;
    // An item that arrived before midnight still counts on the day of its triage for the median.
    expect(d.medianTriageMinutes[last]).toBeGreaterThan(29.5);
    expect(d.medianTriageMinutes[last]).toBeLessThan(30.5);
    expect(d.triageCount[last]).toBe(3);
    const flagged = d.flaggedWithTruth.reduce((a, b) => a + b, 0);
    expect(flagged).toBe(3);
    if (d.flaggedWithTruth[last] === 3) expect(d.falseAlarmRate[last]).toBeCloseTo(2 / 3, 9);
    expect(d.workload).toEqual([{ analyst: 'Ana Kestrel', actions: 3 }]);
  });

  /*
   * Hand-worked: two more `likely event` items, both dismissed as noise, one scored against its
   * station's own noise and one before the station had a baseline (`network default`). The one with
   * a baseline enters the rate, the other is counted apart: the rate of the day is 1 noise / 1.
   */
  it('counts flags made before the station had a baseline apart from the false-alarm rate', async () => {
    const db = ctx.database.db;
    const ana = await createPerson(db, { roles: ['analyst'], displayName: 'Ben Kestrel' });
    const actor = { id: ana.id, displayName: ana.displayName, email: ana.email };
    const day = new Date(Date.UTC(2026, 2, 9, 12));
    const ids = [await createItem(db, { station: 'KV02', flag: 'likely event', createdAt: day, baseline: 'station' }), await createItem(db, { station: 'KV02', flag: 'likely event', createdAt: day, baseline: 'network default' })];
    for (const id of ids) {
      const c = await claimItem({ db }, actor, id, 1);
      await dismissItem({ db }, actor, id, c.version, { noiseReason: 'traffic', note: '' });
    }
    const d = await dashboard(db, { from: new Date(Date.UTC(2026, 2, 9)), to: new Date(Date.UTC(2026, 2, 10)) });
    expect(d.flaggedWithTruth).toEqual([1]);
    expect(d.falseAlarmRate).toEqual([1]);
    expect(d.flaggedBeforeBaseline).toEqual([1]);
  });
});
