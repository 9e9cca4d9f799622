/**
 * Benchmark of the queue screen at 10 000 rows (npm run bench:queue-screen): a private MariaDB, the real server
 * and chromium. Prints
 * - GET /api/queue page times (500 rows, score order) over every keyset page, and the EXPLAIN of
 *   the first page's query;
 * - the queue screen: time to the first rows, time until all 10 000 rows are loaded by scrolling,
 *   and frame intervals while scrolling the virtualised table top to bottom (median, p95, frames
 *   over 33 ms), with the number of table rows in the DOM (the virtualiser keeps it small).
 * Needs the built client (node node_modules/.bin/vite build). Rows are synthetic (test input).
 */
import { mkdirSync, mkdtempSync, rmSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { sql } from 'drizzle-orm';
import { freePort } from '@server/bootstrap/common';
import { provisionDatabase, startPrivateMariaDb } from '@server/bootstrap/mariadb';
import { queueItems } from '@server/db/schema/queue-items';
import { uploads, windows } from '@server/db/schema/uploads';
import { launchBrowser } from '@tests/setup/browser';
import { createPerson, ensureStation } from '@tests/setup/queue-fixtures';
import { startTestServer } from '@tests/setup/test-server';

const N = Number(process.env.BENCH_ROWS ?? 10_000);
const quantile = (xs: number[], q: number) => {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.floor(q * s.length))] ?? NaN;
};

