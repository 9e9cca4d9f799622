import type { Redis } from 'ioredis';
import type { Logger } from '@server/logger';
import type { PeriodicJob } from '@server/jobs/scheduler';
import { createOutageLog } from '@server/realtime/outage-log';

/**
 * How long one instance holds a periodic job's turn, ms: the job's period less a tenth (at most
 * 5 s less), so the turn has lapsed by the next tick of whichever instance wins it next, while the
 * other instances' ticks within the period find it taken.
 * @param everyMs the job's period, ms
 */
export function turnMs(everyMs: number): number {
  return Math.max(1, everyMs - Math.min(5000, Math.floor(everyMs / 10)));
}

/**
 * Takes this period's turn of job `name` for `instanceId`: an atomic `SET key value NX PX ms`
 * (redis.io, SET: "NX -- Only set the key if it does not already exist"), so of all the instances
 * ticking within one period exactly one gets true.
 */
export async function takeTurn(redis: Redis, name: string, instanceId: string, everyMs: number): Promise<boolean> {
  const key = `seisift:periodic:${name.replace(/\s+/g, '-')}`;
  return (await redis.set(key, instanceId, 'PX', turnMs(everyMs), 'NX')) === 'OK';
}

/**
 * The app's periodic jobs made once-per-cluster: every instance keeps its own scheduler ticking,
 * and a tick runs the job only when it takes the turn (`takeTurn`). While Redis is away no
 * instance runs them (logged once per outage): claim lapse, session sweep, change-log pruning and
 * the arrivals catch-up all wait harmlessly for the next tick, whereas two instances lapsing the
 * same claims at once would write the audit row twice.
 */
export function oncePerCluster(jobs: readonly PeriodicJob[], redis: Redis, instanceId: string, logger: Logger): PeriodicJob[] {
  const outage = createOutageLog(logger, 'periodic jobs: Redis turn');
  return jobs.map((job) => ({
    ...job,
    async run() {
      let mine: boolean;
      try {
        mine = await takeTurn(redis, job.name, instanceId, job.everyMs);
        outage.ok();
      } catch (err) {
        outage.failed(err);
        return null;
      }
      return mine ? job.run() : null;
    },
  }));
}
