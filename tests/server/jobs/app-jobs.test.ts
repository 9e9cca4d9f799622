import { Writable } from 'node:stream';
import { count, eq, inArray } from 'drizzle-orm';
import request from 'supertest';
import { afterAll, afterEach, beforeAll, describe, expect, it, vi } from 'vitest';
import { createApp } from '@server/app';
import { changeLog } from '@server/db/schema/change-log';
import { itemArrivals } from '@server/db/schema/supervisor';
import { onItemsCreated } from '@server/features/events/candidate-events';
import { appJobs } from '@server/jobs/app-jobs';
import { startScheduler, type PeriodicJob } from '@server/jobs/scheduler';
import { createLogger } from '@server/logger';
import { itemAudience, recordChange } from '@server/realtime/change-log';
import { createTestContext, type TestContext } from '@tests/setup/test-app';
import { seedSyntheticWindows } from '@tests/setup/event-fixtures';
import { createItem, createPerson } from '@tests/setup/queue-fixtures';

/** A logger whose JSON lines land in `lines`. */
function capturingLogger() {
  const lines: Array<{ level: number; msg: string; job?: string }> = [];
  const logger = createLogger('info', new Writable({ write: (c: Buffer, _e, done) => (lines.push(JSON.parse(c.toString('utf8'))), done()) }));
  return { logger, lines };
}

describe('the scheduler of periodic jobs', () => {
  afterEach(() => {
    vi.useRealTimers();
  });

  it('runs a job at start when asked and then every period, never two runs of one job at once', async () => {
    vi.useFakeTimers();
    const { logger } = capturingLogger();
    let runs = 0;
    let release: (() => void) | null = null;
    const slow: PeriodicJob = {
      name: 'slow',
      everyMs: 1000,
      runAtStart: true,
      run: () => {
        runs++;
        return new Promise((done) => {
          release = () => done(null);
        });
      },
    };
    const scheduler = startScheduler([slow], logger);
    expect(runs).toBe(1);
    // Three periods pass while the first run is still going: no second run starts.
    await vi.advanceTimersByTimeAsync(3000);
    expect(runs).toBe(1);
    release!();
    await vi.advanceTimersByTimeAsync(1000);
    expect(runs).toBe(2);
    release!();
    await scheduler.stop();
    await vi.advanceTimersByTimeAsync(5000);
    expect(runs).toBe(2);
  });

  it('logs a failed run as a warning and tries again at the next tick', async () => {
    vi.useFakeTimers();
    const { logger, lines } = capturingLogger();
    let calls = 0;
    const flaky: PeriodicJob = {
      name: 'flaky',
      everyMs: 500,
      run: async () => {
        calls++;
        if (calls === 1) throw new Error('database away');
        return { done: calls };
      },
    };
    const scheduler = startScheduler([flaky], logger);
    expect(calls).toBe(0);
    await vi.advanceTimersByTimeAsync(500);
    await vi.advanceTimersByTimeAsync(500);
    expect(calls).toBe(2);
    expect(lines.find((l) => l.msg === 'flaky: run failed')?.level).toBe(40);
    expect(lines.find((l) => l.msg === 'flaky: done')?.level).toBe(30);
    await scheduler.stop();
    await expect(scheduler.runNow('nothing')).rejects.toThrow(/no periodic job named "nothing"/);
  });
});

