import type { AppContext } from '@server/context';
import type { FakeSmtpServer } from '@server/email/fake-smtp';
import { setUpMail } from '@server/email/setup';
import { loadEnv } from '@server/env';
import { createAppContext } from '@server/index';
import { createLogger } from '@server/logger';
import { createTestDatabase, type TestDatabase } from './test-db';

/** An app context over a fresh migrated test database; `close()` drops it. */
export interface TestContext extends AppContext {
  database: TestDatabase;
  /** The local fake SMTP server this context's mailer sends to (its messages land in mail_messages). */
  fakeSmtp: FakeSmtpServer;
  close(): Promise<void>;
}

/** Builds a test context: test settings, silent logs, a fresh database. */
export async function createTestContext(overrides: Record<string, string> = {}): Promise<TestContext> {
  const database = await createTestDatabase();
  const env = loadEnv({ NODE_ENV: 'test', LOG_LEVEL: 'silent', SEISIFT_DEMO_PASSWORD: 'kestrel-demo-pass', ...overrides });
  // A fake SMTP server of its own on a free loopback port (SMTP_URL is ignored in tests).
  const mail = await setUpMail({ ...env, SMTP_URL: undefined }, database.db, { fakePort: 0 });
  if (!mail.fake) throw new Error('the test fake SMTP server did not start');
  const fakeSmtp = mail.fake;
  const ctx = createAppContext({ env, database, mailer: mail.mailer, logger: createLogger(env.LOG_LEVEL) });
  return {
    ...ctx,
    database,
    fakeSmtp,
    async close() {
      await ctx.close();
      await mail.close();
      await database.drop();
    },
  };
}
