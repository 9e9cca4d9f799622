import { readFile } from 'node:fs/promises';
import { XMLParser } from 'fast-xml-parser';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { sessionCookieName } from '@server/auth/sessions';
import { launchBrowser, screenshot, type LaunchedBrowser } from '@tests/setup/browser';
import { createItem, createPerson, type TestPerson } from '@tests/setup/queue-fixtures';
import { startTestServer, type TestServer } from '@tests/setup/test-server';

/*
 * A supervisor in a real browser (Debian chromium via playwright-core) against a real server over
 * a fresh database: an escalation made by an analyst (over HTTP) appears in the open inbox without
 * a reload, the supervisor confirms it, then reviews a labelled event and downloads the QuakeML
 * export, which parses back. Screenshots land in .data/screenshots/.
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

    // A labelled event, reviewed as final in the review screen, then exported.
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
    const reviewRow = page.getByTestId(`review-row-${ev}`);
    await reviewRow.waitFor({ timeout: 15_000 });
    expect(await reviewRow.textContent()).toContain('earliest P pick');
    expect(await page.getByText('Seisift does not yet locate events or compute magnitudes', { exact: false }).count()).toBeGreaterThan(0);
    await reviewRow.getByRole('button', { name: 'Review…' }).click();
    await reviewRow.getByRole('combobox').selectOption('final');
    await reviewRow.getByRole('button', { name: 'Set status' }).click();
    await reviewRow.getByText('final', { exact: true }).waitFor({ timeout: 10_000 });
    await screenshot(page, 'supervisor-review', true);

    const [download] = await Promise.all([page.waitForEvent('download'), page.getByRole('link', { name: 'Download QuakeML' }).click()]);
    const path = await download.path();
    const xml = await readFile(path, 'utf8');
    const doc = new XMLParser({ ignoreAttributes: false, parseTagValue: false, isArray: (n) => n === 'event' || n === 'pick' }).parse(xml);
    const events = doc['q:quakeml'].eventParameters.event as Array<{ '@_publicID': string; type: string; pick: Array<{ time: { value: string }; evaluationStatus: string }> }>;
    expect(events.map((e) => e['@_publicID'])).toEqual([`smi:seisift.local/event/item/${ev}`]);
    expect(events[0]?.pick[0]?.time.value).toBe(pTime);
    expect(events[0]?.pick[0]?.evaluationStatus).toBe('final');
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
  }, 90_000);
});
