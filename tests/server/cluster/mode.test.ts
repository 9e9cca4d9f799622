import { describe, expect, it } from 'vitest';
import { ConfigError } from '@server/env';
import { instancePorts, MAX_PROCESSES, parseStartArgs } from '@server/cluster/mode';
import { coalesce, wakesHub } from '@server/cluster/change-wakeup';
import { turnMs } from '@server/cluster/periodic-lock';
import { isRedisDown, reconnectDelayMs, RedisTimeoutError, withinMs } from '@server/cluster/redis-clients';
import { testHoldFor } from '@server/cluster/test-hold';

describe('npm start mode selection (parseStartArgs)', () => {
  it('no arguments: the single-process mode, as before', () => {
    expect(parseStartArgs([])).toEqual({ mode: 'single' });
  });
  it('--instances N --workers M, in either spelling; the missing count is 1', () => {
    expect(parseStartArgs(['--instances', '2', '--workers', '3'])).toEqual({ mode: 'cluster', instances: 2, workers: 3 });
    expect(parseStartArgs(['--workers=4'])).toEqual({ mode: 'cluster', instances: 1, workers: 4 });
    expect(parseStartArgs(['--instances=2'])).toEqual({ mode: 'cluster', instances: 2, workers: 1 });
  });
  it('refuses unknown arguments, bad counts and repeats with a message naming them', () => {
    expect(() => parseStartArgs(['--instance', '2'])).toThrow(/unknown argument "--instance"/);
    expect(() => parseStartArgs(['--instances', '0'])).toThrow(ConfigError);
    expect(() => parseStartArgs(['--workers', 'two'])).toThrow(/--workers needs a whole number/);
    expect(() => parseStartArgs(['--workers'])).toThrow(/got nothing/);
    expect(() => parseStartArgs(['--instances', String(MAX_PROCESSES + 1)])).toThrow(ConfigError);
    expect(() => parseStartArgs(['--workers', '1', '--workers', '2'])).toThrow(/given twice/);
  });
  it('instance ports are consecutive from PORT, and stop at 65535', () => {
    expect(instancePorts(5305, 3)).toEqual([5305, 5306, 5307]);
    expect(() => instancePorts(65535, 2)).toThrow(/65536/);
  });
});

describe('live wake-ups (pure parts)', () => {
  it('calls within one turn of the event loop publish once; a later call publishes again', async () => {
    let sent = 0;
    const notify = coalesce(() => sent++);
    notify();
    notify();
    notify();
    expect(sent).toBe(0);
    await new Promise((r) => setImmediate(r));
    expect(sent).toBe(1);
    notify();
    await new Promise((r) => setImmediate(r));
    expect(sent).toBe(2);
  });
  it("a hub is not woken by its own process's message", () => {
    expect(wakesHub('app-a', 'app-a')).toBe(false);
    expect(wakesHub('worker-b', 'app-a')).toBe(true);
  });
});

describe('Redis helpers', () => {
  it('reconnects 100 ms apart per attempt, never more than 2 s', () => {
    expect([1, 2, 5, 20, 1000].map(reconnectDelayMs)).toEqual([100, 200, 500, 2000, 2000]);
  });
  it('a periodic turn lasts less than the period, so the next tick can take it', () => {
    expect(turnMs(30_000)).toBe(27_000);
    expect(turnMs(3_600_000)).toBe(3_595_000);
    expect(turnMs(1000)).toBe(900);
  });
  it('tells an unreachable Redis from other errors', async () => {
    expect(isRedisDown(new Error("Stream isn't writeable and enableOfflineQueue options is false"))).toBe(true);
    expect(isRedisDown(Object.assign(new Error('connect'), { code: 'ECONNREFUSED' }))).toBe(true);
    expect(isRedisDown(new Error('wrapper', { cause: new Error('Connection is closed.') }))).toBe(true);
    expect(isRedisDown(new Error('ERR wrong number of arguments'))).toBe(false);
    const late = withinMs(new Promise(() => {}), 20, 'queue job');
    await expect(late).rejects.toBeInstanceOf(RedisTimeoutError);
    expect(isRedisDown(await late.catch((e: unknown) => e))).toBe(true);
    await expect(withinMs(Promise.resolve(7), 1000, 'x')).resolves.toBe(7);
  });
  it('the test hold applies only under NODE_ENV=test, with its setting, to files named for it', () => {
    expect(testHoldFor('hold-before-commit-1.mseed', '500', 'test')).toEqual({ where: 'before-commit', ms: 500 });
    expect(testHoldFor('hold-after-commit-x.csv', '500', 'test')).toEqual({ where: 'after-commit', ms: 500 });
    expect(testHoldFor('hold-before-commit-1.mseed', '500', 'production')).toBeNull();
    expect(testHoldFor('hold-before-commit-1.mseed', undefined, 'test')).toBeNull();
    expect(testHoldFor('kv02.mseed', '500', 'test')).toBeNull();
  });
});
