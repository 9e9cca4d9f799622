/**
 * `npm start -- --instances N --workers M`: the multi-instance mode on one machine (issue 20). The
 * same preparation as the single mode (private MariaDB or DATABASE_URL, migrations, demo seed and
 * demo windows, the client build), plus a private Redis under SEISIFT_DATA_DIR when
 * SEISIFT_REDIS_URL is not set; then N app instances on PORT, PORT + 1, … (`npm run instance`)
 * and M analysis workers (`npm run worker`), as child processes whose output is prefixed with
 * their name. A child that exits unexpectedly is started again after 1 s. Ctrl-C / SIGTERM stops
 * the children, then the Redis and the MariaDB this command started.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { join } from 'node:path';
import { createInterface } from 'node:readline';
import type { Env } from '@server/env';
import { instancePorts } from '@server/cluster/mode';
import { ensurePortFree, ensureWritableDir } from './common';
import { BootstrapError } from './mariadb';
import { ensureRedisInstalled, startPrivateRedis, type PrivateRedis } from './redis';

/** The cluster's child processes, and how to stop them and the private Redis. */
export interface RunningCluster {
  urls: string[];
  redisUrl: string;
  stop(): Promise<void>;
}

/** The private Redis (or none, when SEISIFT_REDIS_URL is set): its URL, and the server when one was started. */
export async function openClusterRedis(env: Env): Promise<{ url: string; server?: PrivateRedis }> {
  if (env.SEISIFT_REDIS_URL) return { url: env.SEISIFT_REDIS_URL };
  ensureRedisInstalled();
  const dataDir = ensureWritableDir(join(env.SEISIFT_DATA_DIR, 'redis'), 'SEISIFT_DATA_DIR');
  const server = await startPrivateRedis({ dataDir, port: env.SEISIFT_REDIS_PORT });
  return { url: server.url, server };
}

/**
 * Starts the instances and workers over a prepared database. `childEnv` is what every child gets
 * on top of this process's environment (DATABASE_URL, SEISIFT_REDIS_URL, SMTP_URL…).
 */
export async function startClusterProcesses(env: Env, counts: { instances: number; workers: number }, childEnv: Record<string, string>): Promise<RunningCluster> {
  const ports = instancePorts(env.PORT, counts.instances);
  // The first port was checked by prepareApp (and is free again); the others are checked here.
  for (const port of ports) await ensurePortFree(env.HOST, port, 'PORT');
  const root = process.cwd();
  const children = new Map<string, ChildProcess>();
  let stopping = false;
  const launch = (name: string, script: string, extra: Record<string, string>, onReady?: () => void) => {
    const child = spawn(process.execPath, ['--import', 'tsx', join(root, 'server', 'cluster', script)], {
      cwd: root,
      env: { ...process.env, ...childEnv, ...extra },
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    children.set(name, child);
    for (const stream of [child.stdout, child.stderr]) {
      if (!stream) continue;
      createInterface({ input: stream }).on('line', (line) => {
        console.log(`[${name}] ${line}`);
        if (onReady && / ready /.test(line)) onReady();
      });
    }
    child.on('exit', (code, signal) => {
      children.delete(name);
      if (stopping) return;
      console.warn(`seisift: ${name} exited (${signal ?? `code ${code}`}); starting it again in 1 s`);
      setTimeout(() => {
        if (!stopping) launch(name, script, extra);
      }, 1000).unref();
    });
  };
  const ready: Promise<void>[] = [];
  const readyWithin = (name: string, launchIt: (ok: () => void) => void) =>
    ready.push(
      new Promise<void>((ok, fail) => {
        const timer = setTimeout(() => fail(new BootstrapError(`${name} did not say it was ready within 60 s; see its lines above`)), 60_000);
        launchIt(() => {
          clearTimeout(timer);
          ok();
        });
      }),
    );
  ports.forEach((port, i) => readyWithin(`instance ${i + 1}`, (ok) => launch(`app${i + 1}`, 'instance-main.ts', { PORT: String(port) }, ok)));
  for (let i = 0; i < counts.workers; i++) readyWithin(`worker ${i + 1}`, (ok) => launch(`worker${i + 1}`, 'worker-main.ts', {}, ok));
  const stop = async () => {
    stopping = true;
    const exits = [...children.values()].map((c) => new Promise<void>((ok) => (c.exitCode !== null ? ok() : c.once('exit', () => ok()))));
    for (const c of children.values()) c.kill('SIGTERM');
    await Promise.race([Promise.all(exits), new Promise((r) => setTimeout(r, 15_000))]);
    for (const c of children.values()) c.kill('SIGKILL');
  };
  try {
    await Promise.all(ready);
  } catch (err) {
    await stop();
    throw err;
  }
  return { urls: ports.map((p) => `http://${env.HOST}:${p}`), redisUrl: childEnv.SEISIFT_REDIS_URL ?? '', stop };
}
