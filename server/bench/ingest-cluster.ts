/**
 * `npm run bench:ingest -- --instances N --workers M`: the single-process mode and the
 * multi-instance mode (issue 20) under the same load, one after the other in the same command, on
 * the same throw-away MariaDB:
 * 1. one app process (tests/faults/serve.ts, as `npm start` serves), then
 * 2. a private Redis, N app instances (server/cluster/instance-main.ts) and M analysis workers
 *    (server/cluster/worker-main.ts).
 * BENCH_INGEST_CONCURRENCY (default 8) uploaders send 120 s 3-component Steim-2 windows with their
 * station's ingest token, back to back, spread over the instances, for BENCH_INGEST_SECONDS
 * (default 20) after a 5 s warm-up; BENCH_WS_CLIENTS (default 4) analysts follow /ws, each on the
 * instance AFTER the one the uploads of their index go to, so every change has to cross instances
 * (in the single mode there is only the one).
 * Prints side by side: windows per second, p50/p95 upload → socket (ms), and the CPU each process
 * used per window (from /proc/PID/stat), with the per-window MariaDB CPU the 10× estimate of
 * docs/PERFORMANCE.md is made from.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { Agent } from 'node:http';
import { cpus, loadavg } from 'node:os';
import { join, resolve } from 'node:path';
import { createInterface } from 'node:readline';
import { z } from 'zod';
import { freePort } from '@server/bootstrap/common';
import { ensureRedisInstalled, startPrivateRedis } from '@server/bootstrap/redis';
import { parseStartArgs } from '@server/cluster/mode';
import { createDatabaseClient } from '@server/db/client';
import { migrateDatabase } from '@server/db/migrate';
import { startChildServer } from '@tests/faults/support/child-server';
import { benchDatabase, cleanupsOnExit } from './bench-setup';
import { percentile } from './timing';
import { CODES, arrivalLatencies, baseWindow, cpuSeconds, openArrivalSockets, postUpload, seedBenchNetwork, shiftStart } from './bench-windows';

const CONCURRENCY = Number(process.env.BENCH_INGEST_CONCURRENCY ?? 8);
const SECONDS = Number(process.env.BENCH_INGEST_SECONDS ?? 20);
const WS_CLIENTS = Number(process.env.BENCH_WS_CLIENTS ?? 4);
const WARMUP_S = 5;
const log = (line: string) => console.log(line);





/** What one mode measured. */
interface ModeResult {
  label: string;
  windowsPerS: number;
  notCreated: number;
  wsP50: number;
  wsP95: number;
  missing: number;
  /** CPU ms per window by process name. */
  cpuMsPerWindow: Array<[string, number]>;
}

let fileCounter = 0;

/** Runs the load against `uploadUrls` (round-robin per uploader) with sockets on `wsUrls`, measuring the processes `pids`. */
async function measure(label: string, uploadUrls: string[], wsUrls: string[], pids: Array<[string, number]>, tokens: Map<string, string>, cookies: string[], bases: Map<string, Uint8Array>): Promise<ModeResult> {
  const { arrivals, close: closeSockets } = await openArrivalSockets(wsUrls, cookies);
  const agent = new Agent({ keepAlive: true, maxSockets: CONCURRENCY });
  const post = (base: string, token: string, filename: string, file: Uint8Array) => postUpload(agent, base, token, filename, file);
  const uploadSchema = z.object({ files: z.array(z.object({ itemIds: z.array(z.number()).optional() })).optional() });
  const samples: Array<{ sentAt: number; answeredAt: number; status: number; itemIds: number[] }> = [];
  const t0 = performance.now();
  const warmEnd = t0 + WARMUP_S * 1000;
  const end = warmEnd + SECONDS * 1000;
  const cpuAt = () => pids.map(([, pid]) => cpuSeconds(pid));
  let cpuStart: number[] = [];
  let cpuEnd: number[] = [];
  const timers = [setTimeout(() => (cpuStart = cpuAt()), WARMUP_S * 1000), setTimeout(() => (cpuEnd = cpuAt()), (WARMUP_S + SECONDS) * 1000)];
  await Promise.all(
    Array.from({ length: CONCURRENCY }, async (_, w) => {
      while (performance.now() < end) {
        const n = fileCounter++;
        const code = CODES[(w + n) % CODES.length] ?? 'KV01';
        const file = shiftStart(bases.get(code) ?? new Uint8Array(), (n + 1) * 120);
        const sentAt = performance.now();
        const res = await post(uploadUrls[w % uploadUrls.length] ?? '', tokens.get(code) ?? '', `${code}-${n}.mseed`, file);
        const parsed = uploadSchema.safeParse(JSON.parse(res.body));
        samples.push({ sentAt, answeredAt: performance.now(), status: res.status, itemIds: parsed.success ? (parsed.data.files ?? []).flatMap((f) => f.itemIds ?? []) : [] });
      }
    }),
  );
  for (const t of timers) clearTimeout(t);
  const measured = samples.filter((s) => s.sentAt >= warmEnd && s.answeredAt <= end && s.status === 201);
  const wanted = measured.flatMap((s) => s.itemIds);
  const deadline = performance.now() + 10_000;
  while (performance.now() < deadline && !arrivals.every((m) => wanted.every((id) => m.has(id)))) await new Promise((r) => setTimeout(r, 50));
  const { toAll, missing } = arrivalLatencies(measured, arrivals);
  closeSockets();
  agent.destroy();
  return {
    label,
    windowsPerS: measured.length / SECONDS,
    notCreated: samples.filter((s) => s.status !== 201).length,
    wsP50: percentile(toAll, 50),
    wsP95: percentile(toAll, 95),
    missing,
    cpuMsPerWindow: pids.map(([name], i) => [name, measured.length ? (1000 * ((cpuEnd[i] ?? NaN) - (cpuStart[i] ?? NaN))) / measured.length : NaN]),
  };
}

