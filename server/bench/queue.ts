/**
 * `npm run bench:queue`: the review queue API over a million items.
 *
 * 1. A throw-away private MariaDB in .data/bench-queue (never the `npm start` data), migrated.
 *    Its data is kept between runs, so the bulk load happens once; `--fresh` rebuilds it.
 * 2. Bulk load (multi-row INSERTs of 5 000 rows, FOREIGN_KEY_CHECKS=0 for the load only): six
 *    stations XX.KV01–KV06, two analysts and BENCH_QUEUE_ITEMS (default 1 000 000) queue items
 *    spread over a year, with a deterministic mix of states, scores, flags and labels. The items
 *    point at window ids that have no rows (the queue list never reads windows; the foreign key
 *    is not checked during the load): only queue_items, stations and users are read by the list.
 * 3. The real app in this process (createApp over the bench database, HTTP on a free port), a
 *    signed-in analyst: GET /api/queue for the default view (the queue screen's working states,
 *    score order) and each filter, 2 warm-up requests then BENCH_QUEUE_REPEATS (default 60)
 *    timed ones each, or fewer (at least 5) once BENCH_QUEUE_VIEW_BUDGET_S (default 15) has
 *    passed for that view; n, p50/p95/max in ms. Target: p95 ≤ 50 ms.
 * 4. EXPLAIN of every SQL statement each view runs (captured through a drizzle logger around
 *    the same service function the route calls): printed, and a table scanned in full
 *    (type=ALL) over more than 100 estimated rows fails the run.
 *
 * Exits 1 when any target is missed. MariaDB and the HTTP server are stopped on every exit path.
 */
import { existsSync, rmSync } from 'node:fs';
import { cpus, loadavg, totalmem } from 'node:os';
import { resolve } from 'node:path';
import { drizzle } from 'drizzle-orm/mysql2';
import mysql from 'mysql2/promise';
import { z } from 'zod';
import { queueQuerySchema } from '@shared/schemas/queue';
import { createSessionStore, sessionCookieName } from '@server/auth/sessions';
import { freePort } from '@server/bootstrap/common';
import { provisionDatabase, startPrivateMariaDb, type PrivateMariaDb } from '@server/bootstrap/mariadb';
import { createDatabaseClient, schema } from '@server/db/client';
import { migrateDatabase } from '@server/db/migrate';
import { setUpMail } from '@server/email/setup';
import { loadEnv } from '@server/env';
import { createAppContext, startServer, type RunningServer } from '@server/index';
import { createLogger } from '@server/logger';
import { listQueue } from '@server/features/queue/queue-query';
import { percentile } from './timing';

const ITEMS = Number(process.env.BENCH_QUEUE_ITEMS ?? 1_000_000);
const REPEATS = Number(process.env.BENCH_QUEUE_REPEATS ?? 60);
/** Time budget per view: a view slower than the target gets fewer timed requests (at least 5). */
const VIEW_BUDGET_MS = Number(process.env.BENCH_QUEUE_VIEW_BUDGET_S ?? 15) * 1000;
const TARGET_P95_MS = 50;
const DATA_DIR = resolve('.data/bench-queue');
const FRESH = process.argv.includes('--fresh');

/** The views measured: the queue screen's default, each filter alone, and a few combinations. */
const VIEWS: Record<string, string> = {
  'default view (working states, score order)': 'state=new,returned,in review&sort=score&limit=100',
  'all states': 'state=&sort=score&limit=100',
  'state=new': 'state=new&limit=100',
  'oldest first (sort=age)': 'state=new,returned,in review&sort=age&limit=100',
  'station=KV03': 'state=new,returned,in review&station=KV03&limit=100',
  'station=XX.KV03,XX.KV05': 'state=new,returned,in review&station=XX.KV03,XX.KV05&limit=100',
  'flag=likely event': 'state=new,returned,in review&flag=likely event&limit=100',
  'label=earthquake': 'state=&label=earthquake&limit=100',
  'label=none': 'state=&label=none&limit=100',
  'scoreMin=8': 'state=new,returned,in review&scoreMin=8&limit=100',
  'one week (from/to)': 'state=new,returned,in review&from=2026-03-01T00:00:00Z&to=2026-03-08T00:00:00Z&limit=100',
  'station+flag+month': 'state=new,returned,in review&station=KV02&flag=needs eyes&from=2026-03-01T00:00:00Z&to=2026-04-01T00:00:00Z&limit=100',
  'state=labelled, age order': 'state=labelled&sort=age&limit=100',
};

