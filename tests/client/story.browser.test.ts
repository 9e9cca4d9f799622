import { readFile } from 'node:fs/promises';
import { eq } from 'drizzle-orm';
import { XMLParser } from 'fast-xml-parser';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { z } from 'zod';
import { eventDetailSchema } from '@shared/schemas/events';
import { queueItemDetailSchema } from '@shared/schemas/queue';
import { users } from '@server/db/schema/users';
import { seedDemo } from '@server/db/seed-demo';
import { encodeMiniSeed2 } from '@server/formats/mseed2-writer';
import { checkA11y, launchBrowser, screenshot, type LaunchedBrowser } from '@tests/setup/browser';
import { seedSyntheticEvent } from '@tests/setup/event-fixtures';
import { syntheticStreams } from '@tests/setup/queue-fixtures';
import { startTestServer, type TestServer } from '@tests/setup/test-server';

/*
 * The whole story in one real browser (Debian chromium via playwright-core) against a real server
 * over a fresh MariaDB with the Kestrel Valley demo users and stations seeded, every step through
 * the pages a person uses, each role signing in on the sign-in page:
 * 1. the demo operator uploads two MiniSEED windows (KV01, KV02) on the upload page;
 * 2. the demo analyst finds both in the queue, labels the KV01 one as an earthquake with a P pick
 *    and escalates the KV02 one with a reason;
 * 3. five stations record a local event (synthetic, seeded meanwhile); the analyst reviews it across
 *    the stations on the event screen, accepts the automatic picks and relocates it;
 * 4. the demo supervisor finds the escalation in the inbox and confirms it, publishes that event as final, sets the lone labelled window to
 *    `confirmed` on the review page, and downloads the catalogue as QuakeML and as CSV.
 * The checks read the server's state over the API and parse the downloads (QuakeML 1.2 element
 * names per the QuakeML 1.2 BED schema: eventParameters/event/type, pick/time/value).
 * The windows are synthetic test input (noise plus a 5 Hz burst), not check values.
 */

const demoPassword = 'kestrel-demo-pass';

/** The parts of a QuakeML 1.2 document this test reads (element names per the QuakeML 1.2 BED schema). */
const quakemlSchema = z.object({
  'q:quakeml': z.object({
    eventParameters: z.object({
      event: z.array(
        z.object({
          '@_publicID': z.string(),
          type: z.string(),
          typeCertainty: z.string().optional(),
          pick: z.array(z.object({ time: z.object({ value: z.string() }), evaluationStatus: z.string() })),
        }),
      ),
    }),
  }),
});

let server: TestServer;
let browser: LaunchedBrowser;
let page: Page;
const problems: string[] = [];

/** Signs out (fresh cookies) and signs in as `email` through the sign-in page. */
async function signInAs(email: string): Promise<void> {
  await browser.context.clearCookies();
  await page.goto(`${server.url}/sign-in`, { waitUntil: 'networkidle' });
  await page.getByLabel('E-mail').fill(email);
  await page.getByLabel('Password', { exact: true }).fill(demoPassword);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.getByRole('navigation', { name: 'Sections' }).getByRole('link', { name: 'Account' }).waitFor({ timeout: 20_000 });
}

/** GET `path` as whoever is signed in in the browser (the page's own session cookie). */
async function apiGet(path: string): Promise<unknown> {
  const cookies = await browser.context.cookies(server.url);
  const res = await fetch(`${server.url}${path}`, { headers: { Cookie: cookies.map((c) => `${c.name}=${c.value}`).join('; '), Accept: 'application/json' } });
  if (!res.ok) throw new Error(`GET ${path}: ${res.status} ${await res.text()}`);
  return res.json();
}

/** A three-component MiniSEED 2 (Steim-2) window of `code` starting at `start`, burst at 50 s. */
function windowFile(code: string, start: Date): Buffer {
  const streams = syntheticStreams(code, start.getTime() * 1000, { durationS: 120, burstAtS: 50 });
  return Buffer.concat(streams.map((st) => Buffer.from(encodeMiniSeed2({ ...st, samples: Int32Array.from(st.samples) }, { encoding: 'steim2', recordLength: 512 }))));
}

