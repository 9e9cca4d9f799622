import { mkdirSync, mkdtempSync, rmSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { freePort } from '@server/bootstrap/common';
import { provisionDatabase, startPrivateMariaDb, type PrivateMariaDb } from '@server/bootstrap/mariadb';
import { createDatabaseClient } from '@server/db/client';
import { migrateDatabase } from '@server/db/migrate';

/**
 * A throw-away private MariaDB of its own (data under .data/<prefix>-XXXX, a free port) that a
 * fault test or benchmark may stop and start at will without touching the shared test server or
 * the `npm start` data. `cleanup()` stops it and removes the folder; call it in every exit path.
 */
export interface ThrowawayDb {
  /** mysql:// URL of the migrated app database. */
  url: string;
  port: number;
  dataDir: string;
  /** PID of the running mariadbd (changes on restart). */
  pid(): number;
  /** Stops mariadbd (SIGTERM, waits for exit). */
  stop(): Promise<void>;
  /** Starts it again on the same port and data. */
  start(): Promise<void>;
  /** Stops it and deletes its data folder. */
  cleanup(): Promise<void>;
}

/** Stops a server, also one reused from an earlier run (which PrivateMariaDb.stop() leaves running). */
async function stopServer(server: PrivateMariaDb | undefined): Promise<void> {
  if (!server) return;
  if (server.startedHere) return server.stop();
  try {
    process.kill(server.pid, 'SIGTERM');
  } catch {
    return;
  }
  const deadline = Date.now() + 30_000;
  while (Date.now() < deadline) {
    try {
      process.kill(server.pid, 0);
    } catch {
      return;
    }
    await new Promise((r) => setTimeout(r, 100));
  }
}

/** Starts, provisions and migrates a throw-away MariaDB. */
export async function startThrowawayDb(prefix: string, opts: { keepDataDir?: string } = {}): Promise<ThrowawayDb> {
  const base = resolve('.data');
  mkdirSync(base, { recursive: true });
  const dataDir = opts.keepDataDir ? resolve(opts.keepDataDir) : mkdtempSync(join(base, `${prefix}-`));
  const port = await freePort();
  let server: PrivateMariaDb | undefined = await startPrivateMariaDb({ dataDir, port, log: () => {} });
  let url: string;
  try {
    url = await provisionDatabase(server, { database: 'seisift_fault', user: 'seisift_fault', password: 'seisift-fault-pass' });
    const client = createDatabaseClient(url);
    try {
      await migrateDatabase(client.db);
    } finally {
      await client.close();
    }
  } catch (err) {
    await stopServer(server);
    if (!opts.keepDataDir) rmSync(dataDir, { recursive: true, force: true });
    throw err;
  }
  return {
    url,
    port,
    dataDir,
    pid: () => server?.pid ?? 0,
    async stop() {
      await stopServer(server);
      server = undefined;
    },
    async start() {
      if (server) return;
      server = await startPrivateMariaDb({ dataDir, port, log: () => {} });
    },
    async cleanup() {
      await stopServer(server);
      server = undefined;
      if (!opts.keepDataDir) rmSync(dataDir, { recursive: true, force: true });
    },
  };
}
