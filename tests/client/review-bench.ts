/**
 * Browser benchmark of the review work (npm run bench:review): a private MariaDB, the real server on
 * the demo data (seeded and ingested as `npm start` does) plus one 10-station event (3 channels,
 * 120 s at 100 sps each, synthetic windows from the travel-time engine on a ring of invented Kestrel
 * Valley sites, tests/setup/event-fixtures.ts), and Debian's chromium at 1440×900. Prints p50 / p95 /
 * max over BENCH_REPS repetitions (default 10) of
 * - first queue view: navigation to /queue until its rows are in the page;
 * - claim to review drawn: C on a waiting row (selected a second before, as an analyst reads it; the
 *   queue prefetches the selected row's review) until the review screen has drawn that item's traces;
 * - key to the next item drawn: J on the review screen until the next item's traces are drawn (the
 *   screen prefetches the next item: client/src/features/queue/hooks/use-prefetch-item.ts);
 * - event screen drawn: navigation to /events/:id until the record section has drawn its 10 vertical
 *   traces (all 30 channels loaded), and A until the 30 rows are drawn;
 * - relocation round trip: a pick moved with the keyboard (P at the mouse) until the screen shows the
 *   new origin, its predictions redrawn; and the relocate key (L) the same way.
 * Claim and J are also timed on the page's own clock (the key event's time stamp to two frames after
 * the traces appear), which leaves out the harness's round trips to the browser.
 * Beside them: the machine's load average (os.loadavg) before each block, and a reference measured
 * in the same run (a trivial page set and painted; a static file of the server opened from
 * about:blank, the browser's own share of every page-load figure; a fixed piece of JavaScript in the
 * page), since the machine is shared. Targets (issue 18): next item p95 ≤ 250 ms, claim to review p95 ≤ 400 ms,
 * first queue ≤ 800 ms, event screen ≤ 1 s, relocation ≤ 300 ms. Figures, not a test: nothing fails.
 * Needs the built client (built here when missing).
 */
import { existsSync, mkdirSync, mkdtempSync, rmSync } from 'node:fs';
import { loadavg } from 'node:os';
import { join, resolve } from 'node:path';
import type { Page } from 'playwright-core';
import { clientDistDir } from '@server/app';
import { buildClient, freePort } from '@server/bootstrap/common';
import { provisionDatabase, startPrivateMariaDb } from '@server/bootstrap/mariadb';
import { seedDemo } from '@server/db/seed-demo';
import { prepareDemoEvents } from '@server/demo/demo-events';
import { ingestDemo } from '@server/demo/ingest-demo';
import { startServer } from '@server/index';
import { createAnalysisPool } from '@server/jobs/analysis-pool';
import { launchBrowser, screenshot } from '@tests/setup/browser';
import { seedSyntheticEvent } from '@tests/setup/event-fixtures';
import { createPerson } from '@tests/setup/queue-fixtures';
import { createTestContext } from '@tests/setup/test-app';

const REPS = Math.max(2, Number(process.env.BENCH_REPS ?? 10));

/** The q-quantile of xs (nearest rank). */
const quantile = (xs: readonly number[], q: number): number => {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.max(0, Math.ceil(q * s.length) - 1))] ?? NaN;
};
const load = (): string => loadavg().map((x) => x.toFixed(2)).join(' ');
const results: Array<{ what: string; ms: number[]; target: number | null; load: string }> = [];
/** Prints one figure line and keeps it for the summary. */
function report(what: string, ms: number[], target: number | null, loadBefore: string): void {
  results.push({ what, ms, target, load: loadBefore });
  const p95 = quantile(ms, 0.95);
  console.log(
    `${what.padEnd(44)} n=${String(ms.length).padStart(2)}  p50 ${quantile(ms, 0.5).toFixed(0).padStart(5)} ms  p95 ${p95.toFixed(0).padStart(5)} ms  max ${Math.max(...ms).toFixed(0).padStart(5)} ms` +
      `${target === null ? '' : `  target p95 ≤ ${target} ms: ${p95 <= target ? 'met' : 'MISSED'}`}  (load ${loadBefore})`,
  );
}

