import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createStation, upsertChannel, type Actor } from '@server/features/stations/station-registry';
import { launchBrowser, type LaunchedBrowser } from '@tests/setup/browser';
import { createItem, createPerson, type TestPerson } from '@tests/setup/queue-fixtures';
import { startTestServer, type TestServer } from '@tests/setup/test-server';

/**
 * The security headers (helmet, server/middleware/security-headers.ts) on pages and API answers,
 * and the built client working under its Content-Security-Policy: every screen an analyst, a
 * supervisor and an admin open (plots, spectrogram, live socket, the inline theme script) runs
 * with no CSP violation reported by chromium. Needs the built client.
 */
describe('security headers and the client under its CSP (real server, chromium)', () => {
  let server: TestServer;
  let analyst: TestPerson;
  let supervisor: TestPerson;
  let admin: TestPerson;
  let itemId: number;
  const browsers: LaunchedBrowser[] = [];
  const system: Actor = { userId: null, label: 'test setup', ipAddress: null };

  beforeAll(async () => {
    server = await startTestServer();
    const db = server.ctx.database.db;
    const kv01 = await createStation(db, { network: 'XX', code: 'KV01', name: 'Kestrel Valley north ridge', latitude: 46.3, longitude: 11.05, elevationM: 900 }, system);
    for (const cha of ['HHZ', 'HHN', 'HHE']) await upsertChannel(db, kv01, { location: '00', code: cha, sampleRateHz: 100 }, system);
    analyst = await createPerson(db, { roles: ['analyst'] });
    supervisor = await createPerson(db, { roles: ['supervisor'] });
    admin = await createPerson(db, { roles: ['admin'] });
    // A synthetic window with samples, so the review screen draws traces and a spectrogram (test input, not a check value).
    itemId = await createItem(db, { station: 'KV01', withSamples: true, burstAtS: 40, durationS: 90 });
  });
  afterAll(async () => {
    for (const b of browsers) await b.close();
    await server?.close();
  });

  it('sends CSP (frame-ancestors none, scripts from self and the hashed theme script), nosniff, Referrer-Policy and X-Frame-Options on pages and API answers', async () => {
    for (const path of ['/sign-in', '/api/health', '/api/queue']) {
      const res = await request(server.url).get(path);
      const csp = String(res.headers['content-security-policy']);
      expect(csp, path).toContain("default-src 'self'");
      expect(csp, path).toContain("frame-ancestors 'none'");
      expect(csp, path).toMatch(/script-src 'self' 'sha256-[A-Za-z0-9+/]+=*'/);
      expect(csp, path).toContain("object-src 'none'");
      expect(csp, path).not.toContain('unsafe-inline');
      expect(res.headers['x-content-type-options'], path).toBe('nosniff');
      expect(res.headers['referrer-policy'], path).toBe('same-origin');
      expect(res.headers['x-frame-options'], path).toBe('DENY');
      expect(res.headers['x-powered-by'], path).toBeUndefined();
    }
  });

  it('lets browsers keep the hashed build files for a year, asks again for the page every time, and answers 404 for a build file that does not exist', async () => {
    const page = await request(server.url).get('/queue');
    expect(page.headers['cache-control']).toBe('no-cache');
    const script = /<script type="module" crossorigin src="(\/assets\/[\w-]+\.js)">/.exec(page.text)?.[1];
    expect(script).toBeDefined();
    const asset = await request(server.url).get(script ?? '');
    expect(asset.status).toBe(200);
    // Express's `immutable` with a year's max-age (common practice for content-hashed names).
    expect(asset.headers['cache-control']).toBe('public, max-age=31536000, immutable');
    const missing = await request(server.url).get('/assets/no-such-chunk-0000.js');
    expect(missing.status).toBe(404);
    expect(missing.body).toEqual({ error: { code: 'not_found', message: 'Built file /assets/no-such-chunk-0000.js not found' } });
  });

  it('every screen runs with no CSP violation (chromium reports none) and the inline theme script still sets the theme', async () => {
    const visits: Array<{ who: TestPerson; paths: string[] }> = [
      { who: analyst, paths: ['/queue', `/queue/items/${itemId}`, '/stations', '/account'] },
      { who: supervisor, paths: ['/inbox', '/review', '/dashboard', '/thresholds'] },
      { who: admin, paths: ['/admin/users', '/audit', '/mailbox'] },
    ];
    const violations: string[] = [];
    for (const { who, paths } of visits) {
      const b = await launchBrowser({ colorScheme: 'light' });
      browsers.push(b);
      await b.context.addInitScript(() => {
        document.addEventListener('securitypolicyviolation', (e) => {
          const w = window as unknown as { cspViolations?: string[] };
          (w.cspViolations ??= []).push(`${e.violatedDirective} ${e.blockedURI}`);
        });
      });
      await b.context.addCookies([{ name: 'seisift_session', value: who.sessionId, url: server.url }]);
      const page = b.context.pages()[0] ?? (await b.context.newPage());
      page.on('console', (m) => {
        if (/Content Security Policy/i.test(m.text())) violations.push(`${page.url()}: ${m.text()}`);
      });
      for (const path of paths) {
        await page.goto(`${server.url}${path}`);
        await page.waitForSelector('main h1, main h2', { timeout: 15_000 });
        if (path.startsWith('/queue/items/')) await page.waitForSelector('.uplot canvas', { timeout: 15_000 });
        if (path === '/queue') await page.waitForSelector('[data-connection="live"]', { timeout: 15_000 });
        await page.waitForTimeout(300);
        const found = await page.evaluate(() => (window as unknown as { cspViolations?: string[] }).cspViolations ?? []);
        violations.push(...found.map((v) => `${path}: ${v}`));
        // The hashed inline script ran: the light system scheme was applied before the app.
        expect(await page.evaluate(() => document.documentElement.getAttribute('data-theme'))).toBe('light');
      }
    }
    expect(violations).toEqual([]);
  }, 180_000);
});
