import { and, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { changeLog } from '@server/db/schema/change-log';
import { queueItems } from '@server/db/schema/queue-items';
import { stations } from '@server/db/schema/stations';
import { itemArrivals } from '@server/db/schema/supervisor';
import { windows } from '@server/db/schema/uploads';
import { onItemsCreated, recheckLoneTriggers } from '@server/features/events/candidate-events';
import { LONE_MIN_QUIET_STATIONS, RAISE_MIN_Z } from '@server/features/events/coincidence';
import type { Flag } from '@shared/schemas/flags';
import { createItem, ensureStation } from '@tests/setup/queue-fixtures';
import { createTestDatabase, type TestDatabase } from '@tests/setup/test-db';

/**
 * Network coincidence in a real MariaDB (server/features/events/coincidence.ts). A network detection
 * needs several stations with arrivals within travel-time limits (common practice); the rule's
 * numbers are the project's defaults, not an outside reference.
 *
 * Geometry (hand-worked): stations on a meridian 0.1° apart, 6371·π/1800 = 11.119 km between
 * neighbours; with the default grouping settings (3 km/s, 2 s slack) the largest allowed lag over
 * the four stations (0.3°, 33.358 km) is 33.358/3 + 2 = 13.119 s — the network horizon.
 */
const CODES = ['KC01', 'KC02', 'KC03', 'KC04'] as const;

describe('network coincidence (real MariaDB)', () => {
  let db: TestDatabase;
  const sid = new Map<string, number>();

  beforeAll(async () => {
    db = await createTestDatabase();
    for (const [i, code] of CODES.entries()) {
      const id = await ensureStation(db.db, code);
      await db.db.update(stations).set({ latitude: 46 + 0.1 * i, longitude: 8 }).where(eq(stations.id, id));
      sid.set(code, id);
    }
  });
  afterAll(async () => {
    await db.drop();
  });

  interface Member {
    code: (typeof CODES)[number];
    flag: Flag;
    /** Trigger time after the window start, s (null: the window has no trigger). */
    triggerS: number | null;
    /** Robust z of the STA/LTA peak, as the engine stores it. */
    z?: number;
    reasons?: string[];
  }

  /** One 90 s window per member starting at `t0`, with the stored analysis the grouping reads. */
  async function windowsAt(t0: string, members: readonly Member[]): Promise<number[]> {
    const ids: number[] = [];
    for (const m of members) {
      const windowStart = new Date(t0);
      const id = await createItem(db.db, { station: m.code, windowStart, flag: m.flag });
      const [row] = await db.db.select({ windowId: queueItems.windowId }).from(queueItems).where(eq(queueItems.id, id));
      const channel = `XX.${m.code}.00.HHZ`;
      const triggers = m.triggerS === null ? [] : [{ on: m.triggerS, off: m.triggerS + 10 }];
      await db.db
        .update(windows)
        .set({ analysis: { leadChannel: channel, flag: m.flag, zStaLtaPeak: m.z ?? 0, channels: [{ id: channel, startTime: windowStart.toISOString(), staLta: { triggers } }] } })
        .where(eq(windows.id, row?.windowId ?? 0));
      if (m.reasons) await db.db.update(queueItems).set({ reasons: m.reasons }).where(eq(queueItems.id, id));
      ids.push(id);
    }
    return ids;
  }
  const item = async (id: number) => {
    const [row] = await db.db.select().from(queueItems).where(eq(queueItems.id, id));
    if (!row) throw new Error(`no item ${id}`);
    return row;
  };

  it('uses the defaults the module documents', () => {
    expect(RAISE_MIN_Z).toBe(3);
    expect(LONE_MIN_QUIET_STATIONS).toBe(2);
  });

  it('raises a strong, clean needs-eyes member of a group; leaves a weak one and one at a data problem', async () => {
    // Arrivals at 20, 22, 25, 27 s: every pair within its allowed lag (≤ 5.7 s for neighbours).
    const ids = await windowsAt('2026-05-01T10:00:00.000Z', [
      { code: 'KC01', flag: 'likely event', triggerS: 20, z: 12 },
      { code: 'KC02', flag: 'needs eyes', triggerS: 22, z: 4.5, reasons: ['evidence between ordinary noise and an event'] },
      { code: 'KC03', flag: 'needs eyes', triggerS: 25, z: 2.5, reasons: ['evidence between ordinary noise and an event'] },
      { code: 'KC04', flag: 'needs eyes', triggerS: 27, z: 9, reasons: ['the trigger sits at a data problem, not necessarily ground motion — a gap'] },
    ]);
    const [a, strong, weak, problem] = ids as [number, number, number, number];
    const before = await item(strong);
    await onItemsCreated({ db: db.db }, ids);
    const [arr] = await db.db.select().from(itemArrivals).where(eq(itemArrivals.itemId, a));
    expect(arr?.candidateEventId).toBeTruthy();

    const raised = await item(strong);
    expect(raised.flag).toBe('likely event');
    expect(raised.version).toBe(before.version + 1);
    expect(raised.score).toBeCloseTo(before.score + 2, 6);
    expect(raised.reasons.at(-1)).toMatch(/^network coincidence: part of event group #\d+ — 4 stations with arrivals within travel-time limits; raised from needs eyes$/);
    // The change goes out live like any other item change, to those who may see the station.
    const [change] = await db.db.select().from(changeLog).where(and(eq(changeLog.resource, 'item'), eq(changeLog.resourceId, strong), eq(changeLog.version, raised.version)));
    expect(change?.kind).toBe('updated');
    expect(change?.summary).toMatchObject({ flag: 'likely event', version: raised.version });
    expect(change?.audience).toMatchObject({ stationIds: [sid.get('KC02')] });

    expect((await item(weak)).flag).toBe('needs eyes');
    expect((await item(problem)).flag).toBe('needs eyes');
    // Grouping again changes nothing (each raise happens once).
    await onItemsCreated({ db: db.db }, ids);
    expect((await item(strong)).version).toBe(raised.version);
  });

  it('raises a group member its noisy station called likely noise to needs eyes, never to likely event', async () => {
    const ids = await windowsAt('2026-05-07T10:00:00.000Z', [
      { code: 'KC01', flag: 'likely event', triggerS: 20, z: 12 },
      { code: 'KC02', flag: 'likely event', triggerS: 22, z: 10 },
      { code: 'KC03', flag: 'likely noise', triggerS: 25, z: -0.3, reasons: ["the trigger is no stronger than this station's ordinary noise"] },
    ]);
    await onItemsCreated({ db: db.db }, ids);
    const hidden = await item(ids[2] as number);
    expect(hidden.flag).toBe('needs eyes');
    expect(hidden.reasons.at(-1)).toMatch(/^network coincidence: part of event group #\d+ — 3 stations .*; raised from likely noise: this station's own noise hides its trigger, the network does not$/);
  });

  it('lowers a lone likely event that two quiet neighbours recorded; not with one quiet neighbour', async () => {
    // Day 1: KC02 and KC03 cover 10:00:00–10:01:30 without a trigger; KC01 triggers at 40 s.
    // Covered means the window spans the arrival ± the horizon (40 ± 13.1 s): it does.
    await windowsAt('2026-05-02T10:00:00.000Z', [
      { code: 'KC02', flag: 'likely noise', triggerS: null },
      { code: 'KC03', flag: 'likely noise', triggerS: null },
    ]);
    const [lone] = await windowsAt('2026-05-02T10:00:00.000Z', [{ code: 'KC01', flag: 'likely event', triggerS: 40, z: 20 }]);
    await onItemsCreated({ db: db.db }, [lone as number]);
    const lowered = await item(lone as number);
    expect(lowered.flag).toBe('needs eyes');
    expect(lowered.reasons.at(-1)).toMatch(/^lone trigger: 2 other stations recorded this moment \(±13\.1 s\) and none triggered; lowered from likely event$/);

    // Day 2: only KC02 is quiet: one quiet neighbour is not enough.
    await windowsAt('2026-05-03T10:00:00.000Z', [{ code: 'KC02', flag: 'likely noise', triggerS: null }]);
    const [kept] = await windowsAt('2026-05-03T10:00:00.000Z', [{ code: 'KC01', flag: 'likely event', triggerS: 40, z: 20 }]);
    await onItemsCreated({ db: db.db }, [kept as number]);
    expect((await item(kept as number)).flag).toBe('likely event');
  });

  it('does not lower when a neighbour heard something within the horizon', async () => {
    const earlier = await windowsAt('2026-05-04T10:00:00.000Z', [
      { code: 'KC03', flag: 'likely noise', triggerS: null },
      { code: 'KC04', flag: 'likely noise', triggerS: null },
      { code: 'KC02', flag: 'needs eyes', triggerS: 50, z: 2 },
    ]);
    await onItemsCreated({ db: db.db }, earlier);
    const ids = await windowsAt('2026-05-04T10:00:00.000Z', [{ code: 'KC01', flag: 'likely event', triggerS: 40, z: 20 }]);
    await onItemsCreated({ db: db.db }, ids);
    // KC01 (40 s) and KC02 (50 s) are 10 s apart, more than their 5.7 s allowance: no group, but KC02
    // did trigger within the horizon, so KC01 is not alone.
    expect((await item(ids[0] as number)).flag).toBe('likely event');
  });

  it('lowers a lone trigger later, when the quiet neighbours\' windows arrive after it', async () => {
    const [lone] = await windowsAt('2026-05-05T10:00:00.000Z', [{ code: 'KC01', flag: 'likely event', triggerS: 40, z: 20 }]);
    await onItemsCreated({ db: db.db }, [lone as number]);
    expect((await item(lone as number)).flag).toBe('likely event');

    const start = new Date('2026-05-05T09:59:50.000Z');
    const end = new Date('2026-05-05T10:01:20.000Z');
    await windowsAt(start.toISOString(), [{ code: 'KC03', flag: 'likely noise', triggerS: null }]);
    // One quiet window so far: nothing changes.
    expect(await recheckLoneTriggers({ db: db.db }, [{ stationId: sid.get('KC03') as number, start, end }])).toEqual([]);
    await windowsAt(start.toISOString(), [{ code: 'KC04', flag: 'likely noise', triggerS: null }]);
    let woke = 0;
    expect(await recheckLoneTriggers({ db: db.db, notify: () => woke++ }, [{ stationId: sid.get('KC04') as number, start, end }])).toEqual([lone]);
    expect(woke).toBe(1);
    expect((await item(lone as number)).flag).toBe('needs eyes');
    // A window of the lone station itself never counts as its quiet neighbour.
    expect(await recheckLoneTriggers({ db: db.db }, [{ stationId: sid.get('KC01') as number, start, end }])).toEqual([]);
  });

  it('leaves items an analyst has taken alone', async () => {
    await windowsAt('2026-05-06T10:00:00.000Z', [
      { code: 'KC02', flag: 'likely noise', triggerS: null },
      { code: 'KC03', flag: 'likely noise', triggerS: null },
    ]);
    const [claimed] = await windowsAt('2026-05-06T10:00:00.000Z', [{ code: 'KC01', flag: 'likely event', triggerS: 40, z: 20 }]);
    await db.db.update(queueItems).set({ state: 'in review' }).where(eq(queueItems.id, claimed as number));
    await onItemsCreated({ db: db.db }, [claimed as number]);
    expect((await item(claimed as number)).flag).toBe('likely event');
  });
});
