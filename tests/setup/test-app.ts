import type { AppContext } from '../../server/context';
import { loadEnv } from '../../server/env';
import { createAppHub } from '../../server/index';
import { createLogger } from '../../server/logger';
import { appVersion } from '../../server/version';
import { createTestDatabase, type TestDatabase } from './test-db';

/** An app context over a fresh migrated test database; `close()` drops it. */
export interface TestContext extends AppContext {
  database: TestDatabase;
  close(): Promise<void>;
}

/** Builds a test context: test settings, silent logs, a fresh database. */
export async function createTestContext(overrides: Record<string, string> = {}): Promise<TestContext> {
  const database = await createTestDatabase();
  const env = loadEnv({ NODE_ENV: 'test', LOG_LEVEL: 'silent', SEISIFT_DEMO_PASSWORD: 'kestrel-demo-pass', ...overrides });
  const logger = createLogger(env.LOG_LEVEL);
  const hub = createAppHub(database.db, logger, env);
  return {
    env,
    database,
    logger,
    version: appVersion,
    hub,
    async close() {
      await hub.close();
      await database.drop();
    },
  };
}