/**
 * Warm-up before a measurement: analysis threads start with their first job, slowly on a busy
 * machine (tsx compiles them). Each URL gets files until `rounds` rounds all answered 201.
 */
async function warmUp(urls: string[], rounds: number, tokens: Map<string, string>, bases: Map<string, Uint8Array>): Promise<void> {
  const deadline = performance.now() + 180_000;
  for (let n = 0; performance.now() < deadline; n++) {
    const done = await Promise.all(urls.map((u, i) => measureOne(u, tokens.get(CODES[i % CODES.length] ?? 'KV01') ?? '', CODES[i % CODES.length] ?? 'KV01', bases)));
    if (done.every((s) => s === 201) && n + 1 >= rounds) return;
  }
  throw new Error('no answer within 180 s of warm-up');
}

/** One upload (fetch), for the warm-up; resolves with its status. */
async function measureOne(base: string, token: string, code: string, bases: Map<string, Uint8Array>): Promise<number> {
  const n = fileCounter++;
  const form = new FormData();
  form.append('files', new Blob([new Uint8Array(shiftStart(bases.get(code) ?? new Uint8Array(), (n + 1) * 120))]), `${code}-${n}.mseed`);
  const res = await fetch(`${base}/api/uploads`, { method: 'POST', headers: { Authorization: `Bearer ${token}` }, body: form });
  await res.arrayBuffer();
  return res.status;
}

/** Starts `node --import tsx server/cluster/<script>` and resolves once it prints " ready ". */
function startChild(script: string, env: Record<string, string>, cleanups: Array<() => Promise<void>>): Promise<ChildProcess> {
  const child = spawn(process.execPath, ['--import', 'tsx', resolve('server/cluster', script)], { env: { ...process.env, ...env }, stdio: ['ignore', 'pipe', 'pipe'] });
  cleanups.push(async () => void child.kill('SIGKILL'));
  return new Promise((ok, fail) => {
    const timer = setTimeout(() => fail(new Error(`${script} did not start within 120 s`)), 120_000);
    for (const s of [child.stdout, child.stderr])
      if (s)
        createInterface({ input: s }).on('line', (l) => {
          if (/ ready /.test(l)) {
            clearTimeout(timer);
            ok(child);
          } else if (/error|fail/i.test(l)) console.error(`  [${script}] ${l.slice(0, 300)}`);
        });
    child.once('exit', (code) => fail(new Error(`${script} exited (${code})`)));
  });
}

