import type { Logger } from '@server/logger';

/** Reports a repeating operation's failures as outages: one line when it starts failing, one when it works again. */
export interface OutageLog {
  /** The operation failed: logs a warning only if it is the first failure since it last worked. */
  failed(err: unknown): void;
  /** The operation worked: ends an outage (one info line with how long and how many failures), if there was one. */
  ok(): void;
  /** Whether the operation is failing now. */
  down(): boolean;
}

/**
 * An outage logger for a task retried on a timer (the live hub reads the change log every second):
 * without it a database outage wrote the same warning every second for as long as it lasted. The
 * first failure logs `<what> failing` (warn, with the error); further failures are counted, not
 * logged; the next success logs `<what> working again` (info) with the outage's length in seconds
 * and the number of failures.
 * @param what what failed, e.g. "live hub: change log read"
 * @param now the clock, ms (injectable for tests)
 */
export function createOutageLog(logger: Logger, what: string, now: () => number = Date.now): OutageLog {
  let since: number | null = null;
  let failures = 0;
  return {
    failed(err) {
      failures++;
      if (since !== null) return;
      since = now();
      logger.warn({ err }, `${what} failing; further failures are not logged until it works again`);
    },
    ok() {
      if (since === null) return;
      const outageS = Math.round((now() - since) / 100) / 10;
      logger.info({ outageS, failures }, `${what} working again`);
      since = null;
      failures = 0;
    },
    down: () => since !== null,
  };
}
