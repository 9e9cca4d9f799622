import type { ClusterLink } from './cluster/cluster-link';
import type { DatabaseClient } from './db/client';
import type { Mailer } from './email/mailer';
import type { Env } from './env';
import type { EscalationListener } from './features/queue/queue-transitions';
import type { AnalysisPool } from './jobs/analysis-pool';
import type { Logger } from './logger';
import type { RealtimeHub } from './realtime/hub';

/**
 * What every route, service and job may use. Built in one place, `createAppContext`
 * (server/index.ts), by the server, the start script, the tests and the benchmarks alike.
 */
export interface AppContext {
  env: Env;
  database: DatabaseClient;
  logger: Logger;
  /** The app version (package.json). */
  version: string;
  /** The one live-update hub: call `hub.notify()` after committing a change-log row. */
  hub: RealtimeHub;
  /** Outgoing mail (SMTP_URL, or the local fake SMTP server whose messages the mailbox page shows). */
  mailer: Mailer;
  /** The analysis worker threads (they start with the first window). */
  analysisPool: AnalysisPool;
  /** What runs after an escalation commits, in order (the supervisors' inbox entries and e-mail). */
  escalationListeners: readonly EscalationListener[];
  /**
   * The multi-instance mode's link to Redis (issue 20): uploads go to the analysis job queue, the
   * hub's wake-ups to the other instances, the rate limits and the periodic jobs' turns to Redis.
   * Absent in the single-process mode (the default of `npm start` and `npm test`).
   */
  cluster?: ClusterLink;
}
