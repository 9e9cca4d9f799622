import { randomUUID } from 'node:crypto';
import { hostname } from 'node:os';
import { Queue, QueueEvents } from 'bullmq';
import type { Redis } from 'ioredis';
import type { Logger } from '@server/logger';
import { ANALYSE_QUEUE, createQueuedUploads, type UploadDispatcher } from './analyse-jobs';
import { createWakeupPublisher, subscribeWakeups, type WakeupPublisher } from './change-wakeup';
import { closeRedis, openRedis } from './redis-clients';

/** What /api/health says of Redis and the analysis workers (multi-instance mode). */
export interface ClusterHealth {
  redis: { ok: boolean; latencyMs?: number; error?: string };
  /** Worker processes connected to the analysis queue, and its jobs by state; null while Redis is away. */
  workers: { connected: number; names: string[] } | null;
  jobs: { waiting: number; active: number; delayed: number; failed: number } | null;
}

/**
 * An app instance's link to the rest of the cluster through Redis: the queue it sends analysis jobs
 * to (and the events of their completion), the wake-ups of the live hubs (publish and subscribe),
 * the connection the rate limiters and the periodic jobs' turns use, and the health of all that.
 */
export interface ClusterLink {
  /** This process's id in the cluster (host, pid and a random part). */
  instanceId: string;
  /** The command connection (fails at once while Redis is away): rate limits, periodic turns. */
  redis: Redis;
  uploads: UploadDispatcher;
  publisher: WakeupPublisher;
  /** Resolves once the command connection is up, or after `ms` (an instance starts without Redis too). */
  ready(ms: number): Promise<boolean>;
  /** Wakes `wake` (the hub) whenever another process committed change-log rows. */
  subscribe(wake: () => void): Promise<void>;
  health(): Promise<ClusterHealth>;
  close(): Promise<void>;
}

/** A cluster-wide id for this process. */
export function newInstanceId(kind: 'app' | 'worker'): string {
  return `${kind}-${hostname()}-${process.pid}-${randomUUID().slice(0, 8)}`;
}

const timeout = <T>(p: Promise<T>, ms: number, what: string): Promise<T> =>
  Promise.race([p, new Promise<never>((_, reject) => setTimeout(() => reject(new Error(`${what} timed out after ${ms} ms`)), ms).unref())]);

/**
 * Opens the link. Nothing here waits for Redis: an instance starts (and serves everything but
 * uploads) while Redis is away, and every connection reconnects by itself.
 */
export function openClusterLink(opts: { redisUrl: string; logger: Logger; waitMs: number; instanceId?: string }): ClusterLink {
  const instanceId = opts.instanceId ?? newInstanceId('app');
  const redis = openRedis(opts.redisUrl, 'command', `${instanceId}-cmd`);
  const subscriber = openRedis(opts.redisUrl, 'subscriber', `${instanceId}-sub`);
  const queueConnection = openRedis(opts.redisUrl, 'blocking', `${instanceId}-queue`);
  const eventsConnection = openRedis(opts.redisUrl, 'blocking', `${instanceId}-events`);
  // The errors of a connection that is reconnecting are expected; the outage logs report them once.
  for (const c of [redis, subscriber, queueConnection, eventsConnection]) c.on('error', () => {});
  const queue = new Queue(ANALYSE_QUEUE, { connection: queueConnection });
  queue.on('error', () => {});
  const events = new QueueEvents(ANALYSE_QUEUE, { connection: eventsConnection });
  events.on('error', () => {});
  const uploads = createQueuedUploads({ queue, events, waitMs: opts.waitMs, logger: opts.logger, ready: () => queueConnection.status === 'ready' });
  return {
    instanceId,
    redis,
    uploads,
    publisher: createWakeupPublisher(redis, instanceId, opts.logger),
    async ready(ms) {
      const deadline = Date.now() + ms;
      while (redis.status !== 'ready' && Date.now() < deadline) await new Promise((r) => setTimeout(r, 50));
      return redis.status === 'ready';
    },
    subscribe: (wake) => subscribeWakeups(subscriber, instanceId, wake),
    async health() {
      const started = performance.now();
      try {
        await timeout(redis.ping(), 2000, 'Redis PING');
      } catch (err) {
        return { redis: { ok: false, error: err instanceof Error ? err.message : 'unreachable' }, workers: null, jobs: null };
      }
      const latencyMs = Math.round((performance.now() - started) * 10) / 10;
      try {
        if (queueConnection.status !== 'ready') throw new Error(`the queue's connection is ${queueConnection.status}`);
        const [workers, counts] = await timeout(Promise.all([queue.getWorkers(), queue.getJobCounts('waiting', 'active', 'delayed', 'failed')]), 2000, 'Redis queue state');
        const names = workers.map((w) => String(w.name ?? '')).filter(Boolean).sort();
        return {
          redis: { ok: true, latencyMs },
          workers: { connected: workers.length, names },
          jobs: { waiting: counts.waiting ?? 0, active: counts.active ?? 0, delayed: counts.delayed ?? 0, failed: counts.failed ?? 0 },
        };
      } catch (err) {
        return { redis: { ok: false, error: err instanceof Error ? err.message : 'unreachable' }, workers: null, jobs: null };
      }
    },
    async close() {
      await events.close().catch(() => {});
      await queue.close().catch(() => {});
      await Promise.all([closeRedis(subscriber), closeRedis(queueConnection), closeRedis(eventsConnection), closeRedis(redis)]);
    },
  };
}
