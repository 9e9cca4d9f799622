import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, rmSync, writeFileSync } from 'node:fs';
import { createServer } from 'node:net';
import { join, resolve, sep } from 'node:path';
import { createDatabaseClient, type DatabaseClient } from '@server/db/client';
import { migrateDatabase } from '@server/db/migrate';
import { seedDemo } from '@server/db/seed-demo';
import type { Env } from '@server/env';
import { BootstrapError, ensureMariaDbInstalled, provisionDatabase, startPrivateMariaDb, type PrivateMariaDb } from './mariadb';

/** Fails with one line when `dir` cannot be created or written. Returns the absolute path. */
export function ensureWritableDir(dir: string, variable: string): string {
  const abs = resolve(dir);
  try {
    // One level at a time: Node's recursive mkdir can spin on file systems such as /proc.
    const parts = abs.split(sep).filter(Boolean);
    let path: string = sep;
    for (const part of parts) {
      path = join(path, part);
      if (!existsSync(path)) mkdirSync(path);
    }
    const probe = join(abs, `.write-probe-${process.pid}`);
    writeFileSync(probe, 'ok');
    rmSync(probe);
  } catch (err) {
    const reason = err instanceof Error && 'code' in err ? String((err as NodeJS.ErrnoException).code) : 'unknown error';
    throw new BootstrapError(`${variable}: the data folder ${abs} is not writable (${reason})`);
  }
  return abs;
}

/** Fails with one line when host:port is taken. */
export async function ensurePortFree(host: string, port: number, variable: string): Promise<void> {
  await new Promise<void>((ok, fail) => {
    const probe = createServer();
    probe.once('error', (err: NodeJS.ErrnoException) =>
      fail(new BootstrapError(`${variable}: port ${port} on ${host} is ${err.code === 'EADDRINUSE' ? 'already in use' : `not usable (${err.code})`}; stop the other program or choose another port`)),
    );
    probe.listen(port, host, () => probe.close(() => ok()));
  });
}

/** A free TCP port on 127.0.0.1, chosen by the kernel. */
export async function freePort(): Promise<number> {
  return new Promise((ok, fail) => {
    const probe = createServer();
    probe.once('error', fail);
    probe.listen(0, '127.0.0.1', () => {
      const addr = probe.address();
      const port = typeof addr === 'object' && addr ? addr.port : 0;
      probe.close(() => ok(port));
    });
  });
}

/**
 * `tsc --noEmit` over the whole project, then `eslint .` (eslint.config.js: type-aware rules and
 * the import boundaries). Throws BootstrapError naming the step that found errors; their messages
 * are already on the terminal.
 */
export function checkTypesAndLint(): void {
  for (const [what, bin, args] of [
    ['type check', 'node_modules/.bin/tsc', ['--noEmit', '-p', 'tsconfig.json']],
    ['lint', 'node_modules/.bin/eslint', ['.']],
  ] as const) {
    console.log(`seisift: ${what}…`);
    const r = spawnSync(process.execPath, [bin, ...args], { stdio: 'inherit' });
    if (r.status !== 0) throw new BootstrapError(`the ${what} found errors (see above)`);
  }
}

/**
 * Builds the client with Vite (its own binary, so it can be stopped by PID).
 * @param opts.devPages keep the design reference in the build (the test run's build; never `npm start`'s)
 */
export function buildClient(opts: { devPages?: boolean } = {}): void {
  // VITE_SEISIFT_DEV_PAGES=1 keeps the design reference in the build (client/src/config/build-flags.ts); production builds leave it out.
  const env = { ...process.env, VITE_SEISIFT_DEV_PAGES: opts.devPages ? '1' : '' };
  const r = spawnSync(process.execPath, ['node_modules/.bin/vite', 'build', '--logLevel', 'warn'], { stdio: 'inherit', env });
  if (r.status !== 0) throw new BootstrapError('the client build (vite build) failed; see the messages above');
}

/** Seconds since `t0` (performance.now()), one decimal. */
export function secondsSince(t0: number): string {
  return ((performance.now() - t0) / 1000).toFixed(1);
}

/**
 * The app's database: DATABASE_URL when set, else the private MariaDB in `<dataDir>/mariadb`
 * (installed when missing, started or reused, with the `seisift` database and user provisioned).
 * A server this call started is stopped again when provisioning fails.
 */
export async function openAppDatabase(env: Env, dataDir: string): Promise<{ databaseUrl: string; server?: PrivateMariaDb }> {
  if (env.DATABASE_URL) return { databaseUrl: env.DATABASE_URL };
  ensureMariaDbInstalled();
  const server = await startPrivateMariaDb({ dataDir: join(dataDir, 'mariadb'), port: env.SEISIFT_DB_PORT });
  try {
    const databaseUrl = await provisionDatabase(server, { database: 'seisift', user: 'seisift', password: env.SEISIFT_DB_PASSWORD });
    return { databaseUrl, server };
  } catch (err) {
    if (server.startedHere) await server.stop();
    throw err;
  }
}

/** What `prepareApp` leaves ready: an open, migrated (and seeded) database. */
export interface PreparedApp {
  databaseUrl: string;
  database: DatabaseClient;
  /** The private MariaDB, when one is in use. */
  server?: PrivateMariaDb;
  /** The rows the demo seed added (empty when all were present), or null when seeding is off. */
  seeded: string[] | null;
}

/**
 * The steps `npm start` and `npm run dev` share before serving: a writable data folder, a free
 * HTTP port, the app database (private MariaDB or DATABASE_URL), migrations, and the demo seed
 * when SEISIFT_SEED_DEMO=1. On failure it closes what it opened and stops a MariaDB it started.
 */
export async function prepareApp(env: Env): Promise<PreparedApp> {
  const dataDir = ensureWritableDir(env.SEISIFT_DATA_DIR, 'SEISIFT_DATA_DIR');
  await ensurePortFree(env.HOST, env.PORT, 'PORT');
  const { databaseUrl, server } = await openAppDatabase(env, dataDir);
  const database = createDatabaseClient(databaseUrl);
  try {
    await migrateDatabase(database.db);
    const seeded = env.SEISIFT_SEED_DEMO === '1' ? (await seedDemo(database.db, { demoPassword: env.SEISIFT_DEMO_PASSWORD })).created : null;
    return { databaseUrl, database, server, seeded };
  } catch (err) {
    await database.close().catch(() => {});
    if (server?.startedHere) await server.stop();
    throw err;
  }
}
