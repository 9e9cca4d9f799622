import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { queueItemDetailSchema } from '@shared/schemas/queue';
import { uploadResponseSchema } from '@shared/schemas/upload';
import { encodeMiniSeed2 } from '@server/formats/mseed2-writer';
import { createStation, upsertChannel, type Actor } from '@server/features/stations/station-registry';
import { launchBrowser, screenshot, steadyBox, type LaunchedBrowser } from '@tests/setup/browser';
import { createItem, createPerson, syntheticStreams, type TestPerson } from '@tests/setup/queue-fixtures';
import { startTestServer, type TestServer } from '@tests/setup/test-server';

/**
 * The review screen as an analyst works it (bugs found in use): keyboard picks land on the channel
 * under the mouse (and S is not guessed with the mouse off the traces), unsaved picks survive Esc
 * (a warning, a draft), one main landmark, the spectrogram on the traces' time axis, and the noise
 * models drawn alike here and on the station page. Real server and sessions, Debian's chromium;
 * needs the built client.
 */
describe('review screen (chromium, real server)', () => {
  let server: TestServer;
  let ana: TestPerson;
  let operator: TestPerson;
  let waitingId: number;
  let stationId: number;
  let itemId: number;
  let windowStartMs: number;
  let durationS: number;
  const browsers: LaunchedBrowser[] = [];
  const system: Actor = { userId: null, label: 'test setup', ipAddress: null };

  const openAs = async (who: TestPerson, path: string): Promise<Page> => {
    const b = await launchBrowser({ width: 1440, height: 900, colorScheme: 'dark' });
    browsers.push(b);
    await b.context.addCookies([{ name: 'seisift_session', value: who.sessionId, url: server.url }]);
    const page = b.context.pages()[0] ?? (await b.context.newPage());
    await page.goto(`${server.url}${path}`);
    return page;
  };

  /** The picks listed in the label form as [phase, stream id, seconds from the window start]. */
  const formPicks = async (page: Page): Promise<Array<[string, string, number]>> => {
    const rows = await page.locator('form[aria-label="Label this item"] li').allInnerTexts();
    return rows.map((text) => {
      const iso = /\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d\.\d{3}Z/.exec(text)?.[0] ?? '';
      const stream = /XX\.KV\d\d\.00\.HH[ZNE]/.exec(text)?.[0] ?? '';
      return [text.trim().charAt(0), stream, (Date.parse(iso) - windowStartMs) / 1000];
    });
  };

  /** Moves the mouse to `fraction` across the first plot of one channel. */
  const pointAt = async (page: Page, channel: string, fraction: number, plot = 0) => {
    const over = page.locator(`section[aria-label="Channel ${channel}"] .u-over`).nth(plot);
    // A claim or a new view may replace the plot: wait for the one on the page now.
    await over.waitFor();
    await over.scrollIntoViewIfNeeded();
    const box = await steadyBox(page, over, channel);
    await page.mouse.move(box.x + box.width * fraction, box.y + box.height / 2, { steps: 3 });
  };

  beforeAll(async () => {
    server = await startTestServer();
    const db = server.ctx.database.db;
    const base = { latitude: 46.3, longitude: 11.05, elevationM: 900 };
    stationId = await createStation(db, { network: 'XX', code: 'KV01', name: 'Kestrel Valley north ridge', ...base }, system);
    for (const cha of ['HHZ', 'HHN', 'HHE']) {
      await upsertChannel(db, stationId, { location: '00', code: cha, sampleRateHz: 100, sensitivity: 1.5e9, sensitivityFrequencyHz: 1, sensitivityInputUnits: 'm/s' }, system);
    }
    ana = await createPerson(db, { roles: ['analyst'], displayName: 'Ana Kestrel' });
    operator = await createPerson(db, { roles: ['operator'], stationIds: [stationId] });
    // Its window starts before the upload's, so the station page's latest spectrum is the upload's
    // (analysed with the channels' sensitivity); by default a fixture window starts two minutes ago.
    waitingId = await createItem(db, { station: 'KV01', withSamples: true, burstAtS: 40, score: 50, windowStart: new Date(Date.UTC(2026, 2, 14, 9, 0, 0)) });
    // A synthetic KV01 window with a 5 Hz burst at 50 s on the vertical (test input, not check values).
    const streams = syntheticStreams('KV01', Date.UTC(2026, 2, 14, 10, 11, 53) * 1000, { durationS: 120, burstAtS: 50 });
    const file = Buffer.concat(streams.map((st) => Buffer.from(encodeMiniSeed2({ ...st, samples: Int32Array.from(st.samples) }, { encoding: 'steim2', recordLength: 512 }))));
    const res = await request(server.url).post('/api/uploads').set('Origin', server.url).set('Cookie', operator.cookie).attach('files', file, 'XX.KV01.2026-03-14T10-11-53.mseed');
    expect(res.status).toBe(201);
    const id = uploadResponseSchema.parse(res.body).files[0]?.itemIds?.[0];
    if (id === undefined) throw new Error('the upload made no item');
    itemId = id;
    const detail = queueItemDetailSchema.parse((await request(server.url).get(`/api/queue/items/${id}`).set('Cookie', ana.cookie)).body);
    windowStartMs = Date.parse(detail.windowStart);
    durationS = (Date.parse(detail.windowEnd) - windowStartMs) / 1000;
  });
  afterAll(async () => {
    for (const b of browsers) await b.close();
    await server?.close();
  });

  it('keyboard picks go to the channel under the mouse; off the traces P goes to the first trigger and S is not placed', async () => {
    const page = await openAs(ana, `/queue/items/${itemId}`);
    await page.waitForSelector('[data-testid="trace-panel"] .u-over');
    await page.mouse.move(700, 20);
    await page.keyboard.press('c');
    await page.waitForSelector(`[data-item-id="${itemId}"] [data-testid="claim-holder"]:has-text("you")`);
    // The claim refetches the item (and may redraw its plots): point once that has settled.
    await page.waitForLoadState('networkidle');

    // One main landmark on the page (the shell's); the waveforms are a region inside it.
    expect(await page.locator('main, [role="main"]').count()).toBe(1);
    expect(await page.getByRole('region', { name: 'Waveforms' }).count()).toBe(1);

    // S with the mouse over the east channel's band trace at 60 % of the window.
    await pointAt(page, 'XX.KV01.00.HHE', 0.6);
    await page.keyboard.press('s');
    await page.waitForFunction(() => document.querySelectorAll('form[aria-label="Label this item"] li').length === 1);
    // P over the north channel at 40 %.
    await pointAt(page, 'XX.KV01.00.HHN', 0.4);
    await page.keyboard.press('p');
    await page.waitForFunction(() => document.querySelectorAll('form[aria-label="Label this item"] li').length === 2);
    let picks = await formPicks(page);
    const east = picks.find((p) => p[0] === 'S');
    const north = picks.find((p) => p[0] === 'P');
    expect(east?.[1]).toBe('XX.KV01.00.HHE');
    expect(north?.[1]).toBe('XX.KV01.00.HHN');
    // Where the mouse was, within a plot pixel or two (the plot is ~1000 px for 120 s).
    expect(Math.abs((east?.[2] ?? 0) - 0.6 * durationS)).toBeLessThan(1);
    expect(Math.abs((north?.[2] ?? 0) - 0.4 * durationS)).toBeLessThan(1);
    await screenshot(page, 'review-keyboard-picks-under-mouse');

    // Mouse off the traces (on the page header): S is not placed anywhere, and says why.
    await page.mouse.move(700, 20);
    await page.keyboard.press('s');
    await page.waitForSelector('text=Point at a trace to place an S pick');
    expect(await formPicks(page)).toHaveLength(2);
    // P off the traces goes to the vertical's first trigger (the burst at 50 s).
    await page.keyboard.press('p');
    await page.waitForFunction(() => document.querySelectorAll('form[aria-label="Label this item"] li').length === 3);
    picks = await formPicks(page);
    const vertical = picks.find((p) => p[1] === 'XX.KV01.00.HHZ');
    expect(vertical?.[0]).toBe('P');
    expect(vertical?.[2]).toBeGreaterThan(49);
    expect(vertical?.[2]).toBeLessThan(53);
    expect(picks.filter((p) => p[0] === 'S')).toHaveLength(1);
  }, 60_000);

  it('Esc with unsaved picks asks first; the draft comes back; discard and label clear it', async () => {
    const page = await openAs(ana, `/queue/items/${itemId}`);
    await page.waitForSelector('[data-testid="trace-panel"] .u-over');
    await page.waitForSelector(`[data-item-id="${itemId}"] [data-testid="claim-holder"]:has-text("you")`);
    await pointAt(page, 'XX.KV01.00.HHZ', 0.5);
    await page.keyboard.press('p');
    await page.waitForSelector('form[aria-label="Label this item"] li');
    await page.mouse.move(700, 20);

    // Esc asks; Esc in the dialog means "stay", and the pick is still there.
    await page.keyboard.press('Escape');
    await page.waitForSelector(`dialog[open]:has-text("Leave item ${itemId} without saving?")`);
    await screenshot(page, 'review-leave-unsaved');
    await page.keyboard.press('Escape');
    await page.waitForFunction(() => !document.querySelector('dialog[open]'));
    expect(page.url()).toContain(`/queue/items/${itemId}`);
    expect(await formPicks(page)).toHaveLength(1);

    // Leave, keeping the draft: back on the item, the pick is put back with a notice.
    await page.keyboard.press('Escape');
    await page.getByRole('button', { name: 'Leave, keep draft' }).click();
    await page.waitForURL(/\/queue(\?|$)/);
    await page.goto(`${server.url}/queue/items/${itemId}`);
    await page.waitForSelector('[data-testid="draft-restored"]:has-text("1 pick")');
    const restored = await formPicks(page);
    expect(restored).toHaveLength(1);
    expect(restored[0]?.[1]).toBe('XX.KV01.00.HHZ');
    await screenshot(page, 'review-draft-restored');

    // Discard and leave: nothing comes back.
    await page.keyboard.press('Escape');
    await page.getByRole('button', { name: 'Discard and leave' }).click();
    await page.waitForURL(/\/queue(\?|$)/);
    await page.goto(`${server.url}/queue/items/${itemId}`);
    await page.waitForSelector('[data-testid="trace-panel"] .u-over');
    expect(await page.locator('[data-testid="draft-restored"]').count()).toBe(0);
    expect(await formPicks(page)).toHaveLength(0);
    // Nothing unsaved: Esc leaves at once.
    await page.keyboard.press('Escape');
    await page.waitForURL(/\/queue(\?|$)/);

    // Labelling saves the work, and the draft goes with it.
    await page.goto(`${server.url}/queue/items/${itemId}`);
    await page.waitForSelector('[data-testid="trace-panel"] .u-over');
    await pointAt(page, 'XX.KV01.00.HHZ', 0.45);
    await page.keyboard.press('p');
    await page.waitForSelector('form[aria-label="Label this item"] li');
    const drafts = () => page.evaluate(() => Object.keys(localStorage).filter((k) => k.startsWith('seisift.review-draft.')).length);
    expect(await drafts()).toBe(1);
    await page.keyboard.press('1');
    await page.waitForURL((u) => !u.pathname.endsWith(`/queue/items/${itemId}`));
    expect(await drafts()).toBe(0);
    const detail = queueItemDetailSchema.parse((await request(server.url).get(`/api/queue/items/${itemId}`).set('Cookie', ana.cookie)).body);
    expect(detail.state).toBe('labelled');
  }, 60_000);

  it('the spectrogram shares the traces’ time axis: same plot area, same time range', async () => {
    const page = await openAs(ana, `/queue/items/${itemId}`);
    await page.waitForSelector('[data-testid="spectrogram"] .uplot[data-image-span]');
    await page.waitForSelector('section[aria-label="Channel XX.KV01.00.HHZ"] .uplot[data-x-range]');
    const geometry = async () =>
      page.evaluate(() => {
        const sg = document.querySelector('[data-testid="spectrogram"] .uplot');
        const tr = document.querySelector('section[aria-label="Channel XX.KV01.00.HHZ"] .uplot');
        const box = (el: Element | null | undefined) => {
          const r = el?.getBoundingClientRect();
          return r ? { left: r.left, right: r.right } : null;
        };
        return {
          sg: { over: box(sg?.querySelector('.u-over')), range: sg?.getAttribute('data-x-range') ?? '', span: sg?.getAttribute('data-image-span') ?? '' },
          tr: { over: box(tr?.querySelector('.u-over')), range: tr?.getAttribute('data-x-range') ?? '' },
        };
      });
    const g = await geometry();
    expect(g.sg.over).not.toBeNull();
    expect(Math.abs((g.sg.over?.left ?? 0) - (g.tr.over?.left ?? 1e9))).toBeLessThanOrEqual(1);
    expect(Math.abs((g.sg.over?.right ?? 0) - (g.tr.over?.right ?? 1e9))).toBeLessThanOrEqual(1);
    expect(g.sg.range).toBe(g.tr.range);
    // Each column covers its own hop around its centre, worked by hand for this window: 12 000
    // samples at 100 Hz, 256-sample segments with a 128-sample hop give 92 columns centred at
    // 1.28 s … 117.76 s, so the image spans 0.64 s to 118.40 s (not 0 to 120 s stretched).
    const [from, to] = g.sg.span.split(' ').map(Number);
    expect(durationS).toBe(120);
    expect(from).toBeCloseTo(0.64, 9);
    expect(to).toBeCloseTo(118.4, 9);
    await page.evaluate(() => document.querySelector('[aria-label="Spectrogram"]')?.scrollIntoView({ block: 'center' }));
    await screenshot(page, 'review-spectrogram-aligned');
    // Zoomed, both still agree.
    await page.keyboard.press('+');
    await page.waitForSelector('text=/Zoom 30\\.00–90\\.00 s/');
    await page.waitForFunction(() => document.querySelector('section[aria-label="Channel XX.KV01.00.HHZ"] .uplot')?.getAttribute('data-x-range')?.startsWith('30'));
    const z = await geometry();
    expect(z.sg.range).toBe(z.tr.range);
  }, 60_000);

  it('NLNM and NHNM look the same on the review spectrum and on the station page', async () => {
    const legend = async (page: Page) =>
      page.evaluate(() =>
        Object.fromEntries(
          [...document.querySelectorAll('ul[aria-label$=": series"] button')]
            .filter((b) => /N[LH]NM/.test(b.textContent ?? ''))
            .map((b) => {
              const line = b.querySelector('line');
              return [(b.textContent ?? '').slice(0, 4), `${line?.getAttribute('stroke') ?? ''} | ${line?.getAttribute('stroke-dasharray') ?? ''}`];
            }),
        ),
      );
    const page = await openAs(ana, `/queue/items/${itemId}`);
    await page.waitForSelector('ul[aria-label^="Spectrum of"] button:has-text("NLNM")');
    const onReview = await legend(page);
    await page.goto(`${server.url}/stations/${stationId}`);
    await page.waitForSelector('ul[aria-label$="power spectral density: series"] button:has-text("NLNM")');
    const onStation = await legend(page);
    expect(Object.keys(onReview).sort()).toEqual(['NHNM', 'NLNM']);
    expect(onStation).toEqual(onReview);
    expect(onReview.NLNM).not.toBe(onReview.NHNM);
  }, 60_000);

  it('an operator sees the item without an enabled Claim button, and C does not claim', async () => {
    const page = await openAs(operator, `/queue/items/${waitingId}`);
    await page.waitForSelector('[data-testid="trace-panel"] .u-over');
    await page.waitForSelector('[data-testid="view-only"]');
    const claimButtons = page.getByRole('button', { name: /^Claim/ });
    const enabled = await claimButtons.evaluateAll((els) => els.filter((b) => !(b as HTMLButtonElement).disabled).length);
    expect(enabled).toBe(0);
    for (const name of [/^Dismiss/, /^Escalate/, /^Label/]) {
      const live = await page.getByRole('button', { name }).evaluateAll((els) => els.filter((b) => !(b as HTMLButtonElement).disabled && !b.closest('fieldset[disabled]')).length);
      expect(live, String(name)).toBe(0);
    }
    await page.keyboard.press('c');
    await page.waitForSelector('text=View only');
    await screenshot(page, 'review-operator-view-only');
    const detail = queueItemDetailSchema.parse((await request(server.url).get(`/api/queue/items/${waitingId}`).set('Cookie', operator.cookie)).body);
    expect(detail.state).toBe('new');
  }, 60_000);
});