const STATES: Array<[string, number]> = [
  ['new', 0.55],
  ['returned', 0.02],
  ['in review', 0.03],
  ['labelled', 0.15],
  ['dismissed', 0.19],
  ['escalated', 0.03],
  ['confirmed', 0.03],
];
const EVENT_TYPES = ['earthquake', 'quarry blast', 'explosion', 'other event'];
const YEAR_START_MS = Date.UTC(2025, 5, 1);
const YEAR_MS = 365 * 86_400_000;

const log = (line: string) => console.log(line);

/** The machine and its load, printed with the figures (others share this machine). */
function machineLine(): string {
  return `machine: ${cpus().length} cores (${cpus()[0]?.model ?? '?'}), ${(totalmem() / 2 ** 30).toFixed(1)} GiB, node ${process.version}, load average ${loadavg().map((x) => x.toFixed(2)).join(' ')}, ${new Date().toISOString()}`;
}

/** A deterministic 32-bit LCG in [0, 1) (Numerical Recipes constants; common practice). */
function lcg(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    return s / 2 ** 32;
  };
}

const countSchema = z.array(z.object({ n: z.coerce.number() }));

async function count(conn: mysql.Pool | mysql.Connection, sql: string): Promise<number> {
  const [rows] = await conn.query(sql);
  return countSchema.parse(rows)[0]?.n ?? 0;
}

const sqlDate = (ms: number) => new Date(ms).toISOString().replace('T', ' ').replace('Z', '');

