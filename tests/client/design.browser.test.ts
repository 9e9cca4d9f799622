import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { seedDemo } from '@server/db/seed-demo';
import { checkA11y, launchBrowser, screenshot, type LaunchedBrowser } from '@tests/setup/browser';
import { startTestServer, type TestServer } from '@tests/setup/test-server';

/*
 * The /design page in a real browser (Debian chromium via playwright-core), reached as an admin
 * reaches it in production: the real server (real MariaDB, the built client, the session probe and
 * the live websocket) with the demo users seeded, signed in as the demo admin.
 * Accessibility bar: axe-core's WCAG 2.x A/AA rules, failing on serious or critical findings.
 * Screenshots land in .data/screenshots/ for a person to look at.
 */

const demoPassword = 'kestrel-demo-pass';
let server: TestServer;
let baseUrl: string;
let browser: LaunchedBrowser;

/** Opens a page that records console errors, page errors and any request leaving our origin. */
async function openPage(width: number, height: number, colorScheme: 'dark' | 'light') {
  const page = await browser.context.newPage();
  await page.setViewportSize({ width, height });
  await page.emulateMedia({ colorScheme });
  const problems: string[] = [];
  page.on('console', (msg) => {
    if (msg.type() === 'error') problems.push(`console: ${msg.text()}`);
  });
  page.on('pageerror', (err) => problems.push(`pageerror: ${err.message}`));
  page.on('request', (req) => {
    const url = req.url();
    if (!url.startsWith(baseUrl) && !url.startsWith('data:')) problems.push(`off-origin request: ${url}`);
  });
  page.on('websocket', (ws) => {
    // The live connection must go to our own host too (ws:// of the same origin).
    if (!ws.url().startsWith(baseUrl.replace(/^http/, 'ws'))) problems.push(`off-origin websocket: ${ws.url()}`);
  });
  page.on('requestfailed', (req) => problems.push(`failed: ${req.url()}`));
  page.on('response', (res) => {
    if (res.status() >= 400) problems.push(`HTTP ${res.status()}: ${res.url()}`);
  });
  return { page, problems };
}

async function gotoDesign(page: Page) {
  await page.goto(`${baseUrl}/design`, { waitUntil: 'networkidle' });
  await page.getByRole('heading', { level: 1, name: 'Design reference' }).waitFor();
  // Plots draw once the mono font is ready; wait for both canvases.
  await page.locator('.seisift-plot canvas').nth(1).waitFor();
}

/** Signs the demo admin in through the sign-in page (the browser profile keeps the cookie). */
async function signInAsAdmin(): Promise<void> {
  const page = await browser.context.newPage();
  await page.goto(`${baseUrl}/sign-in`, { waitUntil: 'domcontentloaded' });
  await page.getByRole('heading', { name: 'Sign in to Seisift' }).waitFor({ timeout: 10_000 });
  await page.getByLabel('E-mail').fill('admin@kestrel.example');
  await page.getByLabel('Password', { exact: true }).fill(demoPassword);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.getByRole('navigation', { name: 'Sections' }).getByRole('link', { name: 'Account' }).waitFor({ timeout: 10_000 });
  await page.close();
}

beforeAll(async () => {
  server = await startTestServer();
  await seedDemo(server.ctx.database.db, { demoPassword });
  baseUrl = server.url;
  browser = await launchBrowser();
  await signInAsAdmin();
});

afterAll(async () => {
  await browser?.close();
  await server?.close();
});