describe('the whole story: operator uploads, analyst labels, escalates and relocates an event, supervisor confirms, publishes and exports (browser)', () => {
  beforeAll(async () => {
    server = await startTestServer();
    await seedDemo(server.ctx.database.db, { demoPassword });
    browser = await launchBrowser({ width: 1440, height: 900 });
    page = browser.context.pages()[0] ?? (await browser.context.newPage());
    page.on('pageerror', (err) => problems.push(`pageerror: ${err.message}`));
    page.on('console', (msg) => {
      // A 401 from /api/auth/me before signing in is the expected "nobody signed in" answer.
      if (msg.type() === 'error' && !/status of 401/.test(msg.text())) problems.push(`console: ${msg.text()}`);
    });
  }, 120_000);
  afterAll(async () => {
    await browser?.close();
    await server?.close();
  });

  it('walks from upload to exported catalogue through the pages of three roles', async () => {
    // Windows an hour ago (whole minutes), inside the review page's default period (the last 7 days).
    const startKv01 = new Date(Math.floor(Date.now() / 60_000) * 60_000 - 3600_000);
    const startKv02 = new Date(startKv01.getTime() + 5_000);

    // 1. The operator uploads two windows.
    await signInAs('operator@kestrel.example');
    await page.goto(`${server.url}/upload`);
    await page.getByRole('heading', { name: 'Upload waveform windows' }).waitFor();
    await page.locator('input[type=file]').setInputFiles([
      { name: 'XX.KV01.story.mseed', mimeType: 'application/vnd.fdsn.mseed', buffer: windowFile('KV01', startKv01) },
      { name: 'XX.KV02.story.mseed', mimeType: 'application/vnd.fdsn.mseed', buffer: windowFile('KV02', startKv02) },
    ]);
    await page.getByRole('button', { name: 'Upload 2 files' }).click();
    await page.getByRole('heading', { name: 'Results' }).waitFor({ timeout: 30_000 });
    await page.locator('table tbody tr').nth(1).waitFor({ timeout: 30_000 });
    const rows = await page.locator('table tbody tr').allInnerTexts();
    expect(rows).toHaveLength(2);
    for (const r of rows) expect(r).toContain('Queued');
    const hrefs = await page.locator('table a[href^="/queue/items/"]').evaluateAll((as) => as.map((a) => a.getAttribute('href') ?? ''));
    const ids = hrefs.map((h) => Number(h.split('/').pop()));
    expect(ids).toHaveLength(2);
    const [kv01Item, kv02Item] = ids;
    if (kv01Item === undefined || kv02Item === undefined || !Number.isInteger(kv01Item) || !Number.isInteger(kv02Item)) throw new Error(`no item ids in the results: ${hrefs.join(', ')}`);
    expect(rows[0]).toContain('XX.KV01.story.mseed');
    await screenshot(page, 'story-1-operator-results');

    // 2. The analyst sees both in the queue, labels one and escalates the other.
    await signInAs('analyst@kestrel.example');
    await page.goto(`${server.url}/queue`);
    await page.locator('[data-connection="live"]').waitFor({ timeout: 30_000 });
    for (const id of ids) await page.locator(`tr[data-item-id="${id}"]`).waitFor({ timeout: 30_000 });
    await screenshot(page, 'story-2-analyst-queue');

    await page.goto(`${server.url}/queue/items/${kv01Item}`);
    await page.locator('[data-testid="trace-panel"] canvas').first().waitFor({ timeout: 30_000 });
    await page.keyboard.press('c');
    await page.locator(`[data-item-id="${kv01Item}"] [data-testid="claim-holder"]:has-text("you")`).waitFor({ timeout: 20_000 });
    // P places a P pick at the first STA/LTA trigger of the vertical channel; the form then labels it.
    await page.keyboard.press('p');
    await page.getByRole('combobox', { name: 'Event type (QuakeML)' }).selectOption('earthquake');
    await page.getByRole('combobox', { name: 'Type certainty' }).selectOption('suspected');
    await page.getByRole('button', { name: /^Label/ }).click();
    let labelled = queueItemDetailSchema.parse(await apiGet(`/api/queue/items/${kv01Item}`));
    for (let i = 0; i < 200 && labelled.state !== 'labelled'; i++) {
      await new Promise((r) => setTimeout(r, 100));
      labelled = queueItemDetailSchema.parse(await apiGet(`/api/queue/items/${kv01Item}`));
    }
    expect(labelled.state).toBe('labelled');
    expect(labelled.label).toMatchObject({ kind: 'event', eventType: 'earthquake', certainty: 'suspected' });
    const pick = labelled.label?.kind === 'event' ? labelled.label.picks[0] : undefined;
    expect(pick?.phase).toBe('P');
    expect(pick?.streamId).toBe('XX.KV01.00.HHZ');
    // The burst starts 50 s into the window: the trigger (and so the pick) is within a second after it.
    const pickS = (Date.parse(pick?.time ?? '') - startKv01.getTime()) / 1000;
    expect(pickS).toBeGreaterThanOrEqual(50);
    expect(pickS).toBeLessThan(51);

    const reason = 'Burst at KV02 five seconds after the KV01 event; same source?';
    await page.goto(`${server.url}/queue/items/${kv02Item}`);
    await page.locator('[data-testid="trace-panel"] canvas').first().waitFor({ timeout: 30_000 });
    await page.keyboard.press('e');
    await page.getByRole('dialog').getByRole('textbox', { name: 'Reason' }).fill(reason);
    await page.getByRole('dialog').getByRole('button', { name: /^Escalate/ }).click();
    await page.getByRole('dialog').waitFor({ state: 'detached', timeout: 20_000 });
    const escalated = queueItemDetailSchema.parse(await apiGet(`/api/queue/items/${kv02Item}`));
    expect(escalated.state).toBe('escalated');

    // Meanwhile five stations of a ring recorded a local event, built into a located event (synthetic
    // windows from tests/setup/event-fixtures.ts: test input, not check values).
    const db = server.ctx.database.db;
    const [sup] = await db.select({ id: users.id, email: users.email }).from(users).where(eq(users.email, 'supervisor@kestrel.example'));
    if (!sup) throw new Error('the demo supervisor is missing');
    const seeded = await seedSyntheticEvent(db, {
      codes: ['KS01', 'KS02', 'KS03', 'KS04', 'KS05'],
      placements: [[20, 10], [95, 18], [170, 14], [240, 22], [310, 16]],
      truth: { latitudeDeg: 46.262, longitudeDeg: 11.07, depthKm: 6, timeS: Math.floor(startKv01.getTime() / 1000) - 3600 },
      supervisor: sup,
    });


    // The analyst reviews the event across its five stations on the event screen, accepts the
    // automatic picks and relocates it: a new preferred origin, with the caution beside it.
    await page.goto(`${server.url}/events/${seeded.eventId}`);
    const section = page.getByTestId('record-section').locator('.uplot');
    // The first traces are computed by the analysis workers on a busy machine: allow for a cold start.
    await section.waitFor({ timeout: 90_000 });
    expect(((await section.getAttribute('data-rows')) ?? '').split(' ')).toHaveLength(5);
    await expect(page.getByTestId('event-caution').textContent()).resolves.toMatch(/procedures and local authorities/);
    const eventNow = async () => eventDetailSchema.parse(await apiGet(`/api/events/${seeded.eventId}`));
    const versionAbove = (v: number) => page.waitForFunction((min) => Number(document.querySelector('[data-testid="event-screen"]')?.getAttribute('data-event-version')) > min, v, { timeout: 45_000 });
    const beforeReview = await eventNow();
    await page.keyboard.press('Shift+A');
    await versionAbove(beforeReview.event.version);
    const accepted = await eventNow();
    expect(accepted.picks.analyst.length).toBe(accepted.picks.automatic.length);
    await page.getByRole('button', { name: /Relocate/ }).click();
    await versionAbove(accepted.event.version);
    const relocated = await eventNow();
    expect(relocated.origin?.id).not.toBe(accepted.origin?.id);
    // The ring's true epicentre (the seeded truth above; test input): the analysts' picks find it within a few km.
    const km = 111.2 * Math.hypot((relocated.origin?.latitude ?? 0) - 46.262, ((relocated.origin?.longitude ?? 0) - 11.07) * Math.cos((46.262 * Math.PI) / 180));
    expect(km).toBeLessThan(3);
    await page.getByTestId('event-screen').evaluate((el) => el.scrollIntoView({ block: 'start' }));
    await screenshot(page, 'story-3-analyst-event');

    // 4. The supervisor confirms the escalation, reviews the labelled event, and exports.
    await signInAs('supervisor@kestrel.example');
    await page.goto(`${server.url}/inbox`);
    const entry = page.locator('tr', { hasText: reason });
    await entry.waitFor({ timeout: 30_000 });
    expect(await entry.textContent()).toContain('escalated by');
    // Escalated, not labelled: confirming asks for the event type.
    await entry.getByRole('button', { name: 'Confirm…' }).click();
    await entry.getByLabel('Event type (QuakeML)').selectOption('earthquake');
    await entry.getByRole('button', { name: 'Confirm as earthquake' }).click();
    await entry.getByText('✓ confirmed').waitFor({ timeout: 20_000 });
    const confirmed = queueItemDetailSchema.parse(await apiGet(`/api/queue/items/${kv02Item}`));
    expect(confirmed.state).toBe('confirmed');
    expect(confirmed.label).toMatchObject({ kind: 'event', eventType: 'earthquake' });
    await screenshot(page, 'story-4-supervisor-inbox');

    await page.goto(`${server.url}/review`);
    // The supervisor publishes the event: earthquake, known, final.
    const eventRow = page.getByTestId(`event-row-${seeded.eventId}`);
    await eventRow.waitFor({ timeout: 30_000 });
    expect(await eventRow.textContent()).toMatch(/ML \d\.\d ± \d\.\d/);
    await eventRow.getByRole('button', { name: 'Review…' }).click();
    const eventForm = page.getByRole('form', { name: `Review event ${seeded.eventId}` });
    await eventForm.getByLabel('Event type').selectOption('earthquake');
    await eventForm.getByLabel('Type certainty').selectOption('known');
    await eventForm.getByLabel('Evaluation status').selectOption('final');
    await eventForm.getByRole('button', { name: `Save event ${seeded.eventId}` }).click();
    await eventRow.getByText('final', { exact: true }).waitFor({ timeout: 20_000 });

    // The labelled window that no event holds, reviewed on its own.
    const reviewRow = page.getByTestId(`review-row-${kv01Item}`);
    await reviewRow.waitFor({ timeout: 30_000 });
    expect(await reviewRow.textContent()).toContain('earthquake');
    await reviewRow.getByRole('button', { name: 'Review…' }).click();
    await reviewRow.getByRole('combobox').selectOption('confirmed');
    await reviewRow.getByRole('button', { name: 'Set status' }).click();
    await reviewRow.getByText('by ', { exact: false }).waitFor({ timeout: 20_000 });
    expect(await reviewRow.textContent()).toContain('confirmed');
    expect(await checkA11y(page)).toEqual([]);
    await screenshot(page, 'story-5-supervisor-review');

    const [xmlDownload] = await Promise.all([page.waitForEvent('download'), page.getByRole('link', { name: 'Download QuakeML' }).click()]);
    const xml = await readFile(await xmlDownload.path(), 'utf8');
    const doc: unknown = new XMLParser({ ignoreAttributes: false, parseTagValue: false, isArray: (n) => n === 'event' || n === 'pick' }).parse(xml);
    const events = quakemlSchema.parse(doc)['q:quakeml'].eventParameters.event;
    const exported = events.find((e) => e['@_publicID'] === `smi:seisift.local/event/item/${kv01Item}`);
    expect(exported, `the export lists ${events.map((e) => e['@_publicID']).join(', ')}`).toBeDefined();
    expect(exported?.type).toBe('earthquake');
    expect(exported?.typeCertainty).toBe('suspected');
    expect(exported?.pick[0]?.time.value).toBe(pick?.time);
    expect(exported?.pick[0]?.evaluationStatus).toBe('confirmed');
    expect(events.some((e) => e['@_publicID'] === `smi:seisift.local/event/event/${seeded.eventId}`), 'the published event is in the export').toBe(true);

    await page.getByRole('combobox', { name: 'Format' }).selectOption('csv');
    const [csvDownload] = await Promise.all([page.waitForEvent('download'), page.getByRole('link', { name: 'Download CSV' }).click()]);
    const csv = (await readFile(await csvDownload.path(), 'utf8')).trim().split(/\r?\n/);
    expect(csv.length).toBeGreaterThanOrEqual(2);
    // Header: the event, its origin and ML, then type, certainty and status (server/features/supervision/catalogue-csv.ts).
    expect(csv[0]).toMatch(/^event_id,event_time,event_time_basis,origin_time,latitude,longitude,depth_km,/);
    expect(csv[0]).toContain(',event_type,type_certainty,evaluation_status,stations,');
    const line = csv.find((l) => l.startsWith(`smi:seisift.local/event/item/${kv01Item},`));
    expect(line, csv.join('\n')).toBeDefined();
    expect(line).toContain(',earthquake,suspected,confirmed,');
    expect(line).toContain('XX.KV01');
    const eventLine = csv.find((l) => l.startsWith(`smi:seisift.local/event/event/${seeded.eventId},`));
    expect(eventLine, csv.join('\n')).toBeDefined();
    expect(eventLine).toContain(',earthquake,known,final,');
    expect(problems.filter((p) => !/favicon/.test(p))).toEqual([]);
  }, 300_000);
});
