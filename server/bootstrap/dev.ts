/**
 * `npm run dev`: the private MariaDB (started or reused), migrations and the demo seed, then the API
 * under `tsx watch` on PORT (default 3000) and Vite's dev server (default 5173) proxying /api and /ws
 * to it. Ctrl-C stops all of them, and the MariaDB when this command started it.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { ConfigError, loadEnv } from '@server/env';
import { prepareApp } from './common';
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
  const prepared = await prepareApp(env);
  mariadb = prepared.server;
  const { database, databaseUrl } = prepared;
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
