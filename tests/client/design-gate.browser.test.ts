import { mkdtemp, rm } from 'node:fs/promises';
import { createServer as createNetServer } from 'node:net';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { build, preview, type PreviewServer } from 'vite';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { checkA11y, launchBrowser, screenshot, type LaunchedBrowser } from '@tests/setup/browser';

/*
 * A production build (import.meta.env.DEV false) with nobody signed in: the design reference is
 * neither listed nor shown, and the page says why. Served by `vite preview` from a temporary
 * folder so the real dist/ is left alone.
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
  process.env.NODE_ENV = 'production';
  try {
    await build({ configFile, mode: 'production', logLevel: 'error', build: { outDir, emptyOutDir: true } });
  } finally {
    process.env.NODE_ENV = nodeEnv;
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

describe('production build without a signed-in admin', () => {
  it('hides /design from the navigation and refuses the page', async () => {
    const page = await browser.context.newPage();
    const errors: string[] = [];
    page.on('pageerror', (err) => errors.push(err.message));
    await page.goto(`${baseUrl}/design`, { waitUntil: 'networkidle' });
    await page.getByText('For admins only').waitFor({ timeout: 5000 }).catch(async () => {
      throw new Error(`no refusal; errors ${errors.join('; ')}; body ${(await page.locator('body').innerText()).slice(0, 300)}`);
    });
    expect(await page.getByRole('heading', { name: 'Design reference' }).count()).toBe(0);
    const nav = page.getByRole('navigation', { name: 'Sections' });
    expect(await nav.getByRole('link').count()).toBe(0);
    await screenshot(page, 'design-gate-production');
    expect(await checkA11y(page)).toEqual([]);
    expect(errors).toEqual([]);
    await page.close();
  });
});
