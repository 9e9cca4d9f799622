/**
 * `npm run bench:traces`: does the server stay responsive while display traces of the largest
 * allowed window are computed?
 *
 * - A throw-away private MariaDB (.data/bench-traces-XXXX, removed at the end) with station
 *   XX.KV01 (HHZ/HHN/HHE at 200 Hz), an ingest token and an analyst with a session.
 * - The server as a child process (tests/faults/serve.ts, the app of `npm start`, default settings:
 *   SEISIFT_ANALYSIS_THREADS = one per core), printing its own event-loop delay every 250 ms
 *   (BENCH_LOOP_LAG_MS: node:perf_hooks monitorEventLoopDelay).
 * - The largest window the default limits allow (SEISIFT_MAX_WINDOW_SAMPLES 720 000 per channel at
 *   200 sps = 1 h, three channels, MiniSEED 3 int32, deterministic noise with a few bursts) is
 *   uploaded through POST /api/uploads.
 * - Reference, in this process: how long computing that window's traces takes in one thread
 *   (`computeTraces`, the median of 3) — what each request held the event loop for when the
 *   traces were computed on it.
 * - Phase 1, the reference run: GET /api/health every 50 ms for BENCH_TRACES_REF_S (10) s, no
 *   other load.
 * - Phase 2, the load: the same health probes while BENCH_TRACES_CLIENTS (3) clients request
 *   GET /api/queue/items/:id/traces of that window (the whole hour, default 2000 points) back to
 *   back for BENCH_TRACES_SECONDS (20) s.
 *
 * Prints, per phase: health latency p50/p95/p99/max, the server's event-loop delay (largest
 * and p99 of the 250 ms intervals' p99), and under load the traces requests served and their
 * latency. Target (issue 16): health under 100 ms throughout the load (its maximum). Exits 1 when
 * missed. Every process it started is stopped on every exit path.
 */
import { createHash, randomBytes } from 'node:crypto';
import { mkdirSync } from 'node:fs';
import { Agent, request as httpRequest } from 'node:http';
import { cpus, loadavg, totalmem } from 'node:os';
import { resolve } from 'node:path';
import { z } from 'zod';
import { defaultProcessingProfile } from '@shared/schemas/processing-profile';
import { startChildServer, type ChildServer } from '@tests/faults/support/child-server';
import { createSessionStore, sessionCookieName } from '@server/auth/sessions';
import { freePort } from '@server/bootstrap/common';
import { benchDatabase, cleanupsOnExit } from './bench-setup';
import { createDatabaseClient } from '@server/db/client';
import { migrateDatabase } from '@server/db/migrate';
import { channels, ingestTokens, stations } from '@server/db/schema/stations';
import { userRoles, users } from '@server/db/schema/users';
import { encodeMiniSeed3 } from '@server/formats/mseed3-writer';
import { computeTraces, loadTracesInput } from '@server/features/queue/queue-traces';
import { defaultWindowLimits } from '@server/formats/window-limits';
import { median } from '@shared/math/median';
import { percentile } from './timing';

const REF_S = Number(process.env.BENCH_TRACES_REF_S ?? 10);
const LOAD_S = Number(process.env.BENCH_TRACES_SECONDS ?? 20);
const CLIENTS = Number(process.env.BENCH_TRACES_CLIENTS ?? 3);
const HEALTH_EVERY_MS = 50;
const LAG_EVERY_MS = 250;
const TARGET_HEALTH_MS = 100;
const RATE_HZ = 200;
const SAMPLES = defaultWindowLimits.maxSamples;
const START_US = Date.UTC(2026, 2, 14, 6) * 1000;

const log = (line: string) => console.log(line);

function machineLine(): string {
  return `machine: ${cpus().length} cores (${cpus()[0]?.model ?? '?'}), ${(totalmem() / 2 ** 30).toFixed(1)} GiB, node ${process.version}, load average ${loadavg().map((x) => x.toFixed(2)).join(' ')}, ${new Date().toISOString()}`;
}

/**
 * One channel of the bench window: deterministic noise (32-bit LCG, Numerical Recipes constants;
 * common practice) with a 5 Hz burst every 10 minutes, so the band traces and STA/LTA have
 * something to do. Invented bench data, not a check value.
 */
