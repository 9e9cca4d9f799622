import type { Logger } from '@server/logger';

/** A piece of background work that runs every so often. */
export interface PeriodicJob {
  /** Name for the log. */
  name: string;
  /** Time between the starts of two runs, ms. */
  everyMs: number;
  /** Also run once right away (work that piled up while the app was stopped). */
  runAtStart?: boolean;
  /** One run. Resolves with what it did, for the log, or null when there was nothing to do. */
  run(): Promise<Record<string, unknown> | null>;
}

/** The running scheduler. */
export interface Scheduler {
  /** Runs `name` now, after a run of it in progress ends (tests, and work that should not wait). */
  runNow(name: string): Promise<void>;
  /** Stops every timer and waits for the runs in progress. */
  stop(): Promise<void>;
}

/**
 * The one scheduler of periodic jobs: one timer per job, runs of the same job never overlap (a
 * tick during a run is skipped), a failed run is logged as a warning and the next tick tries again,
 * and the timers do not keep the process alive.
 */
export function startScheduler(jobs: readonly PeriodicJob[], logger: Logger): Scheduler {
  const running = new Map<string, Promise<void>>();
  let stopped = false;
  const start = (job: PeriodicJob): Promise<void> => {
    const current = running.get(job.name);
    if (current) return current;
    const run = job
      .run()
      .then((did) => {
        if (did) logger.info({ job: job.name, ...did }, `${job.name}: done`);
      })
      .catch((err: unknown) => logger.warn({ err, job: job.name }, `${job.name}: run failed`))
      .finally(() => running.delete(job.name));
    running.set(job.name, run);
    return run;
  };
  const timers = jobs.map((job) => {
    if (job.runAtStart) void start(job);
    const timer = setInterval(() => {
      if (!stopped) void start(job);
    }, job.everyMs);
    timer.unref();
    return timer;
  });
  return {
    async runNow(name) {
      const job = jobs.find((j) => j.name === name);
      if (!job) throw new Error(`no periodic job named "${name}"`);
      await running.get(name);
      await start(job);
    },
    async stop() {
      stopped = true;
      for (const t of timers) clearInterval(t);
      await Promise.all(running.values());
    },
  };
}
