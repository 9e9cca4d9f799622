import type { AppContext } from '@server/context';
import { lapseIdleClaims } from '@server/features/queue/queue-transitions';

/** A running background job. */
export interface RunningJob {
  /** Stops the timer and waits for a run in progress. */
  stop(): Promise<void>;
}

/**
 * Every `intervalMs` (default 30 s), ends claims idle for longer than SEISIFT_CLAIM_IDLE_MINUTES
 * (`lapseIdleClaims`: in review → new, audit row `queue.claim_lapsed`, live change). Runs never
 * overlap; a failed run is logged and the next one tries again.
 */
export function startClaimLapseJob(ctx: AppContext, opts: { intervalMs?: number } = {}): RunningJob {
  let running: Promise<void> | null = null;
  const tick = () => {
    if (running) return;
    running = lapseIdleClaims({ db: ctx.database.db, notify: () => ctx.hub.notify() }, ctx.env.SEISIFT_CLAIM_IDLE_MINUTES)
      .then((rows) => {
        if (rows.length > 0) ctx.logger.info({ items: rows.map((r) => r.id) }, 'claims lapsed');
      })
      .catch((err: unknown) => ctx.logger.warn({ err }, 'claim lapse run failed'))
      .finally(() => {
        running = null;
      });
  };
  const timer = setInterval(tick, opts.intervalMs ?? 30_000);
  timer.unref();
  return {
    async stop() {
      clearInterval(timer);
      await running;
    },
  };
}