/**
 * Waits until `selector` matches, looking once per animation frame (as the event and relocation
 * figures always did). Playwright's waitForSelector looks again after 20, 50, 100, 100, then every
 * 500 ms: a figure timed with it lands on one of those steps (a review drawn at 90 ms was seen at
 * ~180 ms), which added up to ~100 ms to the first queue view, claim and J until 2026-12-04.
 */
const shows = (page: Page, selector: string, timeout = 60_000): Promise<unknown> =>
  page.waitForFunction((sel) => document.querySelector(sel) !== null, selector, { timeout, polling: 'raf' });

/** Two animation frames: what was committed to the page has been painted. */
const painted = (page: Page): Promise<unknown> => page.evaluate('new Promise((r) => requestAnimationFrame(() => requestAnimationFrame(r)))');

/**
 * Arms the page's own clock for the next press of `key`: from the key event's time stamp until two
 * animation frames after `selector` first matches (as `painted`), without the harness's round trips
 * to the browser (pressing the key, waiting for the selector, asking for the frames). Read it with
 * `inPageMs` once the harness has seen the same thing.
 */
const armInPage = (page: Page, key: string, selector: string): Promise<unknown> =>
  page.evaluate(`(() => {
    window.__benchInPage = new Promise((resolve) => {
      let t0 = null;
      const onKey = (e) => { if (e.key === ${JSON.stringify(key)} && t0 === null) { t0 = e.timeStamp; removeEventListener('keydown', onKey, true); check(); } };
      const check = () => {
        if (t0 === null || !document.querySelector(${JSON.stringify(selector)})) return;
        observer.disconnect();
        requestAnimationFrame(() => requestAnimationFrame(() => resolve(performance.now() - t0)));
      };
      const observer = new MutationObserver(check);
      observer.observe(document, { subtree: true, childList: true, attributes: true });
      addEventListener('keydown', onKey, true);
    });
  })()`);
/** What the page's own clock measured since `armInPage`, ms. */
const inPageMs = (page: Page): Promise<number> => page.evaluate<number>('window.__benchInPage');

/** The trivial-page reference: a tiny document set and painted, ms. */
async function referencePage(page: Page): Promise<number> {
  const t = performance.now();
  await page.setContent('<!doctype html><title>reference</title><p>reference</p>');
  await painted(page);
  return performance.now() - t;
}
/** The in-page CPU reference: sorting 200 000 pseudo-random numbers, ms (the page's own clock). */
const referenceCpu = (page: Page): Promise<number> =>
  page.evaluate<number>(`(() => { let x = 1; const a = new Float64Array(200000); for (let i = 0; i < a.length; i++) { x = (x * 16807) % 2147483647; a[i] = x; } const t = performance.now(); a.sort(); return performance.now() - t; })()`);

