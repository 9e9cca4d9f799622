import { fileURLToPath } from 'node:url';
import { and, eq } from 'drizzle-orm';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { stations } from '@server/db/schema/stations';
import { seedDemo } from '@server/db/seed-demo';
import { encodeMiniSeed2 } from '@server/formats/mseed2-writer';
import { encodeMiniSeed3 } from '@server/formats/mseed3-writer';
import { checkA11y, launchBrowser, screenshot, type LaunchedBrowser } from '@tests/setup/browser';
import { startTestServer, type TestServer } from '@tests/setup/test-server';

/*
 * The station operator's path in a real browser (Debian chromium, playwright-core) against a real
 * server over a fresh MariaDB with the Kestrel Valley demo seeded: sign in as the demo operator,
 * upload two files through the upload page (upload throughput throttled so the per-file progress
 * is visible), see the results with links to the new items, open the station page and see the
 * PSD plot against the noise models. Screenshots go to .data/screenshots/.
 */

const demoPassword = 'kestrel-demo-pass';

/** Demo-like window: deterministic pseudo-random counts with a small burst (demo input, not a check value). */
function demoCounts(n: number, seed: number, burstAt: number): Int32Array {
  let state = seed >>> 0;
  const out = new Int32Array(n);
  for (let i = 0; i < n; i++) {
    state = (Math.imul(state, 1664525) + 1013904223) >>> 0;
    const noise = (state / 2 ** 32 - 0.5) * 200;
    const t = (i - burstAt) / 100;
    const burst = t > 0 && t < 8 ? 2500 * Math.exp(-t / 1.5) * Math.sin(2 * Math.PI * 5 * t) : 0;
    out[i] = Math.round(noise + burst);
  }
  return out;
}