const base = resolve('.data');
mkdirSync(base, { recursive: true });
const dataDir = mkdtempSync(join(base, 'bench-db-'));
const maria = await startPrivateMariaDb({ dataDir, port: await freePort(), log: () => {} });
try {
  process.env.SEISIFT_TEST_DB_ADMIN_URL = await provisionDatabase(maria, { database: 'seisift_test', user: 'seisift_test', password: 'seisift-bench-pass', grantPattern: 'seisift\\_test%' });
  const server = await startTestServer();
  const db = server.ctx.database.db;
  const stationIds = await Promise.all(['KV01', 'KV02', 'KV03', 'KV04', 'KV05', 'KV06'].map((c) => ensureStation(db, c)));
  const analyst = await createPerson(db, { roles: ['analyst'] });
  let t = performance.now();
  const now = Date.now();
  for (let start = 0; start < N; start += 500) {
    const n = Math.min(500, N - start);
    const idx = Array.from({ length: n }, (_, k) => start + k);
    await db.transaction(async (tx) => {
      const [up] = await tx.insert(uploads).values(
        idx.map((i) => ({ sha256: i.toString(16).padStart(64, '0'), filename: `b${i}.mseed`, sizeBytes: 1, format: 'mseed2', original: Buffer.from([0]), stationId: stationIds[i % 6] ?? 1, createdAt: new Date(now - i * 1000) })),
      );
      const [win] = await tx.insert(windows).values(
        idx.map((i, k) => ({ uploadId: up.insertId + k, stationId: stationIds[i % 6] ?? 1, startTime: new Date(now - i * 1000 - 120_000), endTime: new Date(now - i * 1000), analysis: {}, engineVersion: 'bench', createdAt: new Date(now - i * 1000) })),
      );
      await tx.insert(queueItems).values(
        idx.map((i, k) => ({
          windowId: win.insertId + k,
          stationId: stationIds[i % 6] ?? 1,
          state: i % 13 === 0 ? 'in review' : 'new',
          score: ((i * 7919) % 1000) / 10 - 20,
          flag: i % 3 === 0 ? 'likely event' : i % 3 === 1 ? 'likely noise' : 'needs eyes',
          reasons: [`synthetic reason ${i}`],
          windowStart: new Date(now - i * 1000 - 120_000),
          createdAt: new Date(now - i * 1000),
          updatedAt: new Date(now - i * 1000),
        })),
      );
    });
  }
  console.log(`seeded ${N} queue items in ${((performance.now() - t) / 1000).toFixed(1)} s`);

  // API: every keyset page of the default view.
  const pageMs: number[] = [];
  let cursor: string | null = null;
  let rows = 0;
  do {
    const q = `state=new,returned,in%20review&sort=score&limit=500${cursor ? `&cursor=${encodeURIComponent(cursor)}` : ''}`;
    t = performance.now();
    const res = await fetch(`${server.url}/api/queue?${q}`, { headers: { cookie: analyst.cookie } });
    const body = (await res.json()) as { items: unknown[]; nextCursor: string | null };
    pageMs.push(performance.now() - t);
    rows += body.items.length;
    cursor = body.nextCursor;
  } while (cursor);
  console.log(`GET /api/queue: ${pageMs.length} pages, ${rows} rows; per page median ${quantile(pageMs, 0.5).toFixed(1)} ms, max ${Math.max(...pageMs).toFixed(1)} ms`);
  const [explain] = await server.ctx.database.pool.query(
    "EXPLAIN SELECT id FROM queue_items WHERE state = 'new' AND (score < 50 OR (score = 50 AND id < 9000)) ORDER BY score DESC, id DESC LIMIT 501",
  );
  console.log(`EXPLAIN (one state's keyset page, score order; listQueue runs one query per state and merges): ${JSON.stringify(explain)}`);
  void sql;

  // Browser: load and scroll.
  const b = await launchBrowser({ width: 1440, height: 900 });
  await b.context.addCookies([{ name: 'seisift_session', value: analyst.sessionId, url: server.url }]);
  const page = b.context.pages()[0] ?? (await b.context.newPage());
  t = performance.now();
  await page.goto(`${server.url}/queue`);
  await page.waitForSelector('tr[data-item-id]');
  console.log(`queue screen: first rows after ${(performance.now() - t).toFixed(0)} ms`);
  t = performance.now();
  for (let i = 0; i < 200; i++) {
    const loaded = Number(
      await page.evaluate(`(() => {
        const el = document.querySelector('[aria-label="Queue items"]');
        if (el) el.scrollTop = el.scrollHeight;
        return el ? Number(el.querySelector('table')?.getAttribute('aria-rowcount') ?? 0) - 1 : 0;
      })()`),
    );
    if (loaded >= rows) break;
    await page.waitForTimeout(100);
  }
  console.log(`queue screen: all ${rows} rows loaded by scrolling after ${(performance.now() - t).toFixed(0)} ms`);
  // Passed as text: tsx's helpers (__name) do not exist inside the page.
  const frames = await page.evaluate<{ intervals: number[]; domRows: number }>(`new Promise((done) => {
    const el = document.querySelector('[aria-label="Queue items"]');
    if (!el) return done({ intervals: [], domRows: 0 });
    el.scrollTop = 0;
    const intervals = [];
    let last = performance.now();
    let domRows = 0;
    const step = () => {
      const now = performance.now();
      intervals.push(now - last);
      last = now;
      el.scrollTop += 400;
      domRows = Math.max(domRows, el.querySelectorAll('tr[data-item-id]').length);
      if (el.scrollTop + el.clientHeight < el.scrollHeight - 1 && intervals.length < 2000) requestAnimationFrame(step);
      else done({ intervals: intervals.slice(1), domRows });
    };
    requestAnimationFrame(step);
  })`);
  const slow = frames.intervals.filter((x) => x > 33).length;
  console.log(
    `scrolling ${rows} rows at 400 px per frame: ${frames.intervals.length} frames, interval median ${quantile(frames.intervals, 0.5).toFixed(1)} ms, p95 ${quantile(frames.intervals, 0.95).toFixed(1)} ms, ${slow} over 33 ms; at most ${frames.domRows} rows in the DOM`,
  );
  await b.close();
  await server.close();
} finally {
  await maria.stop();
  rmSync(dataDir, { recursive: true, force: true });
}