/** Loads stations, users and ITEMS queue items; returns the analyst's user id. */
async function bulkLoad(pool: mysql.Pool): Promise<string> {
  const conn = await pool.getConnection();
  try {
    await conn.query('SET FOREIGN_KEY_CHECKS = 0');
    await conn.query('SET UNIQUE_CHECKS = 0');
    for (const t of ['queue_items', 'change_log', 'sessions', 'user_roles', 'users', 'channels', 'stations']) await conn.query(`DELETE FROM \`${t}\``);
    const now = sqlDate(Date.now());
    for (let k = 1; k <= 6; k++) {
      await conn.query('INSERT INTO stations (id, network, code, name, latitude, longitude, elevation_m, profile, created_at, updated_at) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)', [
        k,
        'XX',
        `KV0${k}`,
        `Kestrel Valley KV0${k}`,
        46.5 + k * 0.01,
        8.1,
        900,
        null,
        now,
        now,
      ]);
    }
    const analysts = ['bench-analyst-a', 'bench-analyst-b'];
    for (const id of analysts) {
      await conn.query('INSERT INTO users (id, email, display_name, password_hash, active, created_at, updated_at) VALUES (?, ?, ?, NULL, 1, ?, ?)', [id, `${id}@kestrel.example`, `Bench ${id.slice(-1)}`, now, now]);
      await conn.query('INSERT INTO user_roles (user_id, role) VALUES (?, ?)', [id, 'analyst']);
    }
    const rand = lcg(20260314);
    const BATCH = 5000;
    const t0 = performance.now();
    for (let start = 1; start <= ITEMS; start += BATCH) {
      const rows: string[] = [];
      for (let id = start; id < Math.min(start + BATCH, ITEMS + 1); id++) {
        const stationId = 1 + Math.floor(rand() * 6);
        let u = rand();
        let state = 'new';
        for (const [s, p] of STATES) {
          if (u < p) {
            state = s;
            break;
          }
          u -= p;
        }
        // Scores: mostly noise-like (0–3), a tail up to 10.
        const score = Math.round(Math.min(10, -Math.log(1 - rand() * 0.9999) * 1.2) * 100) / 100;
        const flag = score >= 5 ? 'likely event' : score >= 2.5 ? 'needs eyes' : 'likely noise';
        const windowStartMs = YEAR_START_MS + Math.floor((id / ITEMS) * YEAR_MS) + Math.floor(rand() * 60_000);
        const createdMs = windowStartMs + 5000 + Math.floor(rand() * 20_000);
        const labelType = state === 'dismissed' ? 'noise' : state === 'labelled' || state === 'escalated' || state === 'confirmed' ? (EVENT_TYPES[Math.floor(rand() * EVENT_TYPES.length)] ?? 'earthquake') : null;
        const claimed = state === 'in review' ? `'${analysts[id % 2]}'` : 'NULL';
        const claimedAt = state === 'in review' ? `'${sqlDate(createdMs + 60_000)}'` : 'NULL';
        const updater = state === 'new' ? 'NULL' : `'${analysts[(id + 1) % 2]}'`;
        rows.push(
          `(${id},${id},${stationId},'${state}',${score},'${flag}','[]','${sqlDate(windowStartMs)}',1,${claimed},${claimedAt},NULL,${labelType ? `'${labelType}'` : 'NULL'},${updater},'${sqlDate(createdMs)}','${sqlDate(createdMs)}')`,
        );
      }
      await conn.query(
        `INSERT INTO queue_items (id, window_id, station_id, state, score, flag, reasons, window_start, version, claimed_by_user_id, claimed_at, label, label_type, updated_by_user_id, created_at, updated_at) VALUES ${rows.join(',')}`,
      );
      if ((start - 1) % 100_000 === 0) log(`  loaded ${start - 1 + rows.length} items (${((performance.now() - t0) / 1000).toFixed(0)} s)`);
    }
    await conn.query('SET UNIQUE_CHECKS = 1');
    await conn.query('SET FOREIGN_KEY_CHECKS = 1');
    await conn.query('ANALYZE TABLE queue_items, stations, users');
    log(`  bulk load: ${ITEMS} items in ${((performance.now() - t0) / 1000).toFixed(1)} s`);
    return analysts[0] ?? 'bench-analyst-a';
  } finally {
    conn.release();
  }
}

const explainRow = z.object({ id: z.unknown(), select_type: z.unknown(), table: z.string().nullable(), type: z.string().nullable(), key: z.string().nullable(), rows: z.unknown().transform((v) => (v === null || v === undefined ? null : Number(v))), Extra: z.string().nullable() }).passthrough();

