import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { eventDetailSchema } from '@shared/schemas/events';
import { checkA11y, launchBrowser, screenshot, steadyBox, type LaunchedBrowser } from '@tests/setup/browser';
import { seedSyntheticEvent, type SeededEvent } from '@tests/setup/event-fixtures';
import { createPerson, type TestPerson } from '@tests/setup/queue-fixtures';
import { startTestServer, type TestServer } from '@tests/setup/test-server';

/**
 * The event workbench in chromium against the real server: a five-station synthetic event (stations
 * on a ring, windows from the travel-time engine; test input, not check values) picked with the
 * keyboard on N and E, moved and relocated, the map drawn with no network beyond the test server,
 * and axe-core on the screen. Needs the built client (`node node_modules/.bin/vite build`).
 */
describe('event workbench (real server, chromium)', () => {
  let server: TestServer;
  let ana: TestPerson;
  let seeded: SeededEvent;
  let browser: LaunchedBrowser;
  let page: Page;
  const foreignRequests: string[] = [];

  const detail = async () => {
    const r = await page.request.get(`${server.url}/api/events/${seeded.eventId}`);
    return eventDetailSchema.parse(await r.json());
  };

  /** Points the mouse at `fraction` of the way across the row of `streamId` and returns the time there (ISO, from the screen's own axis). */
  const pointAt = async (streamId: string, timeIso: string) => {
    const section = page.getByTestId('record-section');
    const rows = ((await section.locator('.uplot').getAttribute('data-rows')) ?? '').split(' ');
    const r = rows.indexOf(streamId);
    expect(r, `row of ${streamId} among ${rows.join(', ')}`).toBeGreaterThanOrEqual(0);
    const [from = '', to = ''] = ((await section.locator('.uplot').getAttribute('data-x-range')) ?? '').split(' ');
    const over = section.locator('.u-over');
    const box = await steadyBox(page, over, 'the record section');
    const f = (Date.parse(timeIso) - Date.parse(from)) / (Date.parse(to) - Date.parse(from));
    const rowH = box.height / rows.length;
    await page.mouse.move(box.x + f * box.width, box.y + (r + 0.5) * rowH);
  };

  const waitVersionAbove = async (v: number) => {
    // A failed change shows a toast: print it so a failure says why.
    const toasts = page.locator('[role="alert"], [role="status"]');
    await page
      .waitForFunction((min) => Number(document.querySelector('[data-testid="event-screen"]')?.getAttribute('data-event-version')) > min, v, { timeout: 45_000 })
      .then(async () => console.log(await page.getByTestId('pick-status').innerText()))
      .catch(async (err: unknown) => {
        throw new Error(`event version stayed at ${v}: ${(await toasts.allInnerTexts()).join(' | ')}`, { cause: err });
      });
  };

  beforeAll(async () => {
    server = await startTestServer();
    const db = server.ctx.database.db;
    const sue = await createPerson(db, { roles: ['supervisor'] });
    ana = await createPerson(db, { roles: ['analyst'], displayName: 'Ana Kestrel' });
    seeded = await seedSyntheticEvent(db, {
      codes: ['KW01', 'KW02', 'KW03', 'KW04', 'KW05'],
      placements: [[20, 10], [95, 18], [170, 14], [240, 22], [310, 16]],
      truth: { latitudeDeg: 46.262, longitudeDeg: 11.07, depthKm: 6, timeS: Date.parse('2026-03-10T04:12:33.250Z') / 1000 },
      supervisor: sue,
    });
    browser = await launchBrowser({ width: 1440, height: 900, colorScheme: 'dark' });
    await browser.context.addCookies([{ name: 'seisift_session', value: ana.sessionId, url: server.url }]);
    page = browser.context.pages()[0] ?? (await browser.context.newPage());
    // Offline: every request the page makes must go to the test server itself.
    page.on('request', (req) => {
      if (!req.url().startsWith(server.url) && !req.url().startsWith('data:') && !req.url().startsWith('blob:')) foreignRequests.push(req.url());
    });
    await page.goto(`${server.url}/events/${seeded.eventId}`);
    // The first traces are computed by the analysis workers on a busy machine: allow for a cold start.
    await page.getByTestId('record-section').locator('.uplot').waitFor({ timeout: 90_000 });
  }, 180_000);
  afterAll(async () => {
    await browser?.close();
    await server?.close();
  });

  it('shows the caution, one vertical trace per station ordered by distance, the suggestions and the predicted arrivals', async () => {
    await expect(page.getByTestId('event-caution').textContent()).resolves.toMatch(/triage aids.*procedures and local authorities/);
    const plot = page.getByTestId('record-section').locator('.uplot');
    const rows = ((await plot.getAttribute('data-rows')) ?? '').split(' ');
    expect(rows).toHaveLength(5);
    expect(rows.every((r) => r.endsWith('HHZ'))).toBe(true);
    // Ordered by epicentral distance from the current origin (the ring's distances: 10, 14, 16, 18, 22 km).
    expect(rows.map((r) => r.split('.')[1])).toEqual(['KW01', 'KW03', 'KW05', 'KW02', 'KW04']);
    expect(await plot.getAttribute('data-picks')).toMatch(/HHZ:P:automatic@/);
    const predicted = ((await plot.getAttribute('data-predicted')) ?? '').split(' ');
    expect(predicted.filter((p) => p.includes(':P@'))).toHaveLength(5);
    await page.keyboard.press('a');
    await expect.poll(async () => ((await plot.getAttribute('data-rows')) ?? '').split(' ').length).toBe(15);
    await page.keyboard.press('h');
    await expect.poll(async () => ((await plot.getAttribute('data-rows')) ?? '').split(' ').length).toBe(10);
  });

  it('accepts the suggestions, then keyboard picks land on the N and E channels under the mouse', async () => {
    let d = await detail();
    await page.keyboard.press('Shift+A');
    await waitVersionAbove(d.event.version);
    d = await detail();
    expect(d.picks.analyst.length).toBe(d.picks.automatic.length);
    const kw03 = seeded.synth.find((s) => s.code === 'KW03');
    if (!kw03) throw new Error('no KW03');
    const sIso = new Date(kw03.sTimeUs / 1000).toISOString();
    const pIso = new Date(kw03.pTimeUs / 1000).toISOString();
    // S on the N channel, then P on the E channel of the same station, each with its key.
    await pointAt('XX.KW03.00.HHN', sIso);
    await page.keyboard.press('s');
    await waitVersionAbove(d.event.version);
    d = await detail();
    await pointAt('XX.KW03.00.HHE', pIso);
    await page.keyboard.press('p');
    await waitVersionAbove(d.event.version);
    d = await detail();
    const s = d.picks.analyst.find((p) => p.streamId.startsWith('XX.KW03.') && p.phase === 'S');
    const p = d.picks.analyst.find((x) => x.streamId.startsWith('XX.KW03.') && x.phase === 'P');
    expect(s?.streamId).toBe('XX.KW03.00.HHN');
    expect(p?.streamId).toBe('XX.KW03.00.HHE');
    // Within a few pixels of where the mouse was (the plot is ~1000 px for 60 s: 1 px ≈ 0.06 s).
    expect(Math.abs(Date.parse(s?.time ?? '') - Date.parse(sIso))).toBeLessThan(200);
    expect(Math.abs(Date.parse(p?.time ?? '') - Date.parse(pIso))).toBeLessThan(200);
    // And the screen draws them on those channels.
    const drawn = (await page.getByTestId('record-section').locator('.uplot').getAttribute('data-picks')) ?? '';
    expect(drawn).toMatch(/XX\.KW03\.00\.HHN:S:manual@/);
    expect(drawn).toMatch(/XX\.KW03\.00\.HHE:P:manual@/);
    await screenshot(page, 'event-workbench');
  }, 180_000);

  it('moving a pick relocates: the origin on screen changes', async () => {
    const d = await detail();
    const panel = page.getByTestId('origin-panel').locator('[data-origin]');
    const before = await panel.getAttribute('data-origin');
    const beforeId = await panel.getAttribute('data-origin-id');
    // Move KW01's P 1.5 s late (the nearest station: the origin must move).
    const kw01 = seeded.synth.find((s) => s.code === 'KW01');
    if (!kw01) throw new Error('no KW01');
    await page.keyboard.press('v');
    await pointAt('XX.KW01.00.HHZ', new Date(kw01.pTimeUs / 1000 + 1500).toISOString());
    await page.keyboard.press('p');
    await waitVersionAbove(d.event.version);
    await expect.poll(async () => panel.getAttribute('data-origin-id')).not.toBe(beforeId);
    const after = await panel.getAttribute('data-origin');
    expect(after).not.toBe(before);
    const moved = await detail();
    expect(moved.origin?.id).not.toBe(d.origin?.id);
    expect(moved.origin?.time).not.toBe(d.origin?.time);
    // The relocate action itself gives a new preferred origin too.
    await page.getByRole('button', { name: /Relocate/ }).click();
    await waitVersionAbove(moved.event.version);
    expect((await detail()).origin?.id).not.toBe(moved.origin?.id);
  }, 180_000);

  it('draws the map from the shipped outlines with no request outside the test server', async () => {
    const map = page.getByTestId('event-map');
    await expect.poll(async () => map.getAttribute('data-outlines'), { timeout: 15_000 }).toBe('drawn');
    expect(await map.locator('[data-member="yes"]').count()).toBe(5);
    expect(await map.locator('[data-layer="ellipse"]').getAttribute('d')).toMatch(/^M/);
    expect(await map.locator('[data-layer="epicentre"]').count()).toBe(1);
    await page.getByRole('button', { name: 'Region' }).click();
    expect(await map.locator('[data-layer="outlines"] path').first().getAttribute('d')).toMatch(/^M/);
    expect(foreignRequests).toEqual([]);
  });

  it('axe-core finds no serious or critical issue on the event screen', async () => {
    const violations = await checkA11y(page);
    expect(violations).toEqual([]);
  });
});
