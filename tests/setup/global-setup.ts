/**
 * vitest global setup: a throw-away private MariaDB for this test run (its own data folder under
 * .data/, a free port), unless SEISIFT_TEST_DB_ADMIN_URL already points at one (npm test sets it up
 * the same way). Test files make their own databases from it with tests/setup/test-db.ts.
 */
import { existsSync, mkdtempSync, mkdirSync, readdirSync, readFileSync, rmSync, statSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { freePort } from '@server/bootstrap/common';
import { provisionDatabase, startPrivateMariaDb, type PrivateMariaDb } from '@server/bootstrap/mariadb';

let server: PrivateMariaDb | undefined;

/** Removes throw-away folders of earlier runs whose MariaDB is no longer running (a run that was killed). */
function removeStaleTestFolders(base: string): void {
  for (const name of readdirSync(base)) {
    if (!name.startsWith('test-db-')) continue;
    const dir = join(base, name);
    const pidFile = join(dir, 'mariadb.pid');
    const pid = existsSync(pidFile) ? Number(readFileSync(pidFile, 'utf8').trim()) : NaN;
    let alive = false;
    if (Number.isInteger(pid) && pid > 0) {
      try {
        process.kill(pid, 0);
        alive = true;
      } catch {
        alive = false;
      }
    }
    // A folder without a pid file may be one that another run is initialising right now: keep young ones.
    const young = Date.now() - statSync(dir).mtimeMs < 10 * 60_000;
    if (!alive && (existsSync(pidFile) || !young)) rmSync(dir, { recursive: true, force: true });
  }
}
let dataDir: string | undefined;

export async function setup(): Promise<void> {
  if (process.env.SEISIFT_TEST_DB_ADMIN_URL) return;
  const base = resolve('.data');
  mkdirSync(base, { recursive: true });
  removeStaleTestFolders(base);
  dataDir = mkdtempSync(join(base, 'test-db-'));
  server = await startPrivateMariaDb({ dataDir, port: await freePort(), log: () => {} });
  const url = await provisionDatabase(server, { database: 'seisift_test', user: 'seisift_test', password: 'seisift-test-pass', grantPattern: 'seisift\\_test%' });
  process.env.SEISIFT_TEST_DB_ADMIN_URL = url;
}

export async function teardown(): Promise<void> {
  await server?.stop();
  if (dataDir) rmSync(dataDir, { recursive: true, force: true });
}
