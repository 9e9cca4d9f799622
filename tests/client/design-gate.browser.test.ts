import { mkdtemp, readdir, rm } from 'node:fs/promises';
import { createServer as createNetServer } from 'node:net';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { build, preview, type PreviewServer } from 'vite';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { checkA11y, launchBrowser, screenshot, type LaunchedBrowser } from '@tests/setup/browser';

/*
 * A production build (import.meta.env.DEV false, no VITE_SEISIFT_DEV_PAGES) with nobody signed
 * in: the design reference is not in the build, and signed-out visitors land on the sign-in page.
 * Served by `vite preview` from a temporary folder so the real dist/ is left alone (there is no
 * API behind it: the session probe fails, which the client reads as "not signed in").
 */

let outDir: string;
let server: PreviewServer;
let baseUrl: string;
let browser: LaunchedBrowser;

async function freePort(): Promise<number> {
  return new Promise((done, fail) => {
    const probe = createNetServer();
    probe.once('error', fail);
    probe.listen(0, '127.0.0.1', () => {
      const address = probe.address();
      const port = typeof address === 'object' && address ? address.port : 0;
      probe.close(() => done(port));
    });
  });
}

beforeAll(async () => {
  outDir = await mkdtemp(join(tmpdir(), 'seisift-client-build-'));
  const configFile = resolve(process.cwd(), 'vite.config.ts');
  // vitest sets NODE_ENV=test, and Vite then builds with import.meta.env.DEV true; a production
  // build needs NODE_ENV=production while it runs (this file runs in its own worker process).
  const nodeEnv = process.env.NODE_ENV;
  const devPages = process.env.VITE_SEISIFT_DEV_PAGES;
  process.env.NODE_ENV = 'production';
  delete process.env.VITE_SEISIFT_DEV_PAGES;
  try {
    await build({ configFile, mode: 'production', logLevel: 'error', build: { outDir, emptyOutDir: true } });
  } finally {
    process.env.NODE_ENV = nodeEnv;
    if (devPages !== undefined) process.env.VITE_SEISIFT_DEV_PAGES = devPages;
  }
  const port = await freePort();
  server = await preview({ configFile, logLevel: 'error', build: { outDir }, preview: { port, strictPort: true, host: '127.0.0.1' } });
  baseUrl = `http://127.0.0.1:${port}`;
  browser = await launchBrowser({ width: 1280, height: 720 });
});

afterAll(async () => {
  await browser?.close();
  await new Promise<void>((done) => (server ? server.httpServer.close(() => done()) : done()));
  if (outDir) await rm(outDir, { recursive: true, force: true });
});

describe('production build, nobody signed in', () => {
  it('leaves the design reference out: no route, no chunk, no navigation entry', async () => {
    // The page's own code is not in the build at all (its lazy chunk would be named after the file).
    const assets = await readdir(join(outDir, 'assets'));
    expect(assets.filter((f) => /^design-.*\.js$/.test(f))).toEqual([]);
    const page = await browser.context.newPage();
    const errors: string[] = [];
    page.on('pageerror', (err) => errors.push(err.message));
    await page.goto(`${baseUrl}/design`, { waitUntil: 'networkidle' });
    // Not signed in: the sign-in page, which would bring the visitor back to /design afterwards.
    await page.getByRole('heading', { name: 'Sign in to Seisift' }).waitFor({ timeout: 5000 });
    expect(new URL(page.url()).pathname).toBe('/sign-in');
    expect(await page.getByRole('heading', { name: 'Design reference' }).count()).toBe(0);
    expect(await page.getByRole('navigation', { name: 'Sections' }).count()).toBe(0);
    await screenshot(page, 'design-gate-production');
    expect(await checkA11y(page)).toEqual([]);
    expect(errors).toEqual([]);
    await page.close();
  });

  it('sends a signed-out visitor of / to the sign-in page, with no live-connection badge', async () => {
    const page = await browser.context.newPage();
    const sockets: string[] = [];
    page.on('websocket', (ws) => sockets.push(ws.url()));
    await page.goto(`${baseUrl}/`, { waitUntil: 'networkidle' });
    await page.getByRole('heading', { name: 'Sign in to Seisift' }).waitFor({ timeout: 5000 });
    expect(page.url()).toBe(`${baseUrl}/sign-in`);
    expect(await page.getByText('Offline').count()).toBe(0);
    expect(await page.locator('[data-connection]').count()).toBe(0);
    // No live channel is even tried without a session.
    expect(sockets).toEqual([]);
    await screenshot(page, 'signed-out-home');
    await page.close();
  });
});