function channelSamples(seed: number, n: number): Int32Array {
  let s = seed >>> 0;
  const out = new Int32Array(n);
  for (let i = 0; i < n; i++) {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    const t = i / RATE_HZ;
    const burst = t % 600 > 300 && t % 600 < 310 ? 4000 * Math.sin(2 * Math.PI * 5 * t) : 0;
    out[i] = Math.round(300 * (s / 2 ** 32 - 0.5) + burst);
  }
  return out;
}

/** The largest allowed window: three channels of SAMPLES samples at RATE_HZ, as one MiniSEED 3 file. */
function largestWindow(): Buffer {
  const parts = ['HHZ', 'HHN', 'HHE'].map((cha, k) =>
    encodeMiniSeed3({ network: 'XX', station: 'KV01', location: '00', channel: cha, sampleRateHz: RATE_HZ, startTimeUs: START_US, samples: channelSamples(k + 1, SAMPLES) }, { encoding: 'int32' }),
  );
  return Buffer.concat(parts.map((p) => Buffer.from(p)));
}

/** One HTTP request on a keep-alive agent; resolves with the status and the time to the last byte, ms. */
function timedRequest(agent: Agent, url: string, opts: { method?: string; headers?: Record<string, string>; body?: Buffer } = {}): Promise<{ status: number; ms: number; bytes: number; text: string | null }> {
  const t0 = performance.now();
  return new Promise((ok, fail) => {
    const req = httpRequest(url, { method: opts.method ?? 'GET', agent, headers: opts.headers }, (res) => {
      let bytes = 0;
      const keep: Buffer[] = [];
      res.on('data', (d: Buffer) => {
        bytes += d.length;
        if (bytes < 64 * 1024) keep.push(d);
      });
      res.on('end', () => ok({ status: res.statusCode ?? 0, ms: performance.now() - t0, bytes, text: bytes < 64 * 1024 ? Buffer.concat(keep).toString('utf8') : null }));
      res.on('error', fail);
    });
    req.on('error', fail);
    req.end(opts.body);
  });
}

/** A prebuilt multipart/form-data body (RFC 7578) with one file in the field `files`. */
function multipart(bytes: Buffer, filename: string): { body: Buffer; type: string } {
  const boundary = `bench${randomBytes(8).toString('hex')}`;
  const head = Buffer.from(`--${boundary}\r\nContent-Disposition: form-data; name="files"; filename="${filename}"\r\nContent-Type: application/octet-stream\r\n\r\n`);
  return { body: Buffer.concat([head, bytes, Buffer.from(`\r\n--${boundary}--\r\n`)]), type: `multipart/form-data; boundary=${boundary}` };
}

const lagLineSchema = z.object({ maxMs: z.number(), p99Ms: z.number(), meanMs: z.number() });
type Lag = z.infer<typeof lagLineSchema> & { at: number };

/** Health probes every HEALTH_EVERY_MS (each awaited, the next due on the fixed schedule) until `endAt`. */
async function probeHealth(agent: Agent, url: string, endAt: number): Promise<number[]> {
  const out: number[] = [];
  let next = performance.now();
  while (performance.now() < endAt) {
    const r = await timedRequest(agent, `${url}/api/health`);
    if (r.status !== 200) throw new Error(`health answered ${r.status}`);
    out.push(r.ms);
    next += HEALTH_EVERY_MS;
    const wait = next - performance.now();
    if (wait > 0) await new Promise((r2) => setTimeout(r2, wait));
    else next = performance.now();
  }
  return out;
}

const f1 = (v: number) => (Number.isFinite(v) ? v.toFixed(1) : '—');
function healthLine(label: string, ms: number[]): string {
  const s = [...ms].sort((a, b) => a - b);
  return `${label.padEnd(34)} health n=${String(s.length).padStart(4)}  p50 ${f1(percentile(s, 50)).padStart(6)}  p95 ${f1(percentile(s, 95)).padStart(6)}  p99 ${f1(percentile(s, 99)).padStart(6)}  max ${f1(s[s.length - 1] ?? NaN).padStart(6)} ms`;
}
function lagLine(label: string, lags: Lag[]): string {
  const maxes = lags.map((l) => l.maxMs).sort((a, b) => a - b);
  const p99s = lags.map((l) => l.p99Ms).sort((a, b) => a - b);
  return `${label.padEnd(34)} event-loop delay over ${lags.length} intervals of ${LAG_EVERY_MS} ms: largest ${f1(maxes[maxes.length - 1] ?? NaN)} ms, p99 of the intervals' p99 ${f1(percentile(p99s, 99))} ms, median interval max ${f1(median(maxes))} ms`;
}

