/**
 * `npm run docs:screenshots`: the README's screenshots of the main screens, taken with the browser
 * (Debian chromium via playwright-core) from a throw-away Seisift: its own private MariaDB in a
 * fresh folder under .data/ (never the `npm start` data in .data/mariadb), the Kestrel Valley demo
 * seeded and its windows ingested through the real ingest path as `npm start` does, the demo
 * analyst's handful of labels and escalations included. Three demo windows of one earthquake
 * (KV01–KV03 at 10:12) are held back so the demo operator uploads them on the upload page.
 *
 * Writes docs/screenshots/NN-name.png at 1440×900 (viewport only), dark theme, and one light-theme
 * shot. Builds the client first unless `--no-build` is given. Prints each file with its size and
 * stops with exit code 1 naming the step when a screen does not show what it should.
 */
import { copyFileSync, cpSync, mkdirSync, mkdtempSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { and, count, desc, eq, isNull } from 'drizzle-orm';
import type { Page } from 'playwright-core';
import { buildClient } from '@server/bootstrap/common';
import { eventMembers } from '@server/db/schema/events';
import { queueItems } from '@server/db/schema/queue-items';
import { stations } from '@server/db/schema/stations';
import { seedDemo } from '@server/db/seed-demo';
import { prepareDemoEvents } from '@server/demo/demo-events';
import { DEMO_WAVEFORMS_DIR } from '@server/demo/generate-waveforms';
import { ingestDemo, readDemoManifest } from '@server/demo/ingest-demo';
import { publicBaseUrl } from '@server/email/links';
import { startServer } from '@server/index';
import { createAnalysisPool } from '@server/jobs/analysis-pool';
import { escalationListener } from '@server/features/supervision/escalations';
import { setup as startThrowAwayMariaDb, teardown as stopThrowAwayMariaDb } from '@tests/setup/global-setup';
import { launchBrowser } from '@tests/setup/browser';
import { createTestContext } from '@tests/setup/test-app';

/** Where the README's screenshots live. */
export const docsScreenshotDir = resolve(process.cwd(), 'docs/screenshots');

/** The demo windows the operator uploads by hand on the upload page (not ingested beforehand). */
export const heldBackFiles = ['mseed/XX.KV01.2026-03-14T10-12-00.mseed', 'mseed/XX.KV02.2026-03-14T10-12-00.mseed', 'mseed/XX.KV03.2026-03-14T10-12-00.mseed'];

const demoPassword = 'kestrel-demo-pass';
/** The demo day (demo-waveforms/manifest.json): the supervisor screens are set to it. */
const demoDay = '2026-03-14';
const nextDay = '2026-03-15';

/** A copy of demo-waveforms/ without the held-back files (ingestDemo reads a folder and its manifest). */
function demoFolderWithout(files: readonly string[]): string {
  const dir = mkdtempSync(join(tmpdir(), 'seisift-docs-demo-'));
  const manifest = readDemoManifest();
  const kept = manifest.files.filter((f) => !files.includes(f.file));
  if (kept.length !== manifest.files.length - files.length) throw new Error(`the demo manifest no longer lists every held-back file (${files.join(', ')}): update heldBackFiles`);
  for (const f of kept) {
    mkdirSync(dirname(join(dir, f.file)), { recursive: true });
    copyFileSync(join(DEMO_WAVEFORMS_DIR, f.file), join(dir, f.file));
  }
  // The demo StationXML too: the demo network's responses come from it before the windows go in.
  cpSync(join(DEMO_WAVEFORMS_DIR, 'stationxml'), join(dir, 'stationxml'), { recursive: true });
  // Everything else the manifest says (its sources, for the events) kept as it is.
  const raw: unknown = JSON.parse(readFileSync(join(DEMO_WAVEFORMS_DIR, 'manifest.json'), 'utf8'));
  writeFileSync(join(dir, 'manifest.json'), JSON.stringify({ ...(typeof raw === 'object' && raw !== null ? raw : {}), files: kept }));
  return dir;
}

/** Where a failing step leaves a picture of the page (git-ignored). */
const failureShot = resolve(process.cwd(), '.data/screenshots/docs-screenshots-failure.png');

/** Runs `what`, naming `step` in the error when it fails, with a picture of `page` at that moment. */
async function step<T>(page: Page, name: string, what: () => Promise<T>): Promise<T> {
  try {
    return await what();
  } catch (err) {
    mkdirSync(dirname(failureShot), { recursive: true });
    await page.screenshot({ path: failureShot }).catch(() => undefined);
    throw new Error(`screenshot step "${name}" on ${page.url()}: ${err instanceof Error ? err.message : String(err)} (the page as it was: ${failureShot})`);
  }
}

/** The trimmed copy of demo-waveforms/ of this run. */
let demoDir = '';

async function main(): Promise<void> {
  if (!process.argv.includes('--no-build')) {
    console.log('docs:screenshots: building the client…');
    buildClient();
  }
  mkdirSync(docsScreenshotDir, { recursive: true });
  demoDir = demoFolderWithout(heldBackFiles);
  await startThrowAwayMariaDb();
  try {
    await takeScreenshots();
  } finally {
    await stopThrowAwayMariaDb();
    rmSync(demoDir, { recursive: true, force: true });
  }
}

/** Seeds and ingests the demo into a fresh database on the throw-away MariaDB, serves it, and takes every screenshot. */
async function takeScreenshots(): Promise<void> {
  const ctx = await createTestContext();
  const pool = createAnalysisPool({ threads: 1 });
  const browser = await launchBrowser({ width: 1440, height: 900, colorScheme: 'dark' });
  let running: Awaited<ReturnType<typeof startServer>> | undefined;
  try {
    const db = ctx.database.db;
    await seedDemo(db, { demoPassword });
    const notify = (): void => ctx.hub.notify();
    const report = await ingestDemo(
      { db, pool, notify, logger: ctx.logger, escalationListeners: [escalationListener({ db, mailer: ctx.mailer, logger: ctx.logger, notify, publicUrl: publicBaseUrl(ctx.env) })] },
      { dir: demoDir },
    );
    if (report.rejected.length) throw new Error(`demo files refused: ${report.rejected.map((r) => `${r.filename}: ${r.message}`).join('; ')}`);
    console.log(`docs:screenshots: demo ingested (${report.created} files, ${report.items} items; labelled ${report.labelled}, dismissed ${report.dismissed}, escalated ${report.escalated})`);
    // The events as npm start leaves them (the ones no candidate group joined assembled by the demo analyst).
    await prepareDemoEvents(db, notify, demoDir);
    running = await startServer(ctx, { host: '127.0.0.1', port: 0 });
    const url = running.url;

    const page = browser.context.pages()[0] ?? (await browser.context.newPage());
    const problems: string[] = [];
    page.on('pageerror', (err) => problems.push(`${page.url()}: ${err.message}`));
    const shots: string[] = [];
    const shoot = async (name: string): Promise<void> => {
      // Let plots finish drawing and transitions settle.
      await page.waitForTimeout(400);
      const path = join(docsScreenshotDir, `${name}.png`);
      await page.screenshot({ path });
      shots.push(path);
      console.log(`  ${name}.png ${(statSync(path).size / 1024).toFixed(0)} KB`);
    };
    const signIn = async (email: string): Promise<void> => {
      await browser.context.clearCookies();
      await page.goto(`${url}/sign-in`, { waitUntil: 'networkidle' });
      await page.getByLabel('E-mail').fill(email);
      await page.getByLabel('Password', { exact: true }).fill(demoPassword);
      await page.getByRole('button', { name: 'Sign in' }).click();
      await page.getByRole('navigation', { name: 'Sections' }).getByRole('link', { name: 'Account' }).waitFor({ timeout: 15_000 });
    };
    const setPeriod = async (): Promise<void> => {
      await page.getByLabel('From (UTC)').fill(`${demoDay}T00:00Z`);
      await page.getByLabel('To (UTC, exclusive)').fill(`${nextDay}T00:00Z`);
      // No focus ring in the picture.
      await page.evaluate(() => (document.activeElement instanceof HTMLElement ? document.activeElement.blur() : undefined));
    };

    await step(page, 'sign-in page', async () => {
      await page.goto(`${url}/sign-in`, { waitUntil: 'networkidle' });
      await page.getByRole('heading', { name: 'Sign in to Seisift' }).waitFor();
      await page.getByLabel('E-mail').fill('analyst@kestrel.example');
      await shoot('01-sign-in');
    });

    await step(page, 'operator upload results', async () => {
      await signIn('operator@kestrel.example');
      await page.goto(`${url}/upload`);
      await page.getByRole('heading', { name: 'Upload waveform windows' }).waitFor();
      await page.locator('input[type=file]').setInputFiles(heldBackFiles.map((f) => ({ name: f.slice(f.lastIndexOf('/') + 1), mimeType: 'application/vnd.fdsn.mseed', buffer: readFileSync(join(DEMO_WAVEFORMS_DIR, f)) })));
      await page.getByRole('button', { name: `Upload ${heldBackFiles.length} files` }).click();
      await page.getByRole('heading', { name: 'Results' }).waitFor({ timeout: 60_000 });
      await page.locator('table tbody tr').nth(heldBackFiles.length - 1).waitFor({ timeout: 60_000 });
      const rows = await page.locator('table tbody tr').allInnerTexts();
      if (!rows.every((r) => r.includes('Queued'))) throw new Error(`not every file was queued: ${rows.join(' | ')}`);
      await page.getByRole('heading', { name: 'Results' }).scrollIntoViewIfNeeded();
      await shoot('02-operator-upload-results');
    });

    await step(page, 'operator station health', async () => {
      const [kv01] = await db.select({ id: stations.id }).from(stations).where(and(eq(stations.network, 'XX'), eq(stations.code, 'KV01')));
      if (!kv01) throw new Error('station XX.KV01 is not seeded');
      await page.goto(`${url}/stations/${kv01.id}`);
      await page.getByText('XX.KV01.00.HHZ — power spectral density').waitFor({ timeout: 20_000 });
      // Scroll the app's main pane (not the document) so the header and navigation stay in view.
      await page.locator('#st-health').evaluate((el) => {
        const main = document.getElementById('main');
        if (main) main.scrollTo(0, el.getBoundingClientRect().top - main.getBoundingClientRect().top + main.scrollTop - 16);
        window.scrollTo(0, 0);
      });
      await shoot('03-operator-station-health');
    });

    await step(page, 'analyst queue', async () => {
      await signIn('analyst@kestrel.example');
      await page.goto(`${url}/queue`);
      await page.locator('tr[data-item-id]').first().waitFor({ timeout: 15_000 });
      await page.locator('[data-connection="live"]').waitFor({ timeout: 15_000 });
      await shoot('04-analyst-queue');
    });

    // The highest-scoring likely event still waiting for an analyst.
    const [event] = await db
      .select({ id: queueItems.id })
      .from(queueItems)
      .where(and(eq(queueItems.flag, 'likely event'), eq(queueItems.state, 'new')))
      .orderBy(desc(queueItems.score))
      .limit(1);
    if (!event) throw new Error('no waiting "likely event" item after the demo ingest');

    await step(page, 'analyst review', async () => {
      await page.goto(`${url}/queue/items/${event.id}`);
      await page.locator('[data-testid="trace-panel"] canvas').first().waitFor({ timeout: 45_000 });
      await page.keyboard.press('c');
      await page.locator(`[data-item-id="${event.id}"] [data-testid="claim-holder"]:has-text("you")`).waitFor({ timeout: 10_000 });
      await page.keyboard.press('p');
      // Let the "claimed" notice go away: it would cover the label form.
      await page.getByText(`Item ${event.id} claimed`).waitFor({ state: 'detached', timeout: 15_000 }).catch(() => undefined);
      await shoot('05-analyst-review');
    });

    await step(page, 'analyst event', async () => {
      // The demo event recorded by the most stations, on the event screen: record section, map, origin and ML.
      const [biggest] = await db
        .select({ id: eventMembers.eventId, members: count() })
        .from(eventMembers)
        .where(isNull(eventMembers.removedAt))
        .groupBy(eventMembers.eventId)
        .orderBy(desc(count()), eventMembers.eventId)
        .limit(1);
      if (!biggest) throw new Error('no event after the demo ingest');
      await page.goto(`${url}/events/${biggest.id}`);
      await page.getByTestId('record-section').locator('.uplot').waitFor({ timeout: 60_000 });
      await page.locator('[data-testid="event-map"][data-outlines="drawn"]').waitFor({ timeout: 15_000 });
      await shoot('11-analyst-event');
    });

    await step(page, 'supervisor inbox', async () => {
      await signIn('supervisor@kestrel.example');
      await page.goto(`${url}/inbox`);
      await page.locator('tr', { hasText: 'escalated by' }).first().waitFor({ timeout: 15_000 });
      await shoot('06-supervisor-inbox');
    });

    await step(page, 'supervisor review and catalogue', async () => {
      await page.goto(`${url}/review`);
      await page.getByRole('heading', { name: 'Review & catalogue' }).waitFor({ timeout: 15_000 });
      await setPeriod();
      // The demo's quakes and blasts are events (one row each) once the period is set.
      await page.locator('[data-testid^="event-row-"]').first().waitFor({ timeout: 30_000 });
      await shoot('07-supervisor-review');
    });

    await step(page, 'supervisor thresholds', async () => {
      await page.goto(`${url}/thresholds`);
      await page.getByRole('table', { name: 'Confusion counts on the labelled history' }).waitFor({ timeout: 15_000 });
      await setPeriod();
      // KV04 has both kinds of labelled history in the demo: an earthquake labelled, a pump window dismissed.
      await page.getByLabel('Station').selectOption({ label: 'XX.KV04' });
      await page.getByText('XX.KV04: ', { exact: false }).first().waitFor({ timeout: 15_000 });
      await page.getByText('Precision–recall curve').waitFor({ timeout: 15_000 });
      await shoot('08-supervisor-thresholds');
    });

    await step(page, 'supervisor dashboard', async () => {
      await page.goto(`${url}/dashboard`);
      // The dashboard counts items by the day they arrived (today, for the demo ingest): its default period fits.
      await page.getByText('Items per day per station').waitFor({ timeout: 15_000 });
      await page.getByRole('table', { name: /per analyst/ }).getByText('Demo Analyst').waitFor({ timeout: 15_000 });
      await page.waitForLoadState('networkidle');
      await shoot('09-supervisor-dashboard');
    });

    await step(page, 'light theme', async () => {
      // The supervisor (who may see every station) on KV04's page, in the light theme.
      const [kv04] = await db.select({ id: stations.id }).from(stations).where(and(eq(stations.network, 'XX'), eq(stations.code, 'KV04')));
      if (!kv04) throw new Error('station XX.KV04 is not seeded');
      await page.emulateMedia({ colorScheme: 'light' });
      await page.goto(`${url}/stations/${kv04.id}`);
      await page.getByText('XX.KV04.00.HHZ — power spectral density').waitFor({ timeout: 20_000 });
      await shoot('10-station-page-light');
      await page.emulateMedia({ colorScheme: 'dark' });
    });

    if (problems.length) throw new Error(`errors in the pages: ${problems.join('; ')}`);
    console.log(`docs:screenshots: ${shots.length} screenshots in ${docsScreenshotDir}`);
  } finally {
    await browser.close();
    await running?.close();
    await pool.close();
    await ctx.close();
  }
}

main().then(
  () => process.exit(0),
  (err: unknown) => {
    console.error(`docs:screenshots: ${err instanceof Error ? err.message : String(err)}`);
    process.exit(1);
  },
);