describe('operator: upload two files, see results, open the station page (browser)', () => {
  let server: TestServer;
  let browser: LaunchedBrowser;
  let kv01Id = 0;

  beforeAll(async () => {
    server = await startTestServer();
    await seedDemo(server.ctx.database.db, { demoPassword });
    const [kv01] = await server.ctx.database.db.select({ id: stations.id }).from(stations).where(and(eq(stations.network, 'XX'), eq(stations.code, 'KV01')));
    kv01Id = kv01?.id ?? 0;
    browser = await launchBrowser({ width: 1400, height: 1000 });
  });
  afterAll(async () => {
    await browser?.close();
    await server?.close();
  });

  const watch = (page: Page) => {
    const problems: string[] = [];
    page.on('pageerror', (err) => problems.push(`pageerror: ${err.message}`));
    page.on('console', (msg) => {
      if (msg.type() === 'error' && !/status of 40[13]/.test(msg.text())) problems.push(`console: ${msg.text()}`);
    });
    return problems;
  };

  it('signs in, uploads with progress, lists results, shows the PSD plot', async () => {
    const page = await browser.context.newPage();
    const problems = watch(page);
    // Sign in through the sign-in page.
    await page.goto(`${server.url}/sign-in`);
    await page.getByLabel('E-mail').fill('operator@kestrel.example');
    await page.getByLabel('Password').fill(demoPassword);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.getByText('Demo Operator').first().waitFor();
    if (!page.url().endsWith('/upload')) await page.goto(`${server.url}/upload`);

    const start = Date.UTC(2026, 2, 14, 9, 26, 0) * 1000;
    const parts = ['HHZ', 'HHN', 'HHE'].map((channel, k) =>
      encodeMiniSeed2({ network: 'XX', station: 'KV01', location: '00', channel, sampleRateHz: 100, startTimeUs: start, samples: demoCounts(12000, 11 + k, 4000) }, { encoding: 'steim2', recordLength: 512 }),
    );
    const file1 = Buffer.concat(parts.map((p) => Buffer.from(p)));
    const file2 = Buffer.from(
      encodeMiniSeed3({ network: 'XX', station: 'KV01', location: '00', channel: 'HHZ', sampleRateHz: 100, startTimeUs: start + 3_600_000_000, samples: demoCounts(9000, 99, 100000) }, { encoding: 'steim2' }),
    );

    await page.getByRole('heading', { name: 'Upload waveform windows' }).waitFor();
    await page.locator('input[type=file]').setInputFiles([
      { name: 'XX.KV01.20260314T0926.mseed', mimeType: 'application/vnd.fdsn.mseed', buffer: file1 },
      { name: 'XX.KV01.20260314T1026.ms3', mimeType: 'application/vnd.fdsn.mseed', buffer: file2 },
    ]);
    await page.getByText('XX.KV01.20260314T1026.ms3').waitFor();
    expect(await checkA11y(page)).toEqual([]);

    // Throttle uploads (~40 KB/s) so the progress bar is seen moving.
    const cdp = await page.context().newCDPSession(page);
    await cdp.send('Network.enable');
    await cdp.send('Network.emulateNetworkConditions', { offline: false, latency: 20, downloadThroughput: -1, uploadThroughput: 40 * 1024 });
    await page.getByRole('button', { name: 'Upload 2 files' }).click();
    await page.getByText(/Uploading \d+ %/).first().waitFor({ timeout: 10_000 });
    await screenshot(page, 'operator-upload-progress');
    await page.getByRole('heading', { name: 'Results' }).waitFor({ timeout: 30_000 });
    await page.locator('table tbody tr').nth(1).waitFor({ timeout: 30_000 });
    await cdp.send('Network.emulateNetworkConditions', { offline: false, latency: 0, downloadThroughput: -1, uploadThroughput: -1 });
    const rows = await page.locator('table tbody tr').allInnerTexts();
    expect(rows).toHaveLength(2);
    expect(rows[0]).toContain('XX.KV01.20260314T0926.mseed');
    expect(rows[0]).toContain('Queued');
    expect(rows[1]).toContain('Queued');
    const links = await page.locator('table a[href^="/queue/items/"]').count();
    expect(links).toBe(2);
    await expect(page.getByRole('note').first().innerText()).resolves.toContain('Triage aid, not an alert');
    expect(await checkA11y(page)).toEqual([]);
    await screenshot(page, 'operator-upload-results', true);

    // The same file again: recognised, not duplicated.
    await page.locator('input[type=file]').setInputFiles([{ name: 'again.mseed', mimeType: 'application/vnd.fdsn.mseed', buffer: file1 }]);
    await page.getByRole('button', { name: 'Upload 1 file' }).click();
    await page.getByText('Already uploaded').first().waitFor({ timeout: 15_000 });

    await page.goto(`${server.url}/stations`);
    await page.getByRole('link', { name: 'XX.KV01' }).click();
    await page.getByRole('heading', { name: /XX\.KV01/ }).first().waitFor();
    await page.getByText('XX.KV01.00.HHZ — power spectral density').waitFor({ timeout: 15_000 });
    await page.locator('canvas').first().waitFor();
    expect(await page.locator('figure canvas').count()).toBeGreaterThanOrEqual(3);
    expect(await page.getByText('NLNM (Peterson 1993)').count()).toBeGreaterThanOrEqual(1);
    expect(page.url()).toBe(`${server.url}/stations/${kv01Id}`);
    expect(await checkA11y(page)).toEqual([]);
    await screenshot(page, 'operator-station-page');
    // The noise trend has two windows now.
    await page.getByText('Noise level per window, 1–5 Hz').waitFor();
    // Channels by hand: add one, see it, remove it.
    await page.getByText('Add or replace a channel by hand').click();
    await page.getByLabel('Channel', { exact: true }).fill('HNZ');
    await page.getByLabel('Rate (Hz)').fill('100');
    await page.getByRole('button', { name: 'Add or replace channel' }).click();
    const channelsTable = page.getByRole('table', { name: 'Channels of XX.KV01' });
    await channelsTable.getByText('XX.KV01.00.HNZ', { exact: true }).waitFor();
    await page.getByRole('button', { name: 'Remove channel XX.KV01.00.HNZ' }).click();
    await channelsTable.getByText('XX.KV01.00.HNZ', { exact: true }).waitFor({ state: 'detached' });
    // Profile editor: a band edge at 0.45·fs is refused with the field's message; a valid change saves.
    const highTo = page.getByLabel('High band to');
    await highTo.fill('45');
    await highTo.blur();
    await page.getByText(/must be below 0\.45·fs = 45 Hz of XX\.KV01\.00\.HH[ENZ] \(100 Hz\)/).waitFor();
    await highTo.fill('12');
    await page.getByRole('button', { name: 'Save profile' }).click();
    await page.getByText('Profile saved').waitFor();
    // Tokens: create one (shown once, with a copy button), see it listed, revoke it.
    await page.getByLabel('New token: what is it for?').fill('acquisition PC');
    await page.getByRole('button', { name: 'Create token' }).click();
    await page.getByText('it is shown only this once').waitFor();
    const secret = await page.getByLabel('Token secret').inputValue();
    expect(secret).toMatch(/^ssi_[A-Za-z0-9_-]{43}$/);
    await page.getByRole('button', { name: 'Copy' }).waitFor();
    await page.getByRole('button', { name: 'Revoke token acquisition PC' }).waitFor();
    expect(await checkA11y(page)).toEqual([]);
    await page.locator('#st-tokens').scrollIntoViewIfNeeded();
    await screenshot(page, 'operator-station-token-created');
    await page.getByRole('button', { name: 'I have stored it' }).click();
    await page.getByRole('button', { name: 'Revoke token acquisition PC' }).click();
    await page.getByText(/^revoked /).waitFor();
    await page.locator('#st-trend').scrollIntoViewIfNeeded();
    await screenshot(page, 'operator-station-health');
    await page.locator('#st-tokens').scrollIntoViewIfNeeded();
    await screenshot(page, 'operator-station-profile-tokens');
    expect(problems).toEqual([]);
  }, 120_000);

  it('imports StationXML with a preview of the changes, then applies it', async () => {
    const page = await browser.context.newPage();
    const problems = watch(page);
    await page.goto(`${server.url}/stations`);
    await page.getByRole('button', { name: 'Import StationXML' }).click();
    await page.getByLabel('FDSN StationXML file (1.0–1.2)').setInputFiles(fileURLToPath(new URL('../fixtures/stationxml/xx-kestrel-valley.xml', import.meta.url)));
    await page.getByRole('table', { name: 'What the import would change' }).waitFor();
    const rows = await page.getByRole('table', { name: 'What the import would change' }).locator('tbody tr').allInnerTexts();
    // KV01 is seeded with other coordinates and a 1.5e9 sensitivity; KV04 is not seeded with the fixture's EHZ.
    expect(rows.find((r) => r.startsWith('XX.KV01\t'))).toMatch(/changed/);
    expect(rows.find((r) => r.includes('XX.KV01.00.HHZ'))).toMatch(/sensitivity: 1500000000 → 1201600000/);
    expect(rows.find((r) => r.includes('XX.KV01.00.HHN'))).toMatch(/skipped/);
    expect(await checkA11y(page)).toEqual([]);
    await screenshot(page, 'operator-stationxml-preview');
    // KV04 is seeded but not assigned to this operator: the preview says it is left out (without
    // saying whether it exists), and what the operator may apply does not count it.
    expect(rows.find((r) => r.startsWith('XX.KV04\t'))).toMatch(/refused.*not one of your stations.*left out of this import/s);
    const operatorApply = (await page.getByRole('button', { name: /^Apply \d+ station change/ }).textContent()) ?? '';
    expect(Number(/\d+/.exec(operatorApply)?.[0])).toBeLessThan(2);
    // An admin may apply it.
    const status = await page.evaluate(async (password) => {
      const res = await fetch('/api/auth/sign-in', { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify({ email: 'admin@kestrel.example', password }) });
      return res.status;
    }, demoPassword);
    expect(status).toBe(200);
    await page.reload();
    await page.getByRole('button', { name: 'Import StationXML' }).click();
    await page.getByLabel('FDSN StationXML file (1.0–1.2)').setInputFiles(fileURLToPath(new URL('../fixtures/stationxml/xx-kestrel-valley.xml', import.meta.url)));
    await page.getByRole('button', { name: 'Apply 2 station changes' }).click();
    await page.getByText('Applied.').waitFor();
    const [kv01] = await server.ctx.database.db.select().from(stations).where(and(eq(stations.network, 'XX'), eq(stations.code, 'KV01')));
    // The fixture's value (tests/fixtures/stationxml/xx-kestrel-valley.xml).
    expect(kv01?.latitude).toBe(46.5123);
    expect(problems).toEqual([]);
  }, 60_000);
});