if (!existsSync(join(clientDistDir, 'index.html'))) {
  console.log('bench:review: building the client…');
  buildClient();
}
const base = resolve('.data');
mkdirSync(base, { recursive: true });
const dataDir = mkdtempSync(join(base, 'bench-review-db-'));
// SEISIFT_DB_PORT / PORT when set (a shared machine hands out ports), else any free one.
const maria = await startPrivateMariaDb({ dataDir, port: Number(process.env.SEISIFT_DB_PORT) || (await freePort()), log: () => {} });
try {
  process.env.SEISIFT_TEST_DB_ADMIN_URL = await provisionDatabase(maria, { database: 'seisift_test', user: 'seisift_test', password: 'seisift-bench-pass', grantPattern: 'seisift\\_test%' });
  const ctx = await createTestContext();
  const db = ctx.database.db;
  const pool = createAnalysisPool({ threads: 1 });
  let t = performance.now();
  await seedDemo(db, { demoPassword: 'kestrel-bench-pass' });
  const ingest = await ingestDemo({ db, pool, notify: () => ctx.hub.notify(), logger: ctx.logger });
  const demoEvents = await prepareDemoEvents(db, () => ctx.hub.notify());
  console.log(`demo data: ${ingest.created} files, ${ingest.items} queue items, ${demoEvents.events} demo events, in ${((performance.now() - t) / 1000).toFixed(1)} s`);
  await pool.close();
  t = performance.now();
  const sue = await createPerson(db, { roles: ['supervisor'] });
  const codes = Array.from({ length: 10 }, (_, i) => `KB${String(i + 1).padStart(2, '0')}`);
  const seeded = await seedSyntheticEvent(db, {
    codes,
    // Azimuth (°) and distance (km) of each invented site from the epicentre.
    placements: codes.map((_, i) => [i * 36 + 7, 9 + i * 3.5] as const),
    truth: { latitudeDeg: 46.25, longitudeDeg: 11.09, depthKm: 7, timeS: Date.parse('2026-03-12T02:41:17.400Z') / 1000 },
    supervisor: sue,
    durationS: 120,
    saveModel: false,
  });
  console.log(`bench event ${seeded.eventId}: 10 stations × 3 channels × 120 s at 100 sps, built in ${((performance.now() - t) / 1000).toFixed(1)} s`);
  const ana = await createPerson(db, { roles: ['analyst'], displayName: 'Bench Analyst' });
  // As `npm start` does: the analysis workers start with the server, not with the first trace request.
  const running = await startServer(ctx, { host: '127.0.0.1', port: Number(process.env.PORT) || 0, warmAnalysis: true });
  const url = running.url;
  const browser = await launchBrowser({ width: 1440, height: 900, colorScheme: 'dark' });
  try {
    await browser.context.addCookies([{ name: 'seisift_session', value: ana.sessionId, url }]);
    const page = browser.context.pages()[0] ?? (await browser.context.newPage());
    const problems: string[] = [];
    page.on('pageerror', (err) => problems.push(err.message));
    // Where the time goes: each API request's time from its start to the end of its response, by
    // route (ids as :id), printed after each block.
    let requestMs = new Map<string, number[]>();
    page.on('requestfinished', (r) => {
      const u = new URL(r.url());
      if (!u.pathname.startsWith('/api/')) return;
      const key = `${r.method()} ${u.pathname.replace(/\/\d+/g, '/:id')}`;
      const ms = r.timing().responseEnd;
      if (ms >= 0) requestMs.set(key, [...(requestMs.get(key) ?? []), ms]);
    });
    const printRequests = (): void => {
      const rows = [...requestMs].map(([k, ms]) => ({ k, n: ms.length, p50: quantile(ms, 0.5), max: Math.max(...ms) })).sort((a, b) => b.p50 - a.p50).slice(0, 6);
      console.log(`   slowest API requests in that block (p50 / max, n): ${rows.map((r) => `${r.k} ${r.p50.toFixed(0)}/${r.max.toFixed(0)} ms (${r.n})`).join('; ')}`);
      requestMs = new Map();
    };
    // Which items' whole-window traces have arrived (the review screen's first trace request).
    const tracesArrived = new Set<number>();
    page.on('response', (r) => {
      const m = /\/api\/queue\/items\/(\d+)\/traces\?points=1600$/.exec(r.url());
      if (m && r.ok()) tracesArrived.add(Number(m[1]));
    });
    // The size of the traces answers (bytes of JSON, uncompressed), by route: printed with the event block.
    const tracesBytes = new Map<string, number[]>();
    page.on('requestfinished', (r) => {
      const u = new URL(r.url());
      if (!/^\/api\/(events|queue\/items)\/\d+\/traces$/.test(u.pathname)) return;
      const key = u.pathname.replace(/\/\d+/g, '/:id');
      void r.response().then((res) => res?.body()).then((b) => { if (b) tracesBytes.set(key, [...(tracesBytes.get(key) ?? []), b.length]); }).catch(() => undefined);
    });
    /** Resolves once item `id`'s review screen shows and its traces have arrived and are painted. */
    const reviewDrawn = async (id: number): Promise<void> => {
      await shows(page, `[data-item-id="${id}"] [data-testid="trace-panel"] .uplot`);
      while (!tracesArrived.has(id)) await new Promise((r) => setTimeout(r, 5));
      await painted(page);
    };

    // Warm-up (not counted): the client's files into the browser's cache, the server's first queries.
    await page.goto(`${url}/queue`);
    await page.waitForSelector('tr[data-item-id]', { timeout: 60_000 });

    // Reference.
    let before = load();
    const refPage: number[] = [];
    const refCpu: number[] = [];
    for (let i = 0; i < REPS; i++) {
      refPage.push(await referencePage(page));
      refCpu.push(await referenceCpu(page));
    }
    report('reference: trivial page set and painted', refPage, null, before);
    // The browser's own cost of opening a page of this server from about:blank (a new document in a
    // new renderer process), as every page-load figure below pays it: a static file, no code of ours.
    const refNav: number[] = [];
    for (let i = 0; i < REPS; i++) {
      await page.goto('about:blank');
      const t0 = performance.now();
      await page.goto(`${url}/favicon.svg`);
      await painted(page);
      refNav.push(performance.now() - t0);
    }
    report('reference: navigation to a static file, painted', refNav, null, before);
    report('reference: sort 200 000 numbers in the page', refCpu, null, before);

    // First queue view.
    requestMs = new Map();
    before = load();
    const firstQueue: number[] = [];
    for (let i = 0; i < REPS; i++) {
      await page.goto('about:blank');
      t = performance.now();
      await page.goto(`${url}/queue`);
      await shows(page, 'tr[data-item-id]');
      await painted(page);
      firstQueue.push(performance.now() - t);
    }
    // The last view's timeline, from the page's own clock (ms after navigation start).
    console.log(
      `   timeline of the last: ${await page.evaluate<string>(`(() => {
        const n = performance.getEntriesByType('navigation')[0];
        const res = performance.getEntriesByType('resource').sort((a, b) => b.responseEnd - a.responseEnd).slice(0, 4);
        const paint = performance.getEntriesByType('paint').map((p) => p.name + ' ' + p.startTime.toFixed(0)).join(', ');
        return 'document ' + n.responseEnd.toFixed(0) + ', DOMContentLoaded ' + n.domContentLoadedEventEnd.toFixed(0) + ', load ' + n.loadEventEnd.toFixed(0) + ', ' + paint + ', now ' + performance.now().toFixed(0) + '; last responses: ' + res.map((r) => r.name.replace(location.origin, '') + ' ' + r.startTime.toFixed(0) + '→' + r.responseEnd.toFixed(0)).join(', ');
      })()`)}`,
    );
    report('first queue view (navigation to rows painted)', firstQueue, 800, before);
    printRequests();
    await screenshot(page, 'bench-review-queue');
    const visibleRows = await page.evaluate(`(() => {
      const el = document.querySelector('[aria-label="Queue items"]');
      if (!el) return 0;
      const box = el.getBoundingClientRect();
      return [...el.querySelectorAll('tr[data-item-id]')].filter((r) => { const b = r.getBoundingClientRect(); return b.top >= box.top && b.bottom <= box.bottom + 0.5; }).length;
    })()`);
    console.log(`queue rows fully visible at 1440×900: ${String(visibleRows)}`);

    // Claim to review drawn, then J to the next item drawn, from that review screen.
    before = load();
    const claimMs: number[] = [];
    const nextMs: number[] = [];
    const claimInPage: number[] = [];
    const nextInPage: number[] = [];
    for (let i = 0; i < REPS; i++) {
      await page.goto(`${url}/queue?state=new`);
      await page.waitForSelector('tr[data-role="item"][data-state="new"]', { timeout: 60_000 });
      const id = Number(await page.locator('tr[data-role="item"][data-state="new"]').first().getAttribute('data-item-id'));
      await page.click(`tr[data-item-id="${id}"] td:nth-child(2)`);
      // The analyst reads the selected row for a second before claiming (the queue prefetches it).
      await page.waitForTimeout(1000);
      await armInPage(page, 'c', `[data-item-id="${id}"] [data-testid="trace-panel"] .uplot`);
      t = performance.now();
      await page.keyboard.press('c');
      await page.waitForURL(new RegExp(`/queue/items/${id}(\\?|$)`), { timeout: 60_000 });
      await reviewDrawn(id);
      claimMs.push(performance.now() - t);
      claimInPage.push(await inPageMs(page));
      // Give the prefetch of the next item its moment, as an analyst reading the screen would.
      await page.waitForTimeout(1500);
      await armInPage(page, 'j', `[data-item-id]:not([data-item-id="${id}"]) [data-testid="trace-panel"] .uplot`);
      t = performance.now();
      await page.keyboard.press('j');
      await page.waitForURL((u) => /\/queue\/items\/(\d+)/.test(u.pathname) && !u.pathname.endsWith(`/${id}`), { timeout: 60_000 });
      const next = Number(/\/queue\/items\/(\d+)/.exec(page.url())?.[1]);
      await reviewDrawn(next);
      nextMs.push(performance.now() - t);
      nextInPage.push(await inPageMs(page));
    }
    report('claim to review drawn (C, row read 1 s)', claimMs, 400, before);
    report('key to the next item drawn (J, prefetched)', nextMs, 250, before);
    // The same two, on the page's own clock (the harness's round trips left out): what the analyst
    // waits for. The targets above are judged on the harness's figures, which include them.
    report('   claim, on the page’s own clock', claimInPage, null, before);
    report('   J, on the page’s own clock', nextInPage, null, before);
    printRequests();

    // Event screen.
    before = load();
    const eventMs: number[] = [];
    const allMs: number[] = [];
    const plot = page.getByTestId('record-section').locator('.uplot');
    const rowCount = async (): Promise<number> => ((await plot.getAttribute('data-rows').catch(() => null)) ?? '').split(' ').filter(Boolean).length;
    for (let i = 0; i < REPS; i++) {
      await page.goto('about:blank');
      t = performance.now();
      await page.goto(`${url}/events/${seeded.eventId}`);
      await page.waitForFunction(() => (document.querySelector('[data-testid="record-section"] .uplot')?.getAttribute('data-rows') ?? '').split(' ').filter(Boolean).length === 10, undefined, { timeout: 90_000, polling: 'raf' });
      await painted(page);
      eventMs.push(performance.now() - t);
      t = performance.now();
      await page.keyboard.press('a');
      await page.waitForFunction(() => (document.querySelector('[data-testid="record-section"] .uplot')?.getAttribute('data-rows') ?? '').split(' ').filter(Boolean).length === 30, undefined, { timeout: 30_000, polling: 'raf' });
      await painted(page);
      allMs.push(performance.now() - t);
    }
    report('event screen drawn (10 stations, Z)', eventMs, 1000, before);
    report('event screen: A to all 30 channels drawn', allMs, null, before);
    printRequests();
    console.log(`   traces answers (JSON bytes, median): ${[...tracesBytes].map(([k, b]) => `${k} ${(quantile(b, 0.5) / 1024).toFixed(0)} kB (${b.length})`).join('; ')}`);
    if ((await rowCount()) !== 30) throw new Error('the record section lost its rows');

    // Relocation round trips: take the suggestions once (not timed), then move picks with the keyboard.
    await page.keyboard.press('v');
    const version = async (): Promise<number> => Number(await page.getByTestId('event-screen').getAttribute('data-event-version'));
    const originId = async (): Promise<string | null> => page.getByTestId('origin-panel').locator('[data-origin]').getAttribute('data-origin-id');
    let v = await version();
    await page.keyboard.press('Shift+A');
    await page.waitForFunction((min) => Number(document.querySelector('[data-testid="event-screen"]')?.getAttribute('data-event-version')) > min, v, { timeout: 60_000 });
    await page.waitForTimeout(500);
    /** Runs `act` and waits until the screen shows a newer event version with a new origin and the predictions of that origin painted. */
    // The page's main-thread work during each round trip: the long tasks (over 50 ms) it ran.
    await page.evaluate(`(() => { window.__longTasks = 0; new PerformanceObserver((l) => { for (const e of l.getEntries()) window.__longTasks += e.duration; }).observe({ type: 'longtask' }); })()`);
    const longTaskMs: number[] = [];
    const serverMs: number[] = [];
    const roundTrip = async (act: () => Promise<void>): Promise<number> => {
      await page.evaluate('window.__longTasks = 0');
      const change = page.waitForResponse((r) => r.request().method() !== 'GET' && r.url().includes(`/api/events/${seeded.eventId}`), { timeout: 60_000 });
      v = await version();
      const o = await originId();
      const geometry = page.waitForResponse((r) => r.url().includes(`/api/events/${seeded.eventId}/geometry`), { timeout: 60_000 });
      const t0 = performance.now();
      await act();
      await page.waitForFunction(
        ([min, oid]) => Number(document.querySelector('[data-testid="event-screen"]')?.getAttribute('data-event-version')) > Number(min) && document.querySelector('[data-origin-id]')?.getAttribute('data-origin-id') !== oid,
        [String(v), o ?? ''] as const,
        { timeout: 60_000, polling: 'raf' },
      );
      await geometry;
      await painted(page);
      const ms = performance.now() - t0;
      serverMs.push((await change).request().timing().responseEnd);
      longTaskMs.push(await page.evaluate<number>('window.__longTasks'));
      return ms;
    };
    const box = await page.getByTestId('record-section').locator('.u-over').boundingBox();
    if (!box) throw new Error('no plot area');
    const [from = '', to = ''] = ((await plot.getAttribute('data-x-range')) ?? '').split(' ');
    const rows = ((await plot.getAttribute('data-rows')) ?? '').split(' ');
    const x0 = Date.parse(from);
    const x1 = Date.parse(to);
    before = load();
    const pickMs: number[] = [];
    const relocateMs: number[] = [];
    for (let i = 0; i < REPS; i++) {
      const streamId = rows[i % rows.length] ?? '';
      const code = streamId.split('.')[1];
      const s = seeded.synth.find((x) => x.code === code);
      if (!s) throw new Error(`no synthetic station ${code}`);
      // The P pick moved by ±0.1 s around its true time, on that station's vertical.
      const at = s.pTimeUs / 1000 + (i % 2 === 0 ? 100 : -100);
      const r = rows.indexOf(streamId);
      await page.mouse.move(box.x + ((at - x0) / (x1 - x0)) * box.width, box.y + ((r + 0.5) * box.height) / rows.length);
      pickMs.push(await roundTrip(() => page.keyboard.press('p')));
      relocateMs.push(await roundTrip(() => page.keyboard.press('l')));
    }
    report('relocation round trip: P pick moved', pickMs, 300, before);
    report('relocation round trip: relocate key (L)', relocateMs, 300, before);
    console.log(`   of which the change request (sent to answered): p50 ${quantile(serverMs, 0.5).toFixed(0)} ms; the page's long tasks: p50 ${quantile(longTaskMs, 0.5).toFixed(0)} ms, max ${Math.max(...longTaskMs).toFixed(0)} ms`);
    printRequests();
    if (problems.length > 0) console.log(`page errors: ${problems.join(' | ')}`);
  } finally {
    await browser.close();
    await running.close();
    await ctx.close();
  }
  console.log(`\nload average now (1, 5, 15 min): ${load()}; ${REPS} repetitions each; p95 is the nearest-rank 95th percentile.`);
} finally {
  await maria.stop();
  rmSync(dataDir, { recursive: true, force: true });
}
