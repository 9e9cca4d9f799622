import type { DatabaseClient } from './db/client';
import type { Mailer } from './email/mailer';
import type { Env } from './env';
import type { Logger } from './logger';
import type { RealtimeHub } from './realtime/hub';

/** What every route and service may use; built once at start (or per test). */
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
}
