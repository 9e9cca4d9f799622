import type { AppContext } from '@server/context';
import type { DatabaseClient } from '@server/db/client';
import { setUpMail } from '@server/email/setup';
import { loadEnv } from '@server/env';
import { createAppHub } from '@server/index';
import type { Logger } from '@server/logger';
import { appVersion } from '@server/version';

/**
 * An app context over a database client of the caller's own (a throw-away MariaDB the test may
 * stop) with the caller's logger (to capture lines), built the way tests/setup/test-app.ts builds
 * one: test settings, the real hub, a fake SMTP server on a free port. `close()` stops the hub and
 * mail, not the database.
 */
export async function contextOver(database: DatabaseClient, logger: Logger, overrides: Record<string, string> = {}): Promise<{ ctx: AppContext; close(): Promise<void> }> {
  const env = loadEnv({ NODE_ENV: 'test', LOG_LEVEL: 'info', ...overrides });
  const hub = createAppHub(database.db, logger, env);
  const mail = await setUpMail({ ...env, SMTP_URL: undefined }, database.db, { fakePort: 0 });
  return {
    ctx: { env, database, logger, version: appVersion, hub, mailer: mail.mailer },
    async close() {
      await hub.close();
      await mail.close();
    },
  };
}
