import type { AppContext } from '@server/context';
import type { DatabaseClient } from '@server/db/client';
import { setUpMail } from '@server/email/setup';
import { loadEnv } from '@server/env';
import { createAppContext } from '@server/index';
import type { Logger } from '@server/logger';

/**
 * An app context over a database client of the caller's own (a throw-away MariaDB the test may
 * stop) with the caller's logger (to capture lines), built the way tests/setup/test-app.ts builds
 * one: test settings, the real hub, a fake SMTP server on a free port. `close()` stops the hub, the
 * analysis workers and mail, not the database.
 */
export async function contextOver(database: DatabaseClient, logger: Logger, overrides: Record<string, string> = {}): Promise<{ ctx: AppContext; close(): Promise<void> }> {
  const env = loadEnv({ NODE_ENV: 'test', LOG_LEVEL: 'info', ...overrides });
  const mail = await setUpMail({ ...env, SMTP_URL: undefined }, database.db, { fakePort: 0 });
  const ctx = createAppContext({ env, database, mailer: mail.mailer, logger });
  return {
    ctx,
    async close() {
      await ctx.close();
      await mail.close();
    },
  };
}
