import { mkdtempSync, rmSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Redis } from 'ioredis';
import { freePort } from '@server/bootstrap/common';
import { ensureRedisInstalled, startPrivateRedis, type PrivateRedis } from '@server/bootstrap/redis';
import { createAttemptLimiter } from '@server/auth/rate-limit';
import { createWakeupPublisher, subscribeWakeups } from '@server/cluster/change-wakeup';
import { oncePerCluster, takeTurn } from '@server/cluster/periodic-lock';
import { closeRedis, openRedis } from '@server/cluster/redis-clients';
import { createLogger } from '@server/logger';
import { AppError } from '@server/errors';

/**
 * The Redis adapters of the multi-instance mode against a real redis-server (Debian's, started
 * privately on a free loopback port by the same bootstrap `npm start` uses), two "instances" being
 * two connections.
 */
let server: PrivateRedis;
let dir: string;
const opened: Redis[] = [];
const open = (role: 'command' | 'subscriber', name: string) => {
  const r = openRedis(server.url, role, name);
  opened.push(r);
  return r;
};
const ready = async (r: Redis) => {
  while (r.status !== 'ready') await new Promise((x) => setTimeout(x, 10));
};
const logger = createLogger('silent');

beforeAll(async () => {
  ensureRedisInstalled();
  dir = mkdtempSync(join(resolve('.data'), 'test-redis-'));
  server = await startPrivateRedis({ dataDir: dir, port: await freePort(), log: () => {} });
});
afterAll(async () => {
  for (const r of opened) await closeRedis(r);
  await server?.stop();
  rmSync(dir, { recursive: true, force: true });
});

describe('Redis adapters', () => {
  it('the private Redis listens on loopback only, keeps an append-only file and never evicts', async () => {
    const r = open('command', 'config');
    await ready(r);
    const cfg = await r.config('GET', 'bind');
    expect(cfg[1]).toBe('127.0.0.1');
    expect((await r.config('GET', 'appendonly'))[1]).toBe('yes');
    expect((await r.config('GET', 'maxmemory-policy'))[1]).toBe('noeviction');
    expect((await r.config('GET', 'dir'))[1]).toBe(dir);
  });

  it('of two instances ticking within one period, exactly one takes the turn of a periodic job', async () => {
    const a = open('command', 'turn-a');
    const b = open('command', 'turn-b');
    await Promise.all([ready(a), ready(b)]);
    const both = await Promise.all([takeTurn(a, 'claim lapse', 'A', 2000), takeTurn(b, 'claim lapse', 'B', 2000)]);
    expect(both.filter(Boolean)).toHaveLength(1);
    // The turn lapses before the next period (turnMs(2000) = 1800 ms): then it can be taken again.
    await new Promise((r) => setTimeout(r, 1900));
    expect(await takeTurn(b, 'claim lapse', 'B', 2000)).toBe(true);
  });

  it('oncePerCluster runs a job on one instance per period only', async () => {
    const a = open('command', 'once-a');
    const b = open('command', 'once-b');
    await Promise.all([ready(a), ready(b)]);
    let runs = 0;
    const job = { name: 'session sweep test', everyMs: 60_000, run: async () => ((runs += 1), null) };
    const [ja] = oncePerCluster([job], a, 'A', logger);
    const [jb] = oncePerCluster([job], b, 'B', logger);
    await Promise.all([ja?.run(), jb?.run(), ja?.run(), jb?.run()]);
    expect(runs).toBe(1);
  });

  it('sign-in attempts counted on one instance are refused on the other (rate limits in Redis)', async () => {
    const a = open('command', 'limit-a');
    const b = open('command', 'limit-b');
    await Promise.all([ready(a), ready(b)]);
    const prefix = `test-${Date.now()}`;
    const limitA = createAttemptLimiter({ points: 3, durationS: 60 }, prefix, a);
    const limitB = createAttemptLimiter({ points: 3, durationS: 60 }, prefix, b);
    await limitA.consume('198.51.100.7');
    await limitB.consume('198.51.100.7');
    await limitA.consume('198.51.100.7');
    const refused = await limitB.consume('198.51.100.7').catch((e: unknown) => e);
    expect(refused).toBeInstanceOf(AppError);
    expect((refused as AppError).status).toBe(429);
    expect(Number((refused as AppError).headers?.['Retry-After'])).toBeGreaterThan(0);
    // Reset on one instance (a successful sign-in) clears it on both.
    await limitB.reset('198.51.100.7');
    await expect(limitA.check('198.51.100.7')).resolves.toBeUndefined();
  });

  it('a wake-up published by one process wakes the hub of another, not its own', async () => {
    const pubA = open('command', 'pub-a');
    const subA = open('subscriber', 'sub-a');
    const subB = open('subscriber', 'sub-b');
    await Promise.all([ready(pubA), ready(subA), ready(subB)]);
    let wokeA = 0;
    let wokeB = 0;
    await subscribeWakeups(subA, 'A', () => wokeA++);
    await subscribeWakeups(subB, 'B', () => wokeB++);
    wokeA = 0;
    wokeB = 0;
    const t0 = performance.now();
    createWakeupPublisher(pubA, 'A', logger).notify();
    while (wokeB === 0 && performance.now() - t0 < 2000) await new Promise((r) => setTimeout(r, 2));
    expect(wokeB).toBe(1);
    expect(wokeA).toBe(0);
  });
});
