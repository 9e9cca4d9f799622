import { mkdirSync, mkdtempSync, rmSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { freePort } from '@server/bootstrap/common';
import { provisionDatabase, startPrivateMariaDb, type PrivateMariaDb } from '@server/bootstrap/mariadb';

/** What a benchmark has started: stopped in reverse order by `cleanup`. */
export interface BenchCleanups {
  cleanups: Array<() => Promise<void>>;
  cleanup: () => Promise<void>;
}

/**
 * The benchmark's clean-up list, also run on Ctrl-C (exit 130) and SIGTERM (exit 143), so an
 * interrupted run leaves no MariaDB or server behind.
 */
export function cleanupsOnExit(): BenchCleanups {
  const cleanups: Array<() => Promise<void>> = [];
  const cleanup = async () => {
    while (cleanups.length > 0) await cleanups.pop()?.().catch(() => {});
  };
  process.once('SIGINT', () => void cleanup().then(() => process.exit(130)));
  process.once('SIGTERM', () => void cleanup().then(() => process.exit(143)));
  return { cleanups, cleanup };
}

/**
 * A throw-away private MariaDB for one benchmark run (data under .data/<prefix>…, on a free
 * loopback port), with its database and user; stopping it and removing its data join `cleanups`.
 * @returns the server and the database URL
 */
export async function benchDatabase(prefix: string, cleanups: BenchCleanups['cleanups']): Promise<{ maria: PrivateMariaDb; url: string }> {
  mkdirSync(resolve('.data'), { recursive: true });
  const dataDir = mkdtempSync(join(resolve('.data'), prefix));
  cleanups.push(async () => rmSync(dataDir, { recursive: true, force: true }));
  const maria: PrivateMariaDb = await startPrivateMariaDb({ dataDir, port: await freePort(), log: () => {} });
  cleanups.push(() => maria.stop());
  const url = await provisionDatabase(maria, { database: 'seisift_bench', user: 'seisift_bench', password: 'seisift-bench-pass' });
  return { maria, url };
}