/** The comparison; resolves with the exit code. */
export async function compareModes(args: readonly string[]): Promise<number> {
  const mode = parseStartArgs(args);
  if (mode.mode !== 'cluster') throw new Error('bench:ingest: the comparison needs --instances N and/or --workers M');
  const { cleanups, cleanup } = cleanupsOnExit();
  try {
    log(`machine: ${cpus().length} cores, node ${process.version}, load average ${loadavg().map((x) => x.toFixed(2)).join(' ')}, ${new Date().toISOString()}`);
    log(`bench:ingest — single process vs ${mode.instances} instances + ${mode.workers} workers: ${CONCURRENCY} uploaders, ${WS_CLIENTS} websocket clients, ${SECONDS} s measured after ${WARMUP_S} s warm-up each`);
    const { maria, url } = await benchDatabase('bench-cluster-', cleanups);
    const client = createDatabaseClient(url, { connectionLimit: 2 });
    cleanups.push(() => client.close());
    await migrateDatabase(client.db);
    const { tokens, cookies } = await seedBenchNetwork(client.db, WS_CLIENTS);
    const bases = new Map(CODES.map((code, k) => [code, baseWindow(code, k + 1)]));

    // 1. The single-process mode.
    const single = await startChildServer({ databaseUrl: url, port: await freePort(), env: { LOG_LEVEL: 'warn' } });
    await warmUp([single.url], 2, tokens, bases);
    const singleResult = await measure('single process', [single.url], [single.url], [['app', single.pid], ['mariadb', maria.pid], ['bench', process.pid]], tokens, cookies, bases);
    await single.kill('SIGKILL');

    // 2. The multi-instance mode on the same database.
    ensureRedisInstalled();
    const redisDir = mkdtempSync(join(resolve('.data'), 'bench-redis-'));
    cleanups.push(async () => rmSync(redisDir, { recursive: true, force: true }));
    const redis = await startPrivateRedis({ dataDir: redisDir, port: await freePort(), log: () => {} });
    cleanups.push(() => redis.stop());
    const env = { DATABASE_URL: url, SEISIFT_REDIS_URL: redis.url, LOG_LEVEL: 'warn', HOST: '127.0.0.1', NODE_ENV: 'production' };
    const urls: string[] = [];
    const procs: Array<[string, number]> = [];
    const starting: Array<Promise<ChildProcess>> = [];
    for (let i = 0; i < mode.instances; i++) {
      const port = await freePort();
      urls.push(`http://127.0.0.1:${port}`);
      starting.push(startChild('instance-main.ts', { ...env, PORT: String(port), SEISIFT_FAKE_SMTP_PORT: String(await freePort()) }, cleanups));
    }
    for (let i = 0; i < mode.workers; i++) starting.push(startChild('worker-main.ts', env, cleanups));
    const children = await Promise.all(starting);
    children.forEach((c, i) => procs.push([i < mode.instances ? `app${i + 1}` : `worker${i - mode.instances + 1}`, c.pid ?? 0]));
    procs.push(['redis', redis.pid], ['mariadb', maria.pid], ['bench', process.pid]);
    await warmUp(urls, mode.workers, tokens, bases);
    // Sockets on the instance after the one uploads of the same index go to: every change crosses instances.
    const wsUrls = urls.length > 1 ? urls.map((_, i) => urls[(i + 1) % urls.length] ?? '') : urls;
    const clusterResult = await measure(`${mode.instances} instances + ${mode.workers} workers`, urls, wsUrls, procs, tokens, cookies, bases);

    const f = (x: number) => (Number.isFinite(x) ? x.toFixed(1) : '–');
    log('');
    for (const r of [singleResult, clusterResult]) {
      const total = r.cpuMsPerWindow.filter(([n]) => n !== 'bench').reduce((s, [, v]) => s + v, 0);
      log(`${r.label}:`);
      log(`  windows per second:                ${f(r.windowsPerS)}   (answers other than 201: ${r.notCreated})`);
      log(`  upload → socket${r === clusterResult && urls.length > 1 ? ' on the other instance' : ''} (ms): p50 ${f(r.wsP50)}  p95 ${f(r.wsP95)}   (changes never received: ${r.missing})`);
      log(`  CPU per window (ms):               ${r.cpuMsPerWindow.map(([n, v]) => `${n} ${f(v)}`).join(', ')}; all but the bench ${f(total)}`);
    }
    const sTotal = singleResult.cpuMsPerWindow.filter(([n]) => n !== 'bench').reduce((s, [, v]) => s + v, 0);
    const cTotal = clusterResult.cpuMsPerWindow.filter(([n]) => n !== 'bench').reduce((s, [, v]) => s + v, 0);
    log('');
    log(`cluster mode costs ${f(cTotal - sTotal)} ms CPU per window more than one process (${f((100 * (cTotal - sTotal)) / sTotal)} %)`);
    log(`MariaDB CPU per window: ${f(singleResult.cpuMsPerWindow.find(([n]) => n === 'mariadb')?.[1] ?? NaN)} ms (single), ${f(clusterResult.cpuMsPerWindow.find(([n]) => n === 'mariadb')?.[1] ?? NaN)} ms (cluster)`);
    return singleResult.windowsPerS > 0 && clusterResult.windowsPerS > 0 && clusterResult.notCreated === 0 && clusterResult.missing === 0 ? 0 : 1;
  } finally {
    await cleanup();
  }
}
