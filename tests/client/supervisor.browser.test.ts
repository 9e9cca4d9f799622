import { readFile } from 'node:fs/promises';
import { XMLParser } from 'fast-xml-parser';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { sessionCookieName } from '@server/auth/sessions';
import { checkA11y, launchBrowser, screenshot, type LaunchedBrowser } from '@tests/setup/browser';
import { seedSyntheticEvent } from '@tests/setup/event-fixtures';
import { createItem, createPerson, type TestPerson } from '@tests/setup/queue-fixtures';
import { startTestServer, type TestServer } from '@tests/setup/test-server';

/*
 * A supervisor in a real browser (Debian chromium via playwright-core) against a real server over
 * a fresh database: an escalation made by an analyst (over HTTP) appears in the open inbox without
 * a reload, the supervisor confirms it, replaces the default velocity model on /thresholds, then on
 * /review publishes a located five-station event (synthetic windows from tests/setup/event-fixtures.ts:
 * test input, not check values) as final, reviews a lone labelled window, and downloads the QuakeML
 * export, which parses back with one entry per event. Screenshots land in .data/screenshots/.
 */

let server: TestServer;
let browser: LaunchedBrowser;
let ana: TestPerson;
let sue: TestPerson;

/** A JSON request to the server as `p` (with our own Origin, as the CSRF check wants). */
async function api(p: TestPerson, method: 'GET' | 'POST', path: string, body?: unknown): Promise<Record<string, unknown>> {
  const res = await fetch(`${server.url}${path}`, {
    method,
    headers: { Cookie: p.cookie, Origin: server.url, 'Content-Type': 'application/json', Accept: 'application/json' },
    body: body === undefined ? undefined : JSON.stringify(body),
  });
  const json: unknown = await res.json();
  if (!res.ok) throw new Error(`${method} ${path}: ${res.status} ${JSON.stringify(json)}`);
  return json as Record<string, unknown>;
}

async function signedInPage(p: TestPerson): Promise<{ page: Page; problems: string[] }> {
  const host = new URL(server.url).hostname;
  await browser.context.addCookies([{ name: sessionCookieName, value: p.sessionId, domain: host, path: '/', httpOnly: true, sameSite: 'Lax' }]);
  const page = await browser.context.newPage();
  const problems: string[] = [];
  page.on('pageerror', (err) => problems.push(`pageerror: ${err.message}`));
  page.on('console', (msg) => {
    if (msg.type() === 'error') problems.push(`console: ${msg.text()}`);
  });
  return { page, problems };
}

