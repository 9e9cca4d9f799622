import { spawn, type ChildProcess } from 'node:child_process';
import { mkdirSync, mkdtempSync, rmSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { createInterface } from 'node:readline';
import { freePort } from '@server/bootstrap/common';
import { startPrivateRedis, type PrivateRedis } from '@server/bootstrap/redis';
import { createTestDatabase, type TestDatabase } from '@tests/setup/test-db';

/** A child process of the test cluster, with every line it printed. */
export interface ClusterProcess {
  name: string;
  child: ChildProcess;
  lines: string[];
  /** Resolves with the first line (printed from now on, or already) matching `re`. */
  waitFor(re: RegExp, ms?: number, fromLine?: number): Promise<string>;
}

function spawnProcess(name: string, script: string, env: Record<string, string>): ClusterProcess {
  const child = spawn(process.execPath, ['--import', 'tsx', resolve('server/cluster', script)], { env: { ...process.env, ...env }, stdio: ['ignore', 'pipe', 'pipe'] });
  const lines: string[] = [];
  const listeners = new Set<() => void>();
  for (const s of [child.stdout, child.stderr]) {
    if (s)
      createInterface({ input: s }).on('line', (l) => {
        lines.push(l);
        if (process.env.SEISIFT_CLUSTER_TEST_LOG === '1') console.log(`[${name}] ${l}`);
        for (const f of listeners) f();
      });
  }
  return {
    name,
    child,
    lines,
    waitFor(re, ms = 90_000, fromLine = 0) {
      return new Promise((ok, fail) => {
        const check = () => {
          const hit = lines.slice(fromLine).find((l) => re.test(l));
          if (hit) {
            listeners.delete(check);
            clearTimeout(timer);
            ok(hit);
          }
        };
        const timer = setTimeout(() => {
          listeners.delete(check);
          fail(new Error(`${name}: no line matching ${re} within ${ms} ms; it printed:\n${lines.slice(-20).join('\n')}`));
        }, ms);
        listeners.add(check);
        check();
      });
    },
  };
}

/** The test cluster: one database, one private Redis, app instances and workers. */
export interface TestCluster {
  db: TestDatabase;
  redis: PrivateRedis;
  redisDir: string;
  apps: Array<{ url: string; proc: ClusterProcess }>;
  workers: ClusterProcess[];
  /** Starts worker `i` again (after a SIGKILL). */
  restartWorker(i: number): Promise<void>;
  /** Stops Redis (SIGTERM: it writes its append-only file) and, after `downMs`, starts it again from the same folder and port. */
  restartRedis(downMs: number): Promise<void>;
  stop(): Promise<void>;
}

/**
 * Starts a cluster on loopback: a fresh database of the run's MariaDB, a private Redis on a free
 * port under .data/, `instances` app instances (`instance-main.ts`) and `workers` workers
 * (`worker-main.ts`), and waits until each says it is ready.
 */
export async function startTestCluster(opts: { instances: number; workers: number; env?: Record<string, string> }): Promise<TestCluster> {
  const db = await createTestDatabase();
  mkdirSync(resolve('.data'), { recursive: true });
  const redisDir = mkdtempSync(join(resolve('.data'), 'test-redis-'));
  const redisPort = await freePort();
  let redis = await startPrivateRedis({ dataDir: redisDir, port: redisPort, log: () => {} });
  const common = { DATABASE_URL: db.url, SEISIFT_REDIS_URL: redis.url, NODE_ENV: 'test', LOG_LEVEL: 'warn', HOST: '127.0.0.1', ...opts.env };
  const apps: TestCluster['apps'] = [];
  const workers: ClusterProcess[] = [];
  const all: ClusterProcess[] = [];
  try {
    for (let i = 0; i < opts.instances; i++) {
      const port = await freePort();
      const proc = spawnProcess(`app${i + 1}`, 'instance-main.ts', { ...common, PORT: String(port), SEISIFT_FAKE_SMTP_PORT: String(await freePort()) });
      all.push(proc);
      apps.push({ url: `http://127.0.0.1:${port}`, proc });
    }
    for (let i = 0; i < opts.workers; i++) {
      const proc = spawnProcess(`worker${i + 1}`, 'worker-main.ts', common);
      all.push(proc);
      workers.push(proc);
    }
    await Promise.all(all.map((p) => p.waitFor(/ ready /)));
  } catch (err) {
    for (const p of all) p.child.kill('SIGKILL');
    await redis.stop();
    await db.drop();
    throw err;
  }
  return {
    db,
    get redis() {
      return redis;
    },
    redisDir,
    apps,
    workers,
    async restartWorker(i) {
      const proc = spawnProcess(`worker${i + 1}`, 'worker-main.ts', common);
      workers[i] = proc;
      await proc.waitFor(/ ready /);
    },
    async restartRedis(downMs) {
      await redis.stop();
      await new Promise((r) => setTimeout(r, downMs));
      redis = await startPrivateRedis({ dataDir: redisDir, port: redisPort, log: () => {} });
    },
    async stop() {
      const procs = [...apps.map((a) => a.proc), ...workers];
      await Promise.all(
        procs.map(
          (p) =>
            new Promise<void>((ok) => {
              if (p.child.exitCode !== null || p.child.signalCode !== null) return ok();
              const t = setTimeout(() => p.child.kill('SIGKILL'), 10_000);
              p.child.once('exit', () => {
                clearTimeout(t);
                ok();
              });
              p.child.kill('SIGTERM');
            }),
        ),
      );
      await redis.stop();
      rmSync(redisDir, { recursive: true, force: true });
      await db.drop();
    },
  };
}
