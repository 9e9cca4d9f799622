import { mkdir, mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import { createRequire } from 'node:module';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { chromium, type BrowserContext, type Locator, type Page } from 'playwright-core';
import { z } from 'zod';

/** Debian's chromium (apt package `chromium`); playwright-core never downloads a browser here. */
export const chromiumPath = '/usr/bin/chromium';

/** Where screenshots go (git-ignored through `.data/`). */
export const screenshotDir = resolve(process.cwd(), '.data/screenshots');

/** A launched browser: its context and a close() that also removes the temporary profile. */
export type LaunchedBrowser = {
  context: BrowserContext;
  close: () => Promise<void>;
};

/**
 * Launches headless chromium with a fresh profile (so no state leaks between tests).
 * @param options viewport size in CSS px (default 1440×900) and the system colour scheme to
 *   emulate (default 'dark'; chromium treats 'no-preference' as light). Pages can change it with
 *   page.emulateMedia({ colorScheme }).
 */
export async function launchBrowser(
  options: { width?: number; height?: number; colorScheme?: 'dark' | 'light' } = {},
): Promise<LaunchedBrowser> {
  const profile = await mkdtemp(join(tmpdir(), 'seisift-chromium-'));
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: chromiumPath,
    headless: true,
    viewport: { width: options.width ?? 1440, height: options.height ?? 900 },
    colorScheme: options.colorScheme ?? 'dark',
    args: [
      '--headless',
      '--no-sandbox',
      '--disable-gpu',
      '--disable-quic',
      '--no-first-run',
      '--disable-background-networking',
      '--disable-component-update',
      '--disable-sync',
    ],
  });
  return {
    context,
    close: async () => {
      await context.close();
      await rm(profile, { recursive: true, force: true });
    },
  };
}

/** One axe-core finding, trimmed to what a failing test should print. */
export type A11yViolation = {
  id: string;
  impact: 'serious' | 'critical';
  help: string;
  nodes: string[];
};

const axeResultSchema = z.object({
  violations: z.array(
    z.object({
      id: z.string(),
      impact: z.string().nullable().optional(),
      help: z.string(),
      nodes: z.array(z.object({ target: z.array(z.unknown()), failureSummary: z.string().optional() })),
    }),
  ),
});

declare global {
  interface Window {
    /** axe-core, once checkA11y has injected it into the page. */
    axe?: { run: (context: Document, options: object) => Promise<unknown> };
  }
}

let axeSource: string | null = null;

async function loadAxe(): Promise<string> {
  if (axeSource === null) {
    const require = createRequire(import.meta.url);
    axeSource = await readFile(require.resolve('axe-core/axe.min.js'), 'utf8');
  }
  return axeSource;
}

/**
 * Runs axe-core (WCAG 2.0–2.2 A/AA rules and best practices) on the page as it is now and returns
 * the serious and critical findings. Empty means the page passes at that bar.
 * @param page a loaded page
 */
export async function checkA11y(page: Page): Promise<A11yViolation[]> {
  const hasAxe = await page.evaluate(() => 'axe' in window);
  // Evaluated through the browser's protocol, not added as an inline <script>: the app's CSP
  // (server/http/security-headers.ts) rightly refuses inline scripts it has no hash for.
  if (!hasAxe) await page.evaluate(await loadAxe());
  const raw: unknown = await page.evaluate(async () => {
    if (!window.axe) throw new Error('axe-core did not load into the page');
    return window.axe.run(document, {
      runOnly: { type: 'tag', values: ['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa', 'wcag22aa', 'best-practice'] },
      resultTypes: ['violations'],
    });
  });
  const result = axeResultSchema.parse(raw);
  return result.violations
    .filter((v): v is typeof v & { impact: 'serious' | 'critical' } => v.impact === 'serious' || v.impact === 'critical')
    .map((v) => ({
      id: v.id,
      impact: v.impact,
      help: v.help,
      nodes: v.nodes.map((n) => `${n.target.map(String).join(' ')}${n.failureSummary ? ` — ${n.failureSummary}` : ''}`),
    }));
}

/**
 * Saves a PNG of the viewport (or of the whole page with fullPage) under .data/screenshots/NAME.png
 * and returns its path.
 * @param page the page
 * @param name kebab-case file name without extension
 */
export async function screenshot(page: Page, name: string, fullPage = false): Promise<string> {
  if (!/^[a-z0-9][a-z0-9-]*$/.test(name)) throw new Error(`screenshot name must be kebab-case: ${name}`);
  await mkdir(screenshotDir, { recursive: true });
  const path = join(screenshotDir, `${name}.png`);
  await writeFile(path, await page.screenshot({ fullPage }));
  return path;
}

/**
 * The box of a plot area that stays on the page long enough to be measured. A claim, a pick key or
 * a new view can redraw a plot between Playwright's wait and its measurement (the old element is
 * gone and boundingBox() answers null): wait for the element again, up to `attempts` times.
 * @param what names the plot in the error when none stays
 */
export async function steadyBox(page: Page, plot: Locator, what: string, attempts = 20): Promise<{ x: number; y: number; width: number; height: number }> {
  for (let attempt = 0; attempt < attempts; attempt += 1) {
    await plot.waitFor();
    const box = await plot.boundingBox();
    if (box && box.width > 0 && box.height > 0) return box;
    await page.waitForTimeout(100);
  }
  throw new Error(`no plot area for ${what}`);
}
