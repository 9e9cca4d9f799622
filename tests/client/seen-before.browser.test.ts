import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { queueItemDetailSchema } from '@shared/schemas/queue';
import { uploadResponseSchema } from '@shared/schemas/upload';
import { decodeWaveform } from '@server/formats/decode';
import { encodeMiniSeed3 } from '@server/formats/mseed3-writer';
import { claimItem, labelItem } from '@server/features/queue/queue-transitions';
import { createStation, upsertChannel, type Actor } from '@server/features/stations/station-registry';
import { launchBrowser, screenshot, type LaunchedBrowser } from '../setup/browser';
import { createPerson, type TestPerson } from '../setup/queue-fixtures';
import { startTestServer, type TestServer } from '../setup/test-server';

/**
 * "Seen before" on the review screen (issue 19): a real local earthquake window (BG.ACR,
 * tests/fixtures/real-windows, manifest.csv) is uploaded twice with different start times; the first
 * is labelled a quarry blast. On the second item the panel shows the match and its overlay, and ONE
 * key (M) takes the matched label into the form (nothing else changes, nothing is saved) and moves the
 * focus to the Label button; the analyst confirms it with Enter. Real server and
 * sessions, Debian's chromium; needs the built client.
 */
describe('seen before: accept a matched label with one key (chromium, real server)', () => {
  let server: TestServer;
  let ana: TestPerson;
  let secondId = 0;
  const browsers: LaunchedBrowser[] = [];
  const system: Actor = { userId: null, label: 'test setup', ipAddress: null };
  const file = join(import.meta.dirname, '../fixtures/real-windows/windows/XX.ACR.BG_ACR_2012082505145960.mseed');
  const original = decodeWaveform(new Uint8Array(readFileSync(file)), { filename: 'acr.mseed' });
  const copyAt = (startUs: number): Buffer =>
    Buffer.concat(original.map((s) => Buffer.from(encodeMiniSeed3({ network: 'XX', station: 'ACR', location: s.location, channel: s.channel, sampleRateHz: s.sampleRateHz, startTimeUs: startUs + (s.startTimeUs - (original[0]?.startTimeUs ?? 0)), samples: Int32Array.from(s.samples, (v) => Math.round(v)) }, { encoding: 'steim2' }))));

  beforeAll(async () => {
    server = await startTestServer();
    const db = server.ctx.database.db;
    const stationId = await createStation(db, { network: 'XX', code: 'ACR', name: 'real window station', latitude: 46.3, longitude: 11.0, elevationM: 500 }, system);
    for (const s of original) await upsertChannel(db, stationId, { location: s.location, code: s.channel, sampleRateHz: s.sampleRateHz }, system);
    ana = await createPerson(db, { roles: ['analyst'], displayName: 'Ana Kestrel' });
    const operator = await createPerson(db, { roles: ['operator'], stationIds: [stationId] });
    const upload = async (startUs: number, name: string): Promise<number> => {
      const res = await request(server.url).post('/api/uploads').set('Origin', server.url).set('Cookie', operator.cookie).attach('files', copyAt(startUs), name);
      expect(res.status).toBe(201);
      const id = uploadResponseSchema.parse(res.body).files[0]?.itemIds?.[0];
      if (id === undefined) throw new Error('the upload made no item');
      return id;
    };
    const t0 = Date.UTC(2026, 2, 11, 11, 58) * 1000;
    const firstId = await upload(t0, 'XX.ACR.first.mseed');
    const claimed = await claimItem({ db }, ana, firstId, 1);
    await labelItem({ db }, ana, firstId, claimed.version, { eventType: 'quarry blast', certainty: 'known', distanceClass: 'local', picks: [], note: '' });
    secondId = await upload(t0 + 24 * 3600e6, 'XX.ACR.second.mseed');
  });
  afterAll(async () => {
    for (const b of browsers) await b.close();
    await server?.close();
  });

  it('shows the match with its overlay; one key (M) takes “quarry blast” into the form and nothing else; Enter on the Label button confirms it', async () => {
    const b = await launchBrowser({ width: 1440, height: 900, colorScheme: 'light' });
    browsers.push(b);
    await b.context.addCookies([{ name: 'seisift_session', value: ana.sessionId, url: server.url }]);
    const page = b.context.pages()[0] ?? (await b.context.newPage());
    await page.goto(`${server.url}/queue/items/${secondId}`);
    const panel = page.getByTestId('matches-panel');
    await panel.getByTestId('match-suggestion').waitFor({ timeout: 20_000 });
    expect(await panel.getByTestId('match-suggestion').innerText()).toMatch(/Best labelled match 1\.00: quarry blast/);
    expect(await panel.locator('svg[role="img"]').count()).toBeGreaterThan(0);
    // The flag's reasons say it too.
    expect(await page.getByText(/^resembles 1 quarry blast at ACR, best match 1\.00 \(2026-03-11 11:58\)/).count()).toBe(1);
    const form = page.locator('form[aria-label="Label this item"]');
    const typeSelect = form.locator('select').first();
    expect(await typeSelect.inputValue()).toBe('earthquake');
    const formBefore = await form.locator('select, textarea, input').evaluateAll((els) => els.map((e) => (e as HTMLInputElement).value));
    await page.locator('body').click({ position: { x: 5, y: 5 } });
    // ONE key: M takes the matched label into the form, and only that.
    await page.keyboard.press('m');
    await expect.poll(() => typeSelect.inputValue()).toBe('quarry blast');
    const formAfter = await form.locator('select, textarea, input').evaluateAll((els) => els.map((e) => (e as HTMLInputElement).value));
    expect(formAfter).toEqual(formBefore.map((v, i) => (i === 0 ? 'quarry blast' : v)));
    await screenshot(page, 'seen-before-review');
    // Nothing saved yet: the analyst confirms.
    const before = queueItemDetailSchema.parse((await request(server.url).get(`/api/queue/items/${secondId}`).set('Cookie', ana.cookie)).body);
    expect(before.state).toBe('new');
    // M left the focus on the Label button: Enter confirms the taken label.
    expect(await page.evaluate(() => document.activeElement?.textContent ?? '')).toMatch(/^Label/);
    await page.keyboard.press('Enter');
    await expect
      .poll(async () => queueItemDetailSchema.parse((await request(server.url).get(`/api/queue/items/${secondId}`).set('Cookie', ana.cookie)).body).labelType, { timeout: 15_000 })
      .toBe('quarry blast');
  });
});
