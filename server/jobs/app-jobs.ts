import { createSessionStore } from '@server/auth/sessions';
import type { AppContext } from '@server/context';
import { catchUpArrivals } from '@server/features/events/candidate-events';
import { syncEventsFromGroups } from '@server/features/events/event-service';
import { lapseIdleClaims } from '@server/features/queue/queue-transitions';
import { pruneChanges } from '@server/realtime/change-log';
import type { PeriodicJob } from './scheduler';

/** Items the arrivals catch-up reads per round (each round is one query and one regrouping). */
const CATCH_UP_BATCH = 500;

/**
 * The app's periodic jobs, all run by the one scheduler (server/jobs/scheduler.ts) that
 * `startServer` starts:
 * - claim lapse, every 30 s: claims idle for longer than SEISIFT_CLAIM_IDLE_MINUTES go back to new
 *   (`lapseIdleClaims`: audit row `queue.claim_lapsed`, live change);
 * - session sweep, hourly and at start: expired sessions are refused when presented anyway; this
 *   removes the ones nobody presents again;
 * - change-log pruning, hourly and at start: live-update changes older than
 *   SEISIFT_CHANGE_LOG_KEEP_HOURS go (without it change_log grows without limit);
 * - arrivals catch-up, every minute and at start: queue items stored without an arrival row (by
 *   writers other than the ingest, which stores it in its own transaction) join their candidate
 *   events here, never on a read.
 */
export function appJobs(ctx: AppContext): PeriodicJob[] {
  const db = ctx.database.db;
  const notify = (): void => ctx.hub.notify();
  const sessions = createSessionStore(db, { idleHours: ctx.env.SEISIFT_SESSION_IDLE_HOURS });
  return [
    {
      name: 'claim lapse',
      everyMs: 30_000,
      async run() {
        const rows = await lapseIdleClaims({ db, notify }, ctx.env.SEISIFT_CLAIM_IDLE_MINUTES);
        return rows.length > 0 ? { items: rows.map((r) => r.id) } : null;
      },
    },
    {
      name: 'session sweep',
      everyMs: 3_600_000,
      runAtStart: true,
      async run() {
        await sessions.deleteExpired();
        return null;
      },
    },
    {
      name: 'change-log pruning',
      everyMs: 3_600_000,
      runAtStart: true,
      async run() {
        const deleted = await pruneChanges(db, new Date(Date.now() - ctx.env.SEISIFT_CHANGE_LOG_KEEP_HOURS * 3_600_000));
        return deleted > 0 ? { deleted } : null;
      },
    },
    {
      name: 'arrivals catch-up',
      everyMs: 60_000,
      runAtStart: true,
      async run() {
        let items = 0;
        for (;;) {
          const n = await catchUpArrivals({ db, notify }, CATCH_UP_BATCH);
          items += n;
          if (n < CATCH_UP_BATCH) {
            // Events are built from the candidate groups here, not on a read (the catalogue export
            // lists them; no GET writes).
            const events = (await syncEventsFromGroups({ db, notify })).length;
            return items > 0 || events > 0 ? { items, events } : null;
          }
        }
      },
    },
  ];
}