describe('supervisor in the browser', () => {
  beforeAll(async () => {
    server = await startTestServer();
    const db = server.ctx.database.db;
    ana = await createPerson(db, { roles: ['analyst'], displayName: 'Ana Kestrel' });
    sue = await createPerson(db, { roles: ['supervisor'], displayName: 'Sue Ridge' });
    browser = await launchBrowser({ width: 1440, height: 900 });
  }, 60_000);
  afterAll(async () => {
    await browser?.close();
    await server?.close();
  });

  it('receives an escalation live, confirms it, and downloads the export', async () => {
    const { page, problems } = await signedInPage(sue);
    await page.goto(`${server.url}/inbox`);
    await page.getByTestId('unread-count').filter({ hasText: 'Nothing unread' }).waitFor({ timeout: 15_000 });
    
    // The analyst escalates an item while the inbox is open.
    const db = server.ctx.database.db;
    const id = await createItem(db, { station: 'KV03' });
    const claimed = await api(ana, 'POST', `/api/queue/items/${id}/claim`, { version: 1 });
    await api(ana, 'POST', `/api/queue/items/${id}/escalate`, { version: claimed.version, reason: 'two onsets 4 s apart on KV03' });

    await page.getByTestId('unread-count').filter({ hasText: '1 unread' }).waitFor({ timeout: 10_000 });
    const row = page.locator('tr', { hasText: 'two onsets 4 s apart on KV03' });
    await row.waitFor();
    expect(await row.textContent()).toContain('escalated by Ana Kestrel');
    await screenshot(page, 'supervisor-inbox-escalation');

    await row.getByRole('button', { name: 'Acknowledge' }).click();
    await page.getByTestId('unread-count').filter({ hasText: 'Nothing unread' }).waitFor({ timeout: 10_000 });
    // The escalated item has no event label: confirming asks which event it is first.
    await row.getByRole('button', { name: 'Confirm…' }).click();
    const form = row.getByRole('form', { name: /Confirm escalation \d+ with an event label/ });
    await form.waitFor();
    expect(await form.getByRole('button', { name: 'Confirm' }).isDisabled()).toBe(true);
    await form.getByLabel('Event type (QuakeML)').selectOption('earthquake');
    await screenshot(page, 'supervisor-inbox-confirm-label');
    await form.getByRole('button', { name: 'Confirm as earthquake' }).click();
    await row.getByText('✓ confirmed').waitFor({ timeout: 10_000 });
    const item = await api(sue, 'GET', `/api/queue/items/${id}`);
    expect(item.state).toBe('confirmed');
    expect(item.label).toMatchObject({ kind: 'event', eventType: 'earthquake', certainty: 'suspected' });
    await screenshot(page, 'supervisor-inbox-confirmed');

    // The network's velocity model, on /thresholds: Seisift's default, labelled as one, replaced.
    await page.goto(`${server.url}/thresholds`);
    const model = page.getByTestId('velocity-model');
    await model.getByText('default: replace with the network’s own model').waitFor({ timeout: 15_000 });
    await model.getByLabel('Model name').fill('Kestrel Valley two-layer crust');
    await model.getByRole('button', { name: 'Add a layer' }).click();
    const rows = await model.getByLabel(/Layer \d+ top depth/).count();
    await model.getByRole('button', { name: 'Save the XX model' }).click();
    await model.getByText(`Layer ${rows}: every field needs a number`).waitFor();
    await model.getByLabel(`Layer ${rows} top depth (km)`).fill('45');
    await model.getByLabel(`Layer ${rows} Vp (km/s)`).fill('8.2');
    await model.getByLabel(`Layer ${rows} Vs (km/s)`).fill('4.7');
    await model.getByRole('button', { name: 'Save the XX model' }).click();
    await model.getByText('Saved as version 1.').waitFor({ timeout: 10_000 });
    await model.getByText('the network’s own model', { exact: false }).waitFor();
    const saved = await api(sue, 'GET', '/api/events/velocity-models/XX');
    expect(saved).toMatchObject({ name: 'Kestrel Valley two-layer crust', isDefault: false, version: 1 });
    expect((saved.layers as unknown[]).at(-1)).toEqual({ topKm: 45, vpKmS: 8.2, vsKmS: 4.7 });
    expect(await checkA11y(page)).toEqual([]);
    await screenshot(page, 'supervisor-velocity-model', true);

    // A located event of five stations two hours ago, and a labelled window at KV02 that no event holds.
    const seeded = await seedSyntheticEvent(db, {
      codes: ['KW01', 'KW02', 'KW03', 'KW04', 'KW05'],
      placements: [[20, 10], [95, 18], [170, 14], [240, 22], [310, 16]],
      truth: { latitudeDeg: 46.262, longitudeDeg: 11.07, depthKm: 6, timeS: Math.floor(Date.now() / 1000) - 7200 },
      supervisor: sue,
    });
    const windowStart = new Date(Date.now() - 3600_000);
    const ev = await createItem(db, { station: 'KV02', windowStart, withSamples: true, burstAtS: 50 });
    // A noise window at the same station, so the thresholds page has both kinds of history.
    const quiet = await createItem(db, { station: 'KV02', windowStart: new Date(windowStart.getTime() - 600_000), withSamples: true });
    const cq = await api(ana, 'POST', `/api/queue/items/${quiet}/claim`, { version: 1 });
    await api(ana, 'POST', `/api/queue/items/${quiet}/dismiss`, { version: cq.version, noiseReason: 'wind' });
    const c2 = await api(ana, 'POST', `/api/queue/items/${ev}/claim`, { version: 1 });
    const pTime = new Date(windowStart.getTime() + 38_250).toISOString();
    await api(ana, 'POST', `/api/queue/items/${ev}/label`, { version: c2.version, label: { eventType: 'earthquake', certainty: 'known', picks: [{ phase: 'P', time: pTime, onset: 'impulsive', streamId: 'XX.KV02.00.HHZ' }] } });
    await page.goto(`${server.url}/review`);

    // The event row: origin, position, depth, ML with its spread and station count, quality.
    const eventRow = page.getByTestId(`event-row-${seeded.eventId}`);
    await eventRow.waitFor({ timeout: 30_000 });
    const detail = await api(sue, 'GET', `/api/events/${seeded.eventId}`);
    const origin = detail.origin as { time: string; latitude: number; depthKm: number; azimuthalGapDeg: number };
    const magnitude = detail.magnitude as { value: number; stationCount: number };
    const text = (await eventRow.textContent()) ?? '';
    expect(text).toContain(origin.time.replace(/(\.\d{3})\d*Z$/, '$1Z'));
    expect(text).toContain(`${origin.latitude.toFixed(3)}° N`);
    expect(text).toContain(`${origin.depthKm.toFixed(1)} km`);
    expect(text).toContain(`ML ${magnitude.value.toFixed(1)}`);
    expect(text).toContain(`${magnitude.stationCount} stations`);
    expect(text).toContain(`${Math.round(origin.azimuthalGapDeg)}°`);
    expect(text).toContain('preliminary');
    expect(await page.getByText('does not yet locate', { exact: false }).count()).toBe(0);
    await page.getByTestId('event-caution').getByText('triage aids', { exact: false }).waitFor();
    // Its windows, on demand, each a link to its queue item.
    await eventRow.getByRole('button', { name: 'Windows (5)' }).click();
    const windowsList = page.getByRole('list', { name: `Windows of event ${seeded.eventId}` });
    await windowsList.waitFor({ timeout: 10_000 });
    const hrefs = await windowsList.getByRole('link').evaluateAll((links) => links.map((a) => a.getAttribute('href')));
    expect(hrefs.sort()).toEqual(seeded.itemIds.map((id) => `/queue/items/${id}`).sort());
    expect(await eventRow.getByRole('link', { name: `Open event ${seeded.eventId}` }).getAttribute('href')).toBe(`/events/${seeded.eventId}`);
    // The filters: a station the event does not hold hides it.
    await page.getByRole('form', { name: 'Event filters' }).getByLabel('Station').fill('KV06');
    await eventRow.waitFor({ state: 'detached' });
    await page.getByRole('form', { name: 'Event filters' }).getByLabel('Station').fill('KW03');
    await eventRow.waitFor();
    // The supervisor publishes it: earthquake, known, final.
    await eventRow.getByRole('button', { name: 'Review…' }).click();
    const review = page.getByRole('form', { name: `Review event ${seeded.eventId}` });
    await review.getByLabel('Event type').selectOption('earthquake');
    await review.getByLabel('Type certainty').selectOption('known');
    await review.getByLabel('Evaluation status').selectOption('final');
    expect(await review.getByRole('button', { name: 'Return to analysts' }).isDisabled()).toBe(true);
    await review.getByRole('button', { name: `Save event ${seeded.eventId}` }).click();
    await eventRow.getByText('final', { exact: true }).waitFor({ timeout: 10_000 });
    expect(await api(sue, 'GET', `/api/events/${seeded.eventId}`)).toMatchObject({ event: { evaluationStatus: 'final', eventType: 'earthquake', typeCertainty: 'known' } });

    // The lone labelled window, reviewed on its own.
    const reviewRow = page.getByTestId(`review-row-${ev}`);
    await reviewRow.waitFor({ timeout: 15_000 });
    expect(await reviewRow.textContent()).toContain('earliest P pick');
    for (const id of seeded.itemIds) expect(await page.getByTestId(`review-row-${id}`).count()).toBe(0);
    await reviewRow.getByRole('button', { name: 'Review…' }).click();
    await reviewRow.getByRole('combobox').selectOption('final');
    await reviewRow.getByRole('button', { name: 'Set status' }).click();
    await reviewRow.getByText('final', { exact: true }).waitFor({ timeout: 10_000 });
    expect(await checkA11y(page)).toEqual([]);
    await screenshot(page, 'supervisor-review', true);

    const [download] = await Promise.all([page.waitForEvent('download'), page.getByRole('link', { name: 'Download QuakeML' }).click()]);
    const path = await download.path();
    const xml = await readFile(path, 'utf8');
    const doc = new XMLParser({ ignoreAttributes: false, parseTagValue: false, isArray: (n) => n === 'event' || n === 'pick' || n === 'origin' || n === 'magnitude' }).parse(xml);
    type ExportedEvent = { '@_publicID': string; type: string; pick: Array<{ time: { value: string }; evaluationStatus: string }>; origin?: Array<{ latitude: { value: string } }>; magnitude?: Array<{ mag: { value: string }; type: string }> };
    const events = doc['q:quakeml'].eventParameters.event as ExportedEvent[];
    // QuakeML 1.2 (BED): one <event> per event, the located one with its origin and ML.
    expect(events.map((e) => e['@_publicID']).sort()).toEqual([`smi:seisift.local/event/event/${seeded.eventId}`, `smi:seisift.local/event/item/${ev}`].sort());
    const lone = events.find((e) => e['@_publicID'].endsWith(`/item/${ev}`));
    expect(lone?.pick[0]?.time.value).toBe(pTime);
    expect(lone?.pick[0]?.evaluationStatus).toBe('final');
    const located = events.find((e) => e['@_publicID'].endsWith(`/event/${seeded.eventId}`));
    expect(located?.type).toBe('earthquake');
    expect(Number(located?.origin?.[0]?.latitude.value)).toBeCloseTo(origin.latitude, 6);
    expect(located?.magnitude?.[0]?.type).toBe('ML');
    expect(Number(located?.magnitude?.[0]?.mag.value)).toBeCloseTo(magnitude.value, 6);
    expect(xml).toContain('triage aids');
    expect(download.suggestedFilename()).toMatch(/^seisift-catalogue-\d{4}-\d{2}-\d{2}_\d{4}-\d{2}-\d{2}\.xml$/);
    expect(problems.filter((p) => !/favicon/.test(p))).toEqual([]);

    // The thresholds page (PR curve) and the dashboard render without errors.
    await page.goto(`${server.url}/thresholds`);
    await page.getByRole('table', { name: 'Confusion counts on the labelled history' }).waitFor({ timeout: 15_000 });
    await page.getByText('Precision and recall across eventZ').waitFor();
    await page.getByText('XX.KV02: 1 items labelled as events, 1 as noise', { exact: false }).waitFor();
    await page.getByText('Precision–recall curve').waitFor();
    await screenshot(page, 'supervisor-thresholds', true);
    await page.goto(`${server.url}/dashboard`);
    await page.getByText('Items per day per station').waitFor({ timeout: 15_000 });
    await page.getByRole('table', { name: /per analyst/ }).getByText('Ana Kestrel').waitFor();
    await screenshot(page, 'supervisor-dashboard', true);
    expect(problems.filter((p) => !/favicon/.test(p))).toEqual([]);
  }, 240_000);
});