async function main(): Promise<number> {
  let server: PrivateMariaDb | undefined;
  let running: RunningServer | undefined;
  const cleanups: Array<() => Promise<void>> = [];
  const onSignal = () => void Promise.allSettled(cleanups.map((c) => c())).then(() => process.exit(130));
  process.once('SIGINT', onSignal);
  process.once('SIGTERM', onSignal);
  try {
    if (FRESH && existsSync(DATA_DIR)) rmSync(DATA_DIR, { recursive: true, force: true });
    log(machineLine());
    log(`bench:queue — ${ITEMS} items, ${REPEATS} timed requests per view, target p95 ≤ ${TARGET_P95_MS} ms`);
    server = await startPrivateMariaDb({ dataDir: DATA_DIR, port: await freePort(), log });
    const srv = server;
    cleanups.push(() => srv.stop());
    const url = await provisionDatabase(server, { database: 'seisift_bench', user: 'seisift_bench', password: 'seisift-bench-pass' });
    const client = createDatabaseClient(url, { connectionLimit: 10 });
    cleanups.unshift(() => client.close());
    await migrateDatabase(client.db);

    const have = await count(client.pool, 'SELECT COUNT(*) AS n FROM queue_items');
    let analystId = 'bench-analyst-a';
    if (have !== ITEMS || (await count(client.pool, "SELECT COUNT(*) AS n FROM users WHERE id = 'bench-analyst-a'")) !== 1) {
      log(`loading ${ITEMS} queue items (found ${have})…`);
      analystId = await bulkLoad(client.pool);
    } else {
      log(`reusing ${have} queue items in ${DATA_DIR}`);
    }
    const sessions = createSessionStore(client.db, { idleHours: 24 });
    const session = await sessions.create(analystId, { ipAddress: '127.0.0.1', userAgent: 'bench:queue' });
    const cookie = `${sessionCookieName}=${session.id}`;

    const env = loadEnv({ NODE_ENV: 'production', LOG_LEVEL: 'silent' });
    const logger = createLogger('silent');
    const mail = await setUpMail({ ...env, SMTP_URL: undefined }, client.db, { fakePort: 0 });
    const ctx = createAppContext({ env, database: client, mailer: mail.mailer, logger });
    running = await startServer(ctx, { host: '127.0.0.1', port: 0, serveClient: false });
    const r = running;
    cleanups.unshift(async () => {
      await r.close();
      await ctx.close();
      await mail.close();
    });

    // Timings through HTTP (the route: auth, validation, service, presenter, JSON).
    let failed = false;
    const results: Array<{ view: string; n: number; p50: number; p95: number; max: number; items: number; total: number }> = [];
    for (const [view, qs] of Object.entries(VIEWS)) {
      const path = `/api/queue?${new URLSearchParams(Object.fromEntries(qs.split('&').map((kv) => kv.split('=') as [string, string]))).toString()}`;
      const times: number[] = [];
      let items = 0;
      let total = 0;
      const viewStart = performance.now();
      for (let i = 0; i < 2 + REPEATS; i++) {
        if (i >= 7 && performance.now() - viewStart > VIEW_BUDGET_MS) break;
        const t0 = performance.now();
        const res = await fetch(`${running.url}${path}`, { headers: { Cookie: cookie } });
        const json: unknown = await res.json();
        const ms = performance.now() - t0;
        if (res.status !== 200) throw new Error(`${view}: HTTP ${res.status} ${JSON.stringify(json)}`);
        const body = z.object({ items: z.array(z.unknown()), total: z.number(), nextCursor: z.string().nullable() }).parse(json);
        if (i >= 2) times.push(ms);
        items = body.items.length;
        total = body.total;
      }
      times.sort((a, b) => a - b);
      results.push({ view, n: times.length, p50: percentile(times, 50), p95: percentile(times, 95), max: times[times.length - 1] ?? NaN, items, total });
    }
    // Page 2 of the default view (keyset cursor).
    {
      const first = z.object({ nextCursor: z.string().nullable() }).parse(await (await fetch(`${running.url}/api/queue?state=new,returned,in%20review&limit=100`, { headers: { Cookie: cookie } })).json());
      if (first.nextCursor) {
        const times: number[] = [];
        const viewStart = performance.now();
        for (let i = 0; i < 2 + REPEATS; i++) {
          if (i >= 7 && performance.now() - viewStart > VIEW_BUDGET_MS) break;
          const t0 = performance.now();
          const res = await fetch(`${running.url}/api/queue?state=new,returned,in%20review&limit=100&cursor=${first.nextCursor}`, { headers: { Cookie: cookie } });
          await res.arrayBuffer();
          if (i >= 2) times.push(performance.now() - t0);
        }
        times.sort((a, b) => a - b);
        results.push({ view: 'default view, page 2 (cursor)', n: times.length, p50: percentile(times, 50), p95: percentile(times, 95), max: times[times.length - 1] ?? NaN, items: 100, total: NaN });
      }
    }
    log('');
    log(machineLine());
    log('view'.padEnd(46) + 'n'.padStart(4) + 'p50 ms'.padStart(8) + 'p95 ms'.padStart(8) + 'max ms'.padStart(8) + 'rows'.padStart(6) + 'total'.padStart(9) + '  target');
    for (const x of results) {
      const ok = x.p95 <= TARGET_P95_MS;
      if (!ok) failed = true;
      log(`${x.view.padEnd(46)}${String(x.n).padStart(4)}${x.p50.toFixed(1).padStart(8)}${x.p95.toFixed(1).padStart(8)}${x.max.toFixed(1).padStart(8)}${String(x.items).padStart(6)}${(Number.isNaN(x.total) ? '' : String(x.total)).padStart(9)}  ${ok ? 'ok' : 'MISSED'}`);
    }

    // EXPLAIN of each view's statements, captured from the same service call the route makes.
    log('');
    log('EXPLAIN (table type key rows Extra) per view:');
    for (const [view, qs] of Object.entries(VIEWS)) {
      const captured: Array<{ sql: string; params: unknown[] }> = [];
      const spy = drizzle(client.pool, { schema, mode: 'default', logger: { logQuery: (sql, params) => captured.push({ sql, params }) } });
      const parsed = queueQuerySchema.parse(Object.fromEntries(qs.split('&').map((kv) => kv.split('='))));
      await listQueue(spy, parsed, 'all');
      log(`  ${view}`);
      for (const q of captured) {
        const [rows] = await client.pool.query(`EXPLAIN ${q.sql}`, q.params);
        for (const row of z.array(explainRow).parse(rows)) {
          const full = row.type === 'ALL' && (row.rows ?? 0) > 100;
          if (full) failed = true;
          log(`    ${String(row.table).padEnd(14)} ${String(row.type).padEnd(7)} ${String(row.key ?? '-').padEnd(40)} ${String(row.rows ?? '').padStart(8)}  ${row.Extra ?? ''}${full ? '   <-- FULL TABLE SCAN' : ''}`);
        }
      }
    }
    // The pieces of the default view on their own, and the plan proposed in docs/PERFORMANCE.md,
    // timed as raw SQL on the same data (for comparison only; the API timings above are the figures).
    log('');
    log('pieces of the default view as raw SQL (p50 / p95 ms over 20 runs):');
    const timeSql = async (label: string, sql: string, params: unknown[] = []) => {
      const times: number[] = [];
      for (let i = 0; i < 22; i++) {
        const t0 = performance.now();
        await client.pool.query(sql, params);
        if (i >= 2) times.push(performance.now() - t0);
      }
      times.sort((a, b) => a - b);
      log(`  ${label.padEnd(70)} ${percentile(times, 50).toFixed(1).padStart(8)} ${percentile(times, 95).toFixed(1).padStart(8)}`);
    };
    const working = ['new', 'returned', 'in review'];
    await timeSql('counts: SELECT state, COUNT(*) … GROUP BY state (whole table)', 'SELECT state, COUNT(*) AS n FROM queue_items GROUP BY state');
    await timeSql('page ids, as now: state IN (…) ORDER BY score DESC, id DESC LIMIT 101', 'SELECT id FROM queue_items WHERE state IN (?, ?, ?) ORDER BY score DESC, id DESC LIMIT 101', working);
    const union = working.map(() => '(SELECT id, score FROM queue_items WHERE state = ? ORDER BY score DESC, id DESC LIMIT 101)').join(' UNION ALL ');
    await timeSql('page ids, proposed: one LIMIT per state, UNION ALL, merge', `SELECT id FROM (${union}) u ORDER BY score DESC, id DESC LIMIT 101`, working);
    await timeSql(
      'page rows, proposed: join stations/users for those ids only',
      `SELECT q.id, q.state, q.score, q.flag, q.reasons, s.network, s.code, c.display_name, w.display_name FROM (SELECT id FROM (${union}) u ORDER BY score DESC, id DESC LIMIT 101) p JOIN queue_items q ON q.id = p.id JOIN stations s ON s.id = q.station_id LEFT JOIN users c ON c.id = q.claimed_by_user_id LEFT JOIN users w ON w.id = q.updated_by_user_id ORDER BY q.score DESC, q.id DESC`,
      working,
    );

    log('');
    log(failed ? 'bench:queue: a target was MISSED (see above)' : 'bench:queue: every target met');
    return failed ? 1 : 0;
  } finally {
    for (const c of cleanups) await c().catch(() => {});
  }
}

const code = await main().catch((err: unknown) => {
  console.error(`bench:queue: ${err instanceof Error ? err.stack ?? err.message : String(err)}`);
  return 1;
});
process.exit(code);
