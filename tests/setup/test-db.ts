import { randomBytes } from 'node:crypto';
import mysql from 'mysql2/promise';
import { createDatabaseClient, type DatabaseClient } from '@server/db/client';
import { migrateDatabase } from '@server/db/migrate';

/** A migrated database of its own for one test file, dropped by `drop()`. */
export interface TestDatabase extends DatabaseClient {
  url: string;
  name: string;
  drop(): Promise<void>;
}

/**
 * Creates `seisift_test_<random>` on the run's throw-away MariaDB (see global-setup.ts), applies
 * every migration and returns a client. Real MariaDB, no mocks.
 */
export async function createTestDatabase(): Promise<TestDatabase> {
  const adminUrl = process.env.SEISIFT_TEST_DB_ADMIN_URL;
  if (!adminUrl) throw new Error('SEISIFT_TEST_DB_ADMIN_URL is not set: run tests through vitest with tests/setup/global-setup.ts (npm test does)');
  const name = `seisift_test_${randomBytes(5).toString('hex')}`;
  const conn = await mysql.createConnection(adminUrl);
  await conn.query(`CREATE DATABASE \`${name}\` CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci`);
  await conn.end();
  const url = adminUrl.replace(/\/[^/]*$/, `/${name}`);
  const client = createDatabaseClient(url);
  await migrateDatabase(client.db);
  return {
    ...client,
    url,
    name,
    async drop() {
      await client.close();
      const c = await mysql.createConnection(adminUrl);
      await c.query(`DROP DATABASE IF EXISTS \`${name}\``);
      await c.end();
    },
  };
}
