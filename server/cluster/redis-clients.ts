import { Redis } from 'ioredis';

/**
 * The three kinds of Redis connection a process of the multi-instance mode opens:
 * - `command`: requests on the path of an HTTP request (queue a job, count a sign-in). It fails AT
 *   ONCE while Redis is away (no offline queue, one retry), so the request is answered 503 (or the
 *   rate limiter's in-memory insurance counts) instead of hanging;
 * - `blocking`: BullMQ's queues, workers and queue events, which wait on Redis and must retry
 *   without end (BullMQ requires `maxRetriesPerRequest: null` for workers, and a queue's first
 *   command, INFO, must not fail for good when Redis is not up yet); calls on them from a request
 *   are bounded with `withinMs` and refused at once while the connection is not ready;
 * - `subscriber`: the live-update wake-ups (pub/sub); ioredis subscribes again after a reconnect.
 * Every kind reconnects by itself, forever, at most 2 s apart.
 */
export type RedisRole = 'command' | 'blocking' | 'subscriber';

/**
 * Delay before reconnect attempt `times` (1, 2, …), ms: 100 · times, at most 2000. Linear rather
 * than exponential so that a restarted Redis is found again within 2 s.
 */
export function reconnectDelayMs(times: number): number {
  return Math.min(2000, Math.max(1, times) * 100);
}

/** Opens a Redis connection of `role` to `url` (redis://host:port[/db]). `name` shows in CLIENT LIST. */
export function openRedis(url: string, role: RedisRole, name: string): Redis {
  return new Redis(url, {
    connectionName: `seisift-${name}`.replace(/[^A-Za-z0-9_-]/g, '-'),
    connectTimeout: 2000,
    retryStrategy: reconnectDelayMs,
    ...(role === 'command'
      ? { enableOfflineQueue: false, maxRetriesPerRequest: 1 }
      : role === 'blocking'
        ? { maxRetriesPerRequest: null, enableReadyCheck: false }
        : { maxRetriesPerRequest: null }),
  });
}

/** Closes a connection: QUIT when it is up, else a plain disconnect (never waits for an absent server). */
export async function closeRedis(redis: Redis): Promise<void> {
  if (redis.status === 'ready') {
    await redis.quit().catch(() => redis.disconnect());
  } else redis.disconnect();
}

/** A Redis call that did not answer in time (`withinMs`): counts as Redis being away. */
export class RedisTimeoutError extends Error {
  override readonly name = 'RedisTimeoutError';
}

/**
 * `p`, or a RedisTimeoutError after `ms`. For calls on connections that wait for Redis to come back
 * (BullMQ's, which must), where a request cannot wait that long.
 */
export function withinMs<T>(p: Promise<T>, ms: number, what: string): Promise<T> {
  let timer: NodeJS.Timeout | undefined;
  return Promise.race([
    p.finally(() => clearTimeout(timer)),
    new Promise<never>((_, reject) => {
      timer = setTimeout(() => reject(new RedisTimeoutError(`${what}: Redis did not answer within ${ms} ms`)), ms);
      timer.unref();
    }),
  ]);
}

/** Messages of ioredis (and of BullMQ over it) that mean "Redis cannot be reached now". */
const REDIS_DOWN = /Stream isn't writeable|Connection is closed|enableOfflineQueue|ECONNREFUSED|ECONNRESET|ETIMEDOUT|EPIPE|connect ETIMEDOUT|Reached the max retries per request|LOADING|READONLY|redis.*(not ready|unavailable)/i;

/**
 * True when `err` (or a `cause` it wraps, up to 5 levels) says Redis is unreachable right now, as
 * opposed to a fault of the request: such errors become 503 + Retry-After.
 */
export function isRedisDown(err: unknown): boolean {
  let e: unknown = err;
  for (let depth = 0; depth < 5 && e instanceof Error; depth++) {
    if (e.name === 'MaxRetriesPerRequestError' || e.name === 'RedisTimeoutError' || REDIS_DOWN.test(e.message)) return true;
    const code = (e as { code?: unknown }).code;
    if (typeof code === 'string' && REDIS_DOWN.test(code)) return true;
    e = (e as { cause?: unknown }).cause;
  }
  return false;
}
