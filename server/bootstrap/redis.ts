import { spawn } from 'node:child_process';
import { closeSync, existsSync, mkdirSync, openSync, readFileSync } from 'node:fs';
import { createConnection } from 'node:net';
import { join, resolve } from 'node:path';
import { BootstrapError, ensureDebianBinary, processAlive, readPid, waitUntil } from './mariadb';

/** A private Redis server with its data, log and pid file in one folder, on 127.0.0.1. */
export interface PrivateRedis {
  dataDir: string;
  port: number;
  pid: number;
  /** redis://127.0.0.1:port */
  url: string;
  /** True when this process started the server (and so must stop it). */
  startedHere: boolean;
  /** Stops the server when this process started it; resolves once it has exited. */
  stop(): Promise<void>;
}

const REDIS_SERVER = '/usr/bin/redis-server';

/** Installs Debian's redis-server when the binary is absent (as `ensureMariaDbInstalled` does for MariaDB). */
export function ensureRedisInstalled(log: (line: string) => void = console.log): void {
  ensureDebianBinary(REDIS_SERVER, 'redis-server', log);
}

/**
 * True when a Redis server answers PING on 127.0.0.1:`port` within 1 s (RESP inline command; the
 * reply to PING is `+PONG`, Redis protocol specification).
 */
export function redisAnswers(port: number, host = '127.0.0.1'): Promise<boolean> {
  return new Promise((ok) => {
    const socket = createConnection({ host, port });
    let reply = '';
    const done = (v: boolean) => {
      socket.destroy();
      ok(v);
    };
    socket.setTimeout(1000, () => done(false));
    socket.once('error', () => done(false));
    socket.once('connect', () => socket.write('PING\r\n'));
    socket.on('data', (chunk: Buffer) => {
      reply += chunk.toString('latin1');
      if (reply.includes('\r\n')) done(reply.startsWith('+PONG'));
    });
  });
}

/**
 * The redis-server arguments of a private server (no config file: every setting on the command
 * line, as the private MariaDB is started with --no-defaults). The append-only file with an fsync
 * every second keeps queued analysis jobs across a restart of Redis (at most about one second of
 * jobs can go, and their uploads answer 503 and are sent again; redis.io, "Redis persistence").
 * `maxmemory-policy noeviction`: a queue must never lose a job to eviction (BullMQ's documented
 * requirement).
 */
export function privateRedisArgs(dataDir: string, port: number): string[] {
  return [
    '--port', String(port),
    '--bind', '127.0.0.1',
    '--protected-mode', 'yes',
    '--dir', dataDir,
    '--pidfile', join(dataDir, 'redis.pid'),
    '--logfile', join(dataDir, 'redis.log'),
    '--daemonize', 'no',
    '--appendonly', 'yes',
    '--appendfsync', 'everysec',
    '--save', '',
    '--maxmemory-policy', 'noeviction',
  ];
}

/**
 * Starts (or reuses) a private Redis whose data lives in `dataDir`, listening on 127.0.0.1:`port`
 * only, in its own process session. Waits until it answers PING. A server already running from
 * the same folder is reused and left running on stop().
 */
export async function startPrivateRedis(opts: { dataDir: string; port: number; log?: (line: string) => void }): Promise<PrivateRedis> {
  const log = opts.log ?? console.log;
  const dataDir = resolve(opts.dataDir);
  const pidFile = join(dataDir, 'redis.pid');
  const url = `redis://127.0.0.1:${opts.port}`;
  const existingPid = readPid(pidFile);
  if (existingPid && processAlive(existingPid) && (await redisAnswers(opts.port))) {
    log(`seisift: reusing Redis already running from ${dataDir} (pid ${existingPid})`);
    return { dataDir, port: opts.port, pid: existingPid, url, startedHere: false, stop: async () => {} };
  }
  if (await redisAnswers(opts.port)) throw new BootstrapError(`SEISIFT_REDIS_PORT: another Redis already answers on 127.0.0.1:${opts.port}; stop it, choose another port or set SEISIFT_REDIS_URL`);
  mkdirSync(dataDir, { recursive: true });
  const out = openSync(join(dataDir, 'redis-server.out'), 'a');
  const child = spawn(REDIS_SERVER, privateRedisArgs(dataDir, opts.port), { detached: true, stdio: ['ignore', out, out] });
  closeSync(out);
  let exited: number | null = null;
  child.on('exit', (code) => {
    exited = code ?? 1;
  });
  child.unref();
  const up = await waitUntil(async () => exited !== null || (await redisAnswers(opts.port)), 15_000, 100);
  if (!up || exited !== null) {
    const logFile = join(dataDir, 'redis.log');
    const tail = existsSync(logFile) ? readFileSync(logFile, 'utf8').trim().split('\n').pop() : undefined;
    if (tail && /Address already in use/i.test(tail)) throw new BootstrapError(`Redis could not listen on 127.0.0.1:${opts.port}: the port is in use (set SEISIFT_REDIS_PORT)`);
    throw new BootstrapError(`Redis did not start: ${tail ?? `see ${logFile}`}`);
  }
  const pid = child.pid ?? 0;
  log(`seisift: Redis ready on 127.0.0.1:${opts.port} (pid ${pid}, data ${dataDir})`);
  return {
    dataDir,
    port: opts.port,
    pid,
    url,
    startedHere: true,
    async stop() {
      if (!processAlive(pid)) return;
      process.kill(pid, 'SIGTERM');
      await waitUntil(() => !processAlive(pid), 15_000, 100);
    },
  };
}
