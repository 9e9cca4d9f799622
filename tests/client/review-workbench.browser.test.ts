import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { queueItemDetailSchema, type QueueItemDetail } from '@shared/schemas/queue';
import { createStation, upsertChannel, type Actor } from '@server/features/stations/station-registry';
import { checkA11y, launchBrowser, screenshot, steadyBox, type LaunchedBrowser } from '@tests/setup/browser';
import { createItem, createPerson, type TestPerson } from '@tests/setup/queue-fixtures';
import { startTestServer, type TestServer } from '@tests/setup/test-server';

/**
 * The window review screen as a workbench: Z, N, E stacked on one screen at 1440×900, keyboard
 * picks on N and E saved on those channels, drafts that survive moving to another item and a
 * reload (with a warning on leaving), the analyst's filter redrawn with the band it states, a unit
 * the station's response cannot give refused in words, Enter's safe default (no type chosen: a
 * dismissal, never an earthquake), noise-reason keys, the caution folded once per session, and no
 * serious axe-core finding. Real server and sessions, Debian's chromium; needs the built client.
 */
describe('review workbench (chromium, real server)', () => {
  let server: TestServer;
  let ana: TestPerson;
  const ids: number[] = [];
  const browsers: LaunchedBrowser[] = [];
  const system: Actor = { userId: null, label: 'test setup', ipAddress: null };

  const openAs = async (who: TestPerson, path: string): Promise<Page> => {
    const b = await launchBrowser({ width: 1440, height: 900, colorScheme: 'light' });
    browsers.push(b);
    await b.context.addCookies([{ name: 'seisift_session', value: who.sessionId, url: server.url }]);
    const page = b.context.pages()[0] ?? (await b.context.newPage());
    // A reload with a draft asks the browser first (beforeunload): accept it, as the analyst would.
    page.on('dialog', (d) => void d.accept());
    await page.goto(`${server.url}${path}`);
    return page;
  };
  const detailOf = async (id: number): Promise<QueueItemDetail> => queueItemDetailSchema.parse((await request(server.url).get(`/api/queue/items/${id}`).set('Cookie', ana.cookie)).body);
  const formPicks = async (page: Page): Promise<string[]> => page.locator('form[aria-label="Label this item"] li').allInnerTexts();
  const pointAt = async (page: Page, channel: string, fraction: number) => {
    const over = page.locator(`section[aria-label="Channel ${channel}"] .u-over`).first();
    const box = await steadyBox(page, over, channel);
    await page.mouse.move(box.x + box.width * fraction, box.y + box.height / 2, { steps: 3 });
  };
  const claim = async (page: Page, id: number) => {
    await page.waitForSelector('[data-testid="trace-panel"] .u-over');
    await page.mouse.move(700, 20);
    await page.keyboard.press('c');
    await page.waitForSelector(`[data-item-id="${id}"] [data-testid="claim-holder"]:has-text("you")`);
  };

  beforeAll(async () => {
    server = await startTestServer();
    const db = server.ctx.database.db;
    const stationId = await createStation(db, { network: 'XX', code: 'KV02', name: 'Kestrel Valley quarry road', latitude: 46.31, longitude: 11.07, elevationM: 850 }, system);
    // A flat sensitivity only (no poles and zeros): velocity shows, displacement and Wood-Anderson are refused.
    for (const cha of ['HHZ', 'HHN', 'HHE']) await upsertChannel(db, stationId, { location: '00', code: cha, sampleRateHz: 100, sensitivity: 1.5e9, sensitivityFrequencyHz: 1, sensitivityInputUnits: 'm/s' }, system);
    ana = await createPerson(db, { roles: ['analyst'], displayName: 'Ana Kestrel' });
    // Synthetic windows (test input, not check values), highest score first in the queue.
    for (const [i, score] of [90, 80, 70, 60].entries()) ids.push(await createItem(db, { station: 'KV02', withSamples: true, burstAtS: 40 + i, durationS: 120, score }));
  }, 120_000);
  afterAll(async () => {
    for (const b of browsers) await b.close();
    await server?.close();
  });

  it('stacks Z, N, E on one 1440×900 screen; picks by key on N and E are saved on N and E; S–P is shown', async () => {
    const id = ids[0] as number;
    const page = await openAs(ana, `/queue/items/${id}`);
    await claim(page, id);
    // The caution opens once per session; folded, it stays one line on the next item too.
    await page.getByTestId('caution-banner').waitFor();
    await page.getByRole('button', { name: 'Fold for this session' }).click();
    await page.getByTestId('caution-folded').waitFor();
    await page.mouse.move(700, 20);
    await page.evaluate(() => window.scrollTo(0, 0));
    for (const cha of ['HHZ', 'HHN', 'HHE']) {
      const box = await steadyBox(page, page.locator(`section[aria-label="Channel XX.KV02.00.${cha}"] .u-over`).first(), cha);
      // Whole plot inside the 900 px viewport without scrolling, and taller than the old ~70 px band panels.
      expect(box.y + box.height, cha).toBeLessThanOrEqual(900);
      expect(box.height, cha).toBeGreaterThanOrEqual(85);
    }
    // One legend for the stack (not one per panel).
    expect(await page.getByRole('note', { name: 'Legend of the traces' }).count()).toBe(1);
    expect(await page.locator('[data-testid="trace-panel"] ul[aria-label$=": series"]').count()).toBe(0);

    await pointAt(page, 'XX.KV02.00.HHN', 0.35);
    await page.keyboard.press('p');
    await expect.poll(() => formPicks(page)).toHaveLength(1);
    await pointAt(page, 'XX.KV02.00.HHE', 0.5);
    await page.keyboard.press('s');
    await expect.poll(() => formPicks(page)).toHaveLength(2);
    const picks = await formPicks(page);
    expect(picks.find((t) => t.startsWith('P'))).toContain('XX.KV02.00.HHN');
    expect(picks.find((t) => t.startsWith('S'))).toContain('XX.KV02.00.HHE');
    // S–P: 15 % of 120 s = 18 s, within a plot pixel or two.
    const sp = Number(/S–P ([\d.]+) s/.exec(await page.getByTestId('s-minus-p').innerText())?.[1]);
    expect(Math.abs(sp - 18)).toBeLessThan(0.5);
    await screenshot(page, 'review-workbench-picks-n-e');
    await page.mouse.move(700, 20);
    await page.keyboard.press('1');
    await expect.poll(async () => (await detailOf(id)).state, { timeout: 15_000 }).toBe('labelled');
    const saved = (await detailOf(id)).label;
    if (saved?.kind !== 'event') throw new Error('not an event label');
    expect(saved.picks.map((p) => `${p.phase} ${p.streamId}`).sort()).toEqual(['P XX.KV02.00.HHN', 'S XX.KV02.00.HHE']);
    // The next item opened, and the caution stays folded in this session.
    await page.waitForURL((u) => !u.pathname.endsWith(`/queue/items/${id}`));
    await page.getByTestId('caution-folded').waitFor();
  }, 90_000);

  it('a draft pick survives moving to another item (with a warning) and a reload', async () => {
    const id = ids[1] as number;
    const page = await openAs(ana, `/queue/items/${id}`);
    await claim(page, id);
    await pointAt(page, 'XX.KV02.00.HHE', 0.4);
    await page.keyboard.press('p');
    await expect.poll(() => formPicks(page)).toHaveLength(1);
    await page.mouse.move(700, 20);
    // J (next item) asks first; keep the draft and go.
    await page.keyboard.press('j');
    await page.waitForSelector(`dialog[open]:has-text("Leave item ${id} without saving?")`);
    await page.getByRole('button', { name: 'Leave, keep draft' }).click();
    await page.waitForURL((u) => !u.pathname.endsWith(`/queue/items/${id}`));
    await page.waitForSelector('[data-testid="trace-panel"] .u-over');
    // Back (K), then a reload: the pick is put back each time, on the same channel.
    await page.mouse.move(700, 20);
    await page.keyboard.press('k');
    await page.waitForURL((u) => u.pathname.endsWith(`/queue/items/${id}`));
    await page.waitForSelector('[data-testid="draft-restored"]:has-text("1 pick")');
    await page.reload();
    await page.waitForSelector('[data-testid="draft-restored"]:has-text("1 pick")');
    expect((await formPicks(page))[0]).toContain('XX.KV02.00.HHE');
    expect(await page.evaluate(() => Object.keys(localStorage).filter((k) => k.startsWith('seisift.review-draft.')).length)).toBe(1);
    await screenshot(page, 'review-workbench-draft-after-reload');
  }, 90_000);

  it('your filter redraws with the band it states; a unit the response cannot give is refused in words', async () => {
    const id = ids[2] as number;
    const page = await openAs(ana, `/queue/items/${id}`);
    await page.waitForSelector('[data-testid="trace-panel"] .u-over');
    await page.mouse.move(700, 20);
    const asked: string[] = [];
    page.on('request', (r) => {
      if (r.url().includes('/traces?')) asked.push(r.url());
    });
    // F: type a band, Enter applies it.
    await page.keyboard.press('f');
    await page.locator('#review-filter-low').fill('2');
    await page.locator('#review-filter-high').fill('8');
    await page.keyboard.press('Enter');
    const z = page.locator('section[aria-label="Channel XX.KV02.00.HHZ"]');
    await expect.poll(() => z.getAttribute('data-filter'), { timeout: 20_000 }).toMatch(/your filter: .*Butterworth band-pass 2–8 Hz, order 4, causal/);
    expect(await z.locator('figcaption').innerText()).toMatch(/peak .* from your filter: velocity: ÷ flat sensitivity .* Butterworth band-pass 2–8 Hz/);
    expect(asked.some((u) => u.includes('fmin=2') && u.includes('fmax=8') && u.includes('phase=causal'))).toBe(true);
    // Z: zero-phase, said on the trace.
    await page.mouse.move(700, 20);
    await page.keyboard.press('z');
    await expect.poll(() => z.getAttribute('data-filter'), { timeout: 20_000 }).toMatch(/2–8 Hz, order 4, zero-phase/);
    // Wood-Anderson needs poles and zeros; this station has a flat sensitivity only.
    await page.getByRole('combobox', { name: 'Units' }).selectOption('wood-anderson');
    await page.getByTestId('filter-refused').first().waitFor({ timeout: 20_000 });
    expect(await page.getByTestId('filter-refused').first().innerText()).toMatch(/Wood-Anderson needs the instrument response: XX\.KV02\.00\.HH.: the registry holds no poles and zeros \(only a flat sensitivity\)/);
    await screenshot(page, 'review-workbench-filter-refused');
    // B goes back to the engine's views; the trace names its own filter again.
    await page.mouse.move(700, 20);
    await page.keyboard.press('b');
    await expect.poll(() => page.getByTestId('trace-panel').getAttribute('data-view')).toBe('trace');
    expect(await z.getAttribute('data-filter')).toMatch(/engine pre-processing/);
    const a11y = await checkA11y(page);
    expect(a11y, JSON.stringify(a11y, null, 1)).toEqual([]);
  }, 90_000);

  it('Enter with no type chosen dismisses as noise (never an earthquake); Shift+2 dismisses as machinery', async () => {
    const id = ids[3] as number;
    const page = await openAs(ana, `/queue/items/${id}`);
    await claim(page, id);
    expect(await page.getByRole('combobox', { name: 'Event type (QuakeML)' }).inputValue()).toBe('');
    await page.mouse.move(700, 20);
    await page.keyboard.press('Enter');
    await expect.poll(async () => (await detailOf(id)).state, { timeout: 15_000 }).toBe('dismissed');
    const d = await detailOf(id);
    expect(d.label).toMatchObject({ kind: 'noise', noiseReason: 'unknown noise' });
    expect(d.labelType).not.toBe('earthquake');

    // Shift+2: the second noise reason (machinery), on the item the previous test left a draft on (in its own browser).
    const other = ids[1] as number;
    await page.goto(`${server.url}/queue/items/${other}`);
    await page.waitForSelector('[data-testid="trace-panel"] .u-over');
    await page.mouse.move(700, 20);
    await page.keyboard.press('Shift+Digit2');
    await expect.poll(async () => (await detailOf(other)).state, { timeout: 15_000 }).toBe('dismissed');
    expect((await detailOf(other)).label).toMatchObject({ kind: 'noise', noiseReason: 'machinery' });
  }, 90_000);
});