async function main(): Promise<number> {
  const { cleanups, cleanup } = cleanupsOnExit();
  try {
    log(machineLine());
    log(`bench:traces — largest allowed window (3 × ${SAMPLES} samples at ${RATE_HZ} sps = ${SAMPLES / RATE_HZ} s); reference ${REF_S} s of health probes alone, then ${LOAD_S} s with ${CLIENTS} clients requesting its traces back to back`);
    const { url } = await benchDatabase('bench-traces-', cleanups);
    const client = createDatabaseClient(url, { connectionLimit: 2 });
    cleanups.push(() => client.close());
    await migrateDatabase(client.db);

    const now = new Date();
    const [st] = await client.db.insert(stations).values({ network: 'XX', code: 'KV01', name: 'Kestrel Valley north ridge', latitude: 46.5, longitude: 8.1, elevationM: 900, profile: defaultProcessingProfile, createdAt: now, updatedAt: now });
    for (const cha of ['HHZ', 'HHN', 'HHE']) await client.db.insert(channels).values({ stationId: st.insertId, location: '00', code: cha, sampleRateHz: RATE_HZ, createdAt: now, updatedAt: now });
    const token = `kvi_${randomBytes(24).toString('base64url')}`;
    await client.db.insert(ingestTokens).values({ stationId: st.insertId, label: 'bench', tokenHash: createHash('sha256').update(token).digest('hex'), createdAt: now });
    await client.db.insert(users).values({ id: 'bench-analyst', email: 'bench-analyst@kestrel.example', displayName: 'Bench analyst', passwordHash: null, active: true, createdAt: now, updatedAt: now });
    await client.db.insert(userRoles).values({ userId: 'bench-analyst', role: 'analyst' });
    const session = await createSessionStore(client.db, { idleHours: 24 }).create('bench-analyst', { ipAddress: '127.0.0.1', userAgent: 'bench:traces' });
    const cookie = `${sessionCookieName}=${session.id}`;

    const profDir = process.env.BENCH_CPU_PROF === '1' ? resolve('.data/bench-traces-prof') : null;
    if (profDir) mkdirSync(profDir, { recursive: true });
    const server: ChildServer = await startChildServer({
      databaseUrl: url,
      port: await freePort(),
      env: { LOG_LEVEL: 'warn', BENCH_LOOP_LAG_MS: String(LAG_EVERY_MS) },
      // Diagnosis: BENCH_CPU_PROF=1 writes the server's main-thread CPU profile to .data/bench-traces-prof/.
      nodeArgs: profDir ? ['--cpu-prof', `--cpu-prof-dir=${profDir}`] : [],
    });
    // SIGTERM lets a profiled server write its profile; SIGKILL otherwise (nothing to keep).
    cleanups.push(() => server.kill(profDir ? 'SIGTERM' : 'SIGKILL'));
    log(`server pid ${server.pid} on ${server.url}`);
    const lags: Lag[] = [];
    let pending = '';
    server.child.stdout?.on('data', (d: Buffer) => {
      pending += d.toString('utf8');
      const lines = pending.split('\n');
      pending = lines.pop() ?? '';
      for (const line of lines) {
        const m = /^loop-lag (\{.*\})$/.exec(line.trim());
        if (!m?.[1]) continue;
        const parsed = lagLineSchema.safeParse(JSON.parse(m[1]));
        if (parsed.success) lags.push({ ...parsed.data, at: performance.now() });
      }
    });

    // Upload the window.
    const file = largestWindow();
    const form = multipart(file, 'XX.KV01.largest.mseed');
    const upAgent = new Agent({ keepAlive: true, maxSockets: 1 });
    const up = await timedRequest(upAgent, `${server.url}/api/uploads`, { method: 'POST', headers: { Authorization: `Bearer ${token}`, 'Content-Type': form.type, 'Content-Length': String(form.body.length) }, body: form.body });
    if (up.status !== 201 || !up.text) throw new Error(`the upload answered ${up.status}: ${up.text?.slice(0, 300) ?? ''}`);
    const itemId = z.object({ files: z.array(z.object({ itemIds: z.array(z.number()) })) }).parse(JSON.parse(up.text)).files[0]?.itemIds[0];
    if (itemId === undefined) throw new Error('the upload made no item');
    log(`uploaded ${(file.length / 2 ** 20).toFixed(1)} MiB (MiniSEED 3 int32) in ${f1(up.ms)} ms → item ${itemId}`);

    // In-thread reference: what one request cost the event loop when traces were computed on it.
    const input = await loadTracesInput(client.db, itemId, { points: 2000 }, 'all');
    const inThread: number[] = [];
    for (let i = 0; i < 3; i++) {
      const t = performance.now();
      JSON.stringify(computeTraces(input));
      inThread.push(performance.now() - t);
    }
    log(`in-thread reference: computeTraces + JSON of this window takes ${f1(median(inThread))} ms (median of 3) in one thread — how long each request held the event loop before the traces moved to the worker pool`);

    // Phase 1: reference run, no load.
    const healthAgent = new Agent({ keepAlive: true, maxSockets: 1 });
    await probeHealth(healthAgent, server.url, performance.now() + 1000); // warm-up
    const refStart = performance.now();
    const refHealth = await probeHealth(healthAgent, server.url, refStart + REF_S * 1000);
    const refLags = lags.filter((l) => l.at > refStart + LAG_EVERY_MS);

    // Phase 2: the load.
    const tracesAgent = new Agent({ keepAlive: true, maxSockets: CLIENTS });
    const loadStart = performance.now();
    const loadEnd = loadStart + LOAD_S * 1000;
    const traceMs: number[] = [];
    let traceBytes = 0;
    const loaders = Array.from({ length: CLIENTS }, async () => {
      while (performance.now() < loadEnd) {
        const r = await timedRequest(tracesAgent, `${server.url}/api/queue/items/${itemId}/traces`, { headers: { Cookie: cookie } });
        if (r.status !== 200) throw new Error(`traces answered ${r.status}: ${r.text?.slice(0, 300) ?? ''}`);
        traceMs.push(r.ms);
        traceBytes = r.bytes;
      }
    });
    const loadHealth = await probeHealth(healthAgent, server.url, loadEnd);
    await Promise.all(loaders);
    const loadLags = lags.filter((l) => l.at > loadStart + LAG_EVERY_MS && l.at <= loadEnd + LAG_EVERY_MS);

    log('');
    log(healthLine('reference (no trace load)', refHealth));
    log(lagLine('reference (no trace load)', refLags));
    log(healthLine(`load (${CLIENTS} clients requesting traces)`, loadHealth));
    log(lagLine(`load (${CLIENTS} clients requesting traces)`, loadLags));
    const ts = [...traceMs].sort((a, b) => a - b);
    log(`${'traces requests under load'.padEnd(34)} ${ts.length} served in ${LOAD_S} s, ${(traceBytes / 1024).toFixed(0)} KiB each, latency p50 ${f1(percentile(ts, 50))} ms, max ${f1(ts[ts.length - 1] ?? NaN)} ms`);
    log(`server peak RSS ${f1(server.peakRssMb())} MB`);
    const worst = Math.max(...loadHealth);
    const met = worst < TARGET_HEALTH_MS;
    log(`target: GET /api/health under ${TARGET_HEALTH_MS} ms throughout the load — ${met ? 'met' : 'MISSED'} (max ${f1(worst)} ms; reference max ${f1(Math.max(...refHealth))} ms)`);
    for (const a of [upAgent, healthAgent, tracesAgent]) a.destroy();
    return met ? 0 : 1;
  } finally {
    await cleanup();
  }
}

main().then(
  (code) => process.exit(code),
  (err: unknown) => {
    console.error(`bench:traces: ${err instanceof Error ? (err.stack ?? err.message) : String(err)}`);
    process.exit(2);
  },
);
