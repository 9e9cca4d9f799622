/**
 * `npm run dev`: the private MariaDB (started or reused), migrations and the demo seed, then the API
 * under `tsx watch` on PORT (default 3000) and Vite's dev server (default 5173) proxying /api and /ws
 * to it. Ctrl-C stops all of them, and the MariaDB when this command started it.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { createDatabaseClient } from '../db/client';
import { migrateDatabase } from '../db/migrate';
import { seedDemo } from '../db/seed-demo';
import { ConfigError, loadEnv } from '../env';
import { ensurePortFree, ensureWritableDir, openAppDatabase } from './common';
import { BootstrapError, type PrivateMariaDb } from './mariadb';

let mariadb: PrivateMariaDb | undefined;
const children: ChildProcess[] = [];

async function shutdown(code: number): Promise<never> {
  for (const c of children) c.kill('SIGTERM');
  if (mariadb?.startedHere) await mariadb.stop();
  process.exit(code);
}
process.on('SIGINT', () => void shutdown(0));
process.on('SIGTERM', () => void shutdown(0));

try {
  const env = loadEnv({ NODE_ENV: 'development', ...process.env });
  const dataDir = ensureWritableDir(env.SEISIFT_DATA_DIR, 'SEISIFT_DATA_DIR');
  await ensurePortFree(env.HOST, env.PORT, 'PORT');
  const opened = await openAppDatabase(env, dataDir);
  mariadb = opened.server;
  const databaseUrl = opened.databaseUrl;
  const database = createDatabaseClient(databaseUrl);
  await migrateDatabase(database.db);
  if (env.SEISIFT_SEED_DEMO === '1') await seedDemo(database.db, { demoPassword: env.SEISIFT_DEMO_PASSWORD });
  await database.close();

  const childEnv = { ...process.env, NODE_ENV: 'development', DATABASE_URL: databaseUrl, PORT: String(env.PORT) };
  children.push(spawn(process.execPath, ['node_modules/.bin/tsx', 'watch', 'server/index.ts'], { stdio: 'inherit', env: childEnv }));
  children.push(spawn(process.execPath, ['node_modules/.bin/vite'], { stdio: 'inherit', env: childEnv }));
  for (const c of children) c.on('exit', (code) => void shutdown(code ?? 1));
} catch (err) {
  const known = err instanceof ConfigError || err instanceof BootstrapError;
  console.error(`seisift: ${known || err instanceof Error ? (err as Error).message : String(err)}`);
  await shutdown(1);
}
