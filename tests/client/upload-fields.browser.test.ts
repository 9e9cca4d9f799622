import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { seedDemo } from '@server/db/seed-demo';
import { checkA11y, launchBrowser, screenshot, type LaunchedBrowser } from '../setup/browser';
import { startTestServer, type TestServer } from '../setup/test-server';

/*
 * The upload page's CSV fields in a real browser (Debian chromium) against a real server with the
 * Kestrel Valley demo seeded: the page reads each picked file and asks for a stream id only when the
 * file names none (`# stream=`), and for a start time only when its times are seconds from the start
 * and it gives none (`# start=`), whatever the file is called; what is typed is sent and used.
 */

const demoPassword = 'kestrel-demo-pass';
/** 60 s at 100 Hz of seconds-from-start times (demo input, invented). */
const relRows = Array.from({ length: 6000 }, (_, i) => `${(i / 100).toFixed(2)},${Math.round(200 * Math.sin(i / 3))}`).join('\n');

describe('upload page: CSV stream id and start time fields (browser)', () => {
  let server: TestServer;
  let browser: LaunchedBrowser;

  beforeAll(async () => {
    server = await startTestServer();
    await seedDemo(server.ctx.database.db, { demoPassword });
    browser = await launchBrowser({ width: 1300, height: 900 });
  });
  afterAll(async () => {
    await browser?.close();
    await server?.close();
  });

  it('asks only for what a file lacks, and the start time typed is the window start', async () => {
    const page = await browser.context.newPage();
    await page.goto(`${server.url}/sign-in`);
    await page.getByLabel('E-mail').fill('operator@kestrel.example');
    await page.getByLabel('Password').fill(demoPassword);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.getByText('Demo Operator').first().waitFor();
    await page.goto(`${server.url}/upload`);
    await page.getByRole('heading', { name: 'Upload waveform windows' }).waitFor();

    await page.locator('input[type=file]').setInputFiles([
      // names its stream and start: nothing to ask
      { name: 'complete.csv', mimeType: 'text/csv', buffer: Buffer.from(`# stream=XX.KV01.00.HHZ start=2026-03-14T08:00:00Z\nt_seconds,counts\n${relRows}\n`) },
      // names its stream only, and is called .mseed: asks for the start time only
      { name: 'stream-only.mseed', mimeType: 'application/octet-stream', buffer: Buffer.from(`# stream=XX.KV01.00.HHN\n${relRows}\n`) },
    ]);
    const complete = page.locator('li[data-file="complete.csv"]');
    const streamOnly = page.locator('li[data-file="stream-only.mseed"]');
    await streamOnly.getByLabel('Start time, UTC (the times are seconds from it)').waitFor();
    expect(await streamOnly.getByLabel('Stream id (optional: the file names one)').count()).toBe(1);
    await expect(streamOnly.getByText('From the file:').first().innerText()).resolves.toContain('XX.KV01.00.HHN');
    expect(await complete.getByLabel('Stream id (optional: the file names one)').count()).toBe(1);
    expect(await complete.getByLabel('Start time, UTC (optional: the file gives one)').count()).toBe(1);
    const send = page.getByRole('button', { name: 'Upload 2 files' });
    expect(await send.isDisabled()).toBe(true);
    await streamOnly.getByText(/Its times are seconds from the start/).waitFor();
    expect(await checkA11y(page)).toEqual([]);
    await screenshot(page, 'operator-upload-csv-fields');

    await streamOnly.getByLabel('Start time, UTC (the times are seconds from it)').fill('2026-03-14 09:30:00');
    expect(await send.isDisabled()).toBe(false);
    await send.click();
    await page.getByRole('heading', { name: 'Results' }).waitFor({ timeout: 30_000 });
    await page.locator('table tbody tr').nth(1).waitFor({ timeout: 30_000 });
    const rows = await page.locator('table tbody tr').allInnerTexts();
    expect(rows.every((r) => r.includes('Queued'))).toBe(true);
    const starts = await server.ctx.database.pool.query('SELECT w.start_time AS s FROM windows w JOIN uploads u ON u.id = w.upload_id ORDER BY u.filename');
    const times = (starts[0] as Array<{ s: Date }>).map((r) => r.s.toISOString());
    expect(times).toEqual(['2026-03-14T08:00:00.000Z', '2026-03-14T09:30:00.000Z']);
  }, 120_000);
});