describe("the app's periodic jobs (real MariaDB)", () => {
  let ctx: TestContext;
  beforeAll(async () => {
    ctx = await createTestContext({ SEISIFT_CHANGE_LOG_KEEP_HOURS: '24' });
  });
  afterAll(async () => {
    await ctx.close();
  });

  it('change-log pruning removes the changes older than SEISIFT_CHANGE_LOG_KEEP_HOURS and keeps the rest', async () => {
    const db = ctx.database.db;
    const seqs: number[] = [];
    for (let i = 0; i < 5; i++) seqs.push(await db.transaction((tx) => recordChange(tx, { resource: 'item', resourceId: 900 + i, kind: 'updated', version: 1, audience: itemAudience(1) })));
    const old = seqs.slice(0, 3);
    await db.update(changeLog).set({ createdAt: new Date(Date.now() - 25 * 3_600_000) }).where(inArray(changeLog.seq, old));
    const scheduler = startScheduler(appJobs(ctx), ctx.logger);
    try {
      await scheduler.runNow('change-log pruning');
    } finally {
      await scheduler.stop();
    }
    const left = await db.select({ seq: changeLog.seq }).from(changeLog).where(inArray(changeLog.seq, seqs));
    expect(left.map((r) => r.seq).sort((a, b) => a - b)).toEqual(seqs.slice(3));
  });

  it('a read writes nothing: candidate events are listed as they are, and the arrivals catch-up job records the missing arrival', async () => {
    const db = ctx.database.db;
    const windowStart = new Date('2026-05-02T10:00:00Z');
    const id = await createItem(db, { station: 'KV01', withSamples: true, burstAtS: 50, windowStart });
    const arrivalsOf = async () => (await db.select({ n: count() }).from(itemArrivals).where(eq(itemArrivals.itemId, id)))[0]?.n;
    const supervisor = await createPerson(db, { roles: ['supervisor'] });
    const app = createApp(ctx, { serveClient: false });
    await request(app).get('/api/supervisor/candidate-events?from=2026-05-02T00:00:00Z&to=2026-05-03T00:00:00Z').set('Cookie', supervisor.cookie).expect(200);
    await request(app).get('/api/supervisor/review').set('Cookie', supervisor.cookie).expect(200);
    expect(await arrivalsOf()).toBe(0);
    const scheduler = startScheduler(appJobs(ctx), ctx.logger);
    try {
      await scheduler.runNow('arrivals catch-up');
    } finally {
      await scheduler.stop();
    }
    expect(await arrivalsOf()).toBe(1);
  });

  it('the reads that used to run the arrivals catch-up or build events leave every table as it was (CHECKSUM TABLE); the export adds only its audit row; the job builds the event', async () => {
    const db = ctx.database.db;
    const windowStart = new Date('2026-05-03T10:00:00Z');
    const id = await createItem(db, { station: 'KV02', withSamples: true, burstAtS: 50, windowStart });
    // A candidate group with no event yet (the catch-up job or the ingest builds it, not a read).
    const seeded = await seedSyntheticWindows(db, {
      codes: ['JBA1', 'JBA2', 'JBA3', 'JBA4'],
      placements: [[30, 12], [120, 16], [210, 14], [300, 18]],
      truth: { latitudeDeg: 46.3, longitudeDeg: 11.1, depthKm: 6, timeS: Date.parse('2026-05-03T11:00:00Z') / 1000 },
    });
    expect(await onItemsCreated({ db }, seeded.itemIds)).toHaveLength(1);
    const supervisor = await createPerson(db, { roles: ['supervisor'] });
    const app = createApp(ctx, { serveClient: false });
    // Every table's live checksum (MariaDB CHECKSUM TABLE: a checksum of all its rows).
    const checksums = async (): Promise<Record<string, unknown>> => {
      const [tables] = await ctx.database.pool.query('SHOW TABLES');
      const names = (tables as Array<Record<string, string>>).map((r) => Object.values(r)[0] ?? '');
      const [rows] = await ctx.database.pool.query(`CHECKSUM TABLE ${names.map((n) => `\`${n}\``).join(', ')}`);
      return Object.fromEntries((rows as Array<{ Table: string; Checksum: unknown }>).map((r) => [r.Table.split('.').pop() ?? r.Table, r.Checksum]));
    };
    // Sign-in wrote its session and audit rows above; from here on only reads.
    await request(app).get('/api/auth/me').set('Cookie', supervisor.cookie).expect(200);
    const before = await checksums();
    const period = 'from=2026-05-03T00:00:00Z&to=2026-05-04T00:00:00Z';
    await request(app).get(`/api/supervisor/candidate-events?${period}`).set('Cookie', supervisor.cookie).expect(200);
    await request(app).get('/api/supervisor/review').set('Cookie', supervisor.cookie).expect(200);
    await request(app).get(`/api/queue/items/${id}`).set('Cookie', supervisor.cookie).expect(200);
    await request(app).get('/api/queue').set('Cookie', supervisor.cookie).expect(200);
    expect((await request(app).get('/api/events').set('Cookie', supervisor.cookie).expect(200)).body.events).toEqual([]);
    expect(await checksums()).toEqual(before);
    // The export is a read of the catalogue; taking data out is audited (one row), nothing else moves.
    await request(app).get(`/api/supervisor/export?${period}&format=csv`).set('Cookie', supervisor.cookie).expect(200);
    const after = await checksums();
    const changed = Object.keys(after).filter((t) => after[t] !== before[t]);
    expect(changed).toEqual(['audit_log']);
    // The job builds the event from the group.
    const scheduler = startScheduler(appJobs(ctx), ctx.logger);
    try {
      await scheduler.runNow('arrivals catch-up');
    } finally {
      await scheduler.stop();
    }
    const events = (await request(app).get('/api/events').set('Cookie', supervisor.cookie).expect(200)).body.events;
    expect(events).toHaveLength(1);
    expect(events[0].stationCount).toBe(4);
  });
});