describe('/design in a browser', () => {
  const cases = [
    { width: 1440, height: 900, theme: 'dark' },
    { width: 1440, height: 900, theme: 'light' },
    { width: 1280, height: 720, theme: 'dark' },
    { width: 1280, height: 720, theme: 'light' },
  ] as const;

  it.each(cases)('renders at $width×$height in the $theme theme with no serious axe finding', async ({ width, height, theme }) => {
    const { page, problems } = await openPage(width, height, theme);
    await gotoDesign(page);
    // With no stored choice the page follows the system preference.
    expect(await page.getAttribute('html', 'data-theme')).toBe(theme);

    await screenshot(page, `design-${theme}-${width}x${height}`);
    // A second view further down: the table, plot and tabs.
    await page.getByRole('heading', { level: 2, name: 'Dense table' }).scrollIntoViewIfNeeded();
    await screenshot(page, `design-${theme}-${width}x${height}-table`);

    const violations = await checkA11y(page);
    expect(violations, JSON.stringify(violations, null, 2)).toEqual([]);

    // Usable at this size: the content area never needs sideways scrolling.
    const overflow = await page.locator('main').evaluate((el) => el.scrollWidth - el.clientWidth);
    expect(overflow).toBeLessThanOrEqual(0);

    // Fonts come with the app: both Plex faces are loaded, nothing was fetched from elsewhere.
    const families = await page.evaluate(async () => {
      await document.fonts.ready;
      return [...document.fonts].filter((f) => f.status === 'loaded').map((f) => f.family.replace(/["']/g, ''));
    });
    expect(families).toContain('IBM Plex Sans');
    expect(families).toContain('IBM Plex Mono');
    expect(problems).toEqual([]);
    await page.close();
  });

  it('switches the theme from the top bar and remembers it across a reload', async () => {
    const { page, problems } = await openPage(1440, 900, 'dark');
    await gotoDesign(page);
    expect(await page.getAttribute('html', 'data-theme')).toBe('dark');
    const themeSwitch = page.getByRole('banner').getByRole('radiogroup', { name: 'Theme' });
    await expect.poll(() => themeSwitch.getByRole('radio', { name: 'Auto' }).getAttribute('aria-checked')).toBe('true');

    await themeSwitch.getByRole('radio', { name: 'Light' }).click();
    expect(await page.getAttribute('html', 'data-theme')).toBe('light');
    expect(await page.evaluate(() => localStorage.getItem('seisift.theme'))).toBe('light');
    const canvas = await page.evaluate(() => getComputedStyle(document.body).backgroundColor);
    expect(canvas).toBe('rgb(241, 240, 234)'); // --sf-canvas of the light theme, #f1f0ea

    await page.reload({ waitUntil: 'networkidle' });
    expect(await page.getAttribute('html', 'data-theme')).toBe('light');
    expect(await themeSwitch.getByRole('radio', { name: 'Light' }).getAttribute('aria-checked')).toBe('true');
    await screenshot(page, 'design-switched-light-1440x900');

    // Arrow keys move the choice inside the radio group.
    await themeSwitch.getByRole('radio', { name: 'Light' }).focus();
    await page.keyboard.press('ArrowLeft');
    expect(await page.getAttribute('html', 'data-theme')).toBe('dark');
    expect(await page.evaluate(() => localStorage.getItem('seisift.theme'))).toBe('dark');

    // Auto forgets the stored choice and follows the system again.
    await themeSwitch.getByRole('radio', { name: 'Auto' }).click();
    expect(await page.evaluate(() => localStorage.getItem('seisift.theme'))).toBeNull();
    await page.emulateMedia({ colorScheme: 'light' });
    await expect.poll(() => page.getAttribute('html', 'data-theme')).toBe('light');
    expect(problems).toEqual([]);
    await page.close();
  });

  it('sets the remembered theme before any app code runs (no flash)', async () => {
    const { page } = await openPage(1280, 720, 'dark');
    await page.goto(`${baseUrl}/design`, { waitUntil: 'networkidle' });
    await page.evaluate(() => localStorage.setItem('seisift.theme', 'light'));
    // Block the app bundle (the built scripts under /assets/): only the inline script in
    // index.html can set the attribute now.
    await page.route('**/assets/*.js', (route) => route.abort());
    await page.reload({ waitUntil: 'load' });
    expect(await page.getAttribute('html', 'data-theme')).toBe('light');
    expect(await page.locator('#root').innerHTML()).toBe('');
    await page.evaluate(() => localStorage.removeItem('seisift.theme'));
    await page.close();
  });

  it('redraws a plot with the new tokens when its theme changes', async () => {
    const { page } = await openPage(1440, 900, 'dark');
    await gotoDesign(page);
    const plotSection = page.getByRole('region', { name: 'Plot frame' });
    // The first panel of the pair is the dark one; located by position so it still matches after
    // its data-theme changes.
    const darkPanel = plotSection.locator('[data-theme]').first();
    expect(await darkPanel.getAttribute('data-theme')).toBe('dark');
    const sample = darkPanel.locator('figure ul li svg line').first();
    const before = await sample.getAttribute('stroke');
    expect(before).toBe('#56b4e9'); // --sf-plot-1, dark
    await darkPanel.evaluate((el) => el.setAttribute('data-theme', 'light'));
    await expect.poll(() => sample.getAttribute('stroke')).toBe('#0072b2'); // --sf-plot-1, light
    await page.close();
  });

  it('moves a visible focus ring with Tab, starting at the skip link', async () => {
    const { page } = await openPage(1280, 720, 'dark');
    await gotoDesign(page);
    // --sf-focus per theme (tokens.css): dark #ffc94d, light #9a4f00. The light preview panels of
    // the page are reached too, so the expected colour follows the element's own theme.
    const focusColor: Record<string, string> = { dark: 'rgb(255, 201, 77)', light: 'rgb(154, 79, 0)' };
    const seen: string[] = [];
    // Signed in as admin, the top bar and the navigation hold more stops than a visitor's, so Tab
    // on until the first control of the page's own content (the dialog example's Dismiss) is met.
    for (let i = 0; i < 32 && !seen.some((x) => x.includes('Dismiss')); i += 1) {
      await page.keyboard.press('Tab');
      const ring = await page.evaluate(() => {
        const el = document.activeElement;
        if (!(el instanceof HTMLElement) || el === document.body) return null;
        const style = getComputedStyle(el);
        const box = el.getBoundingClientRect();
        return {
          label: `${el.tagName.toLowerCase()}:${(el.getAttribute('aria-label') ?? el.textContent ?? '').trim().slice(0, 30)}`,
          outlineStyle: style.outlineStyle,
          outlineWidth: parseFloat(style.outlineWidth),
          outlineColor: style.outlineColor,
          theme: el.closest('[data-theme]')?.getAttribute('data-theme') ?? 'none',
          visible: box.width > 0 && box.height > 0 && box.bottom > 0 && box.top < window.innerHeight,
        };
      });
      expect(ring, `Tab #${i + 1} left focus on the body`).not.toBeNull();
      if (!ring) continue;
      seen.push(ring.label);
      expect(ring.outlineStyle, ring.label).toBe('solid');
      expect(ring.outlineWidth, ring.label).toBeGreaterThanOrEqual(2);
      expect(ring.outlineColor, ring.label).toBe(focusColor[ring.theme]);
      expect(ring.visible, ring.label).toBe(true);
      if (i === 0) {
        expect(ring.label).toBe('a:Skip to content');
        await screenshot(page, 'design-focus-skip-link');
      }
    }
    // The Tab order reaches the theme switch, the sign-out button and the navigation.
    expect(seen.some((s) => s.includes('Auto'))).toBe(true);
    expect(seen).toContain('button:Sign out');
    expect(seen.some((s) => s.includes('Design reference'))).toBe(true);
    expect(seen.some((s) => s.includes('Dismiss'))).toBe(true);
    await screenshot(page, 'design-focus-after-tabs');
    await page.close();
  });

  it('runs tabs, dialog and form errors from the keyboard', async () => {
    const { page } = await openPage(1440, 900, 'light');
    await gotoDesign(page);

    // Tabs: arrow keys move selection and focus (WAI-ARIA tabs pattern).
    const tablist = page.getByRole('tablist', { name: 'Trace views (dark preview)' });
    await tablist.getByRole('tab', { name: 'Raw' }).focus();
    await page.keyboard.press('ArrowRight');
    const low = tablist.getByRole('tab', { name: 'Low band' });
    expect(await low.getAttribute('aria-selected')).toBe('true');
    expect(await low.evaluate((el) => el === document.activeElement)).toBe(true);
    await page.keyboard.press('End');
    expect(await tablist.getByRole('tab', { name: 'High band' }).getAttribute('aria-selected')).toBe('true');

    // Dialog: opens modal, Escape closes it, focus returns to the opener.
    const opener = page.getByRole('region', { name: 'Dialog and toasts' }).getByRole('button', { name: 'Open dialog' }).first();
    await opener.focus();
    await page.keyboard.press('Enter');
    const dialog = page.getByRole('dialog', { name: 'Dismiss as noise?' });
    await dialog.waitFor();
    // Focus starts on the first field, inside the dialog.
    expect(await dialog.getByLabel('Noise reason').evaluate((el) => el === document.activeElement)).toBe(true);
    await page.keyboard.press('Tab');
    expect(await dialog.evaluate((el) => el.contains(document.activeElement))).toBe(true);
    const violations = await checkA11y(page);
    expect(violations, JSON.stringify(violations, null, 2)).toEqual([]);
    await screenshot(page, 'design-dialog-light');
    await page.keyboard.press('Escape');
    await dialog.waitFor({ state: 'hidden' });
    expect(await opener.evaluate((el) => el === document.activeElement)).toBe(true);

    // Form: submitting shows each error under its field and wires it to the input.
    const form = page.getByRole('region', { name: 'Form fields' }).locator('[data-theme="light"] form');
    await form.getByRole('button', { name: 'Check form' }).click();
    const station = form.getByLabel('Station code');
    await expect.poll(() => station.getAttribute('aria-invalid')).toBe('true');
    const described = (await station.getAttribute('aria-describedby')) ?? '';
    const errorText = await page.evaluate((ids) => ids.split(' ').map((id) => document.getElementById(id)?.textContent ?? '').join(' | '), described);
    expect(errorText).toContain('Station code: 1 to 5 capital letters or digits');
    expect(await form.getByLabel('Reply to').getAttribute('aria-invalid')).toBe('true');
    expect(await form.getByLabel('Event type').getAttribute('aria-invalid')).toBe('true');

    // Toast: announced in the notifications region with its tone as a word.
    await page.getByRole('region', { name: 'Dialog and toasts' }).locator('[data-theme="light"]').getByRole('button', { name: 'Toast: error' }).click();
    const alert = page.getByRole('region', { name: 'Notifications' }).getByRole('alert');
    await alert.waitFor();
    expect(await alert.textContent()).toContain('Error:');
    await screenshot(page, 'design-form-errors-toast-light');
    const after = await checkA11y(page);
    expect(after, JSON.stringify(after, null, 2)).toEqual([]);
    // Errors stay until closed; the close button names the toast it closes.
    await page.getByRole('button', { name: 'Close: Someone else labelled this item' }).click();
    await alert.waitFor({ state: 'detached' });
    await page.close();
  });

  it('previews the shell for a signed-in supervisor with the sections of their roles', async () => {
    const { page } = await openPage(1440, 900, 'dark');
    await gotoDesign(page);
    const preview = page.getByRole('region', { name: 'App shell' }).locator('[data-theme="dark"]');
    // Sample user with roles supervisor + analyst: the union of both roles' sections (issue 10);
    // no Upload, which only operators may use (upload.create).
    expect(await preview.getByRole('link').allTextContents()).toEqual([
      'Seisift',
      'Home',
      'Queue',
      'Stations',
      'Review & catalogue',
      'Thresholds',
      'Dashboard',
      'Inbox',
      'Audit log',
      'Account',
    ]);
    expect(await preview.getByRole('list', { name: 'Your roles' }).getByRole('listitem').allTextContents()).toEqual(['supervisor', 'analyst']);
    expect(await preview.getByRole('status').first().textContent()).toContain('Live');
    await preview.scrollIntoViewIfNeeded();
    await screenshot(page, 'design-shell-preview-dark');
    await page.close();
  });

  it('shows the admin the sections of that role, and a 404 page for unknown paths', async () => {
    const { page, problems } = await openPage(1280, 720, 'dark');
    await page.goto(`${baseUrl}/`, { waitUntil: 'networkidle' });
    const nav = page.getByRole('navigation', { name: 'Sections' });
    // An admin (issue 3): stations, audit log, users, the local mailbox (the test server uses the
    // fake SMTP server), account, and the design reference.
    expect(await nav.getByRole('link').allTextContents()).toEqual(['Home', 'Stations', 'Audit log', 'Users', 'Mailbox', 'Account', 'Design reference']);
    const banner = page.getByRole('banner');
    expect(await banner.textContent()).toContain('admin@kestrel.example');
    await screenshot(page, 'home-dark-1280x720');
    expect(await checkA11y(page)).toEqual([]);

    await page.goto(`${baseUrl}/no-such-page`, { waitUntil: 'networkidle' });
    await page.getByText('No page here').waitFor();
    expect(await page.locator('main').textContent()).toContain('/no-such-page');
    expect(problems).toEqual([]);
    await page.close();
  });

  // Last: it ends the admin's session.
  it('signs out from the top bar by keyboard, and the session is over', async () => {
    const { page, problems } = await openPage(1280, 720, 'dark');
    await gotoDesign(page);
    const signOut = page.getByRole('banner').getByRole('button', { name: 'Sign out' });
    await signOut.focus();
    await page.keyboard.press('Enter');
    await page.getByRole('heading', { name: 'Sign in to Seisift' }).waitFor();
    const after = await page.evaluate(async () => (await fetch('/api/auth/session')).json());
    expect(after).toEqual({ session: null });
    expect(problems).toEqual([]);
    await page.close();
  });
});
