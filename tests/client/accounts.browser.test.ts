/**
 * Accounts in a real browser (Debian chromium via playwright-core) against the real server, the
 * real MariaDB and the fake SMTP server: each demo user signs in through the sign-in page and sees
 * the navigation for their roles; an admin invites a person, the invitation is read in the
 * mailbox page and accepted; axe-core checks the sign-in, account and admin pages.
 * Needs the built client (npm test builds it; else `node node_modules/.bin/vite build`).
 */
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { isRouted } from '@client/app/router';
import { navFor } from '@client/config/paths';
import { demoUsers, seedDemo } from '@server/db/seed-demo';
import { checkA11y, launchBrowser, screenshot, type LaunchedBrowser } from '@tests/setup/browser';
import { startTestServer, type TestServer } from '@tests/setup/test-server';

const demoPassword = 'kestrel-demo-pass';
let server: TestServer;
let browser: LaunchedBrowser;

beforeAll(async () => {
  server = await startTestServer();
  await seedDemo(server.ctx.database.db, { demoPassword });
  browser = await launchBrowser({ width: 1440, height: 900 });
});

afterAll(async () => {
  await browser?.close();
  await server?.close();
});

async function signIn(page: Page, email: string, password: string): Promise<void> {
  // One browser profile for the file: start each sign-in signed out.
  await browser.context.clearCookies();
  await page.goto(`${server.url}/sign-in`, { waitUntil: 'domcontentloaded' });
  await page.getByRole('heading', { name: 'Sign in to Seisift' }).waitFor({ timeout: 10_000 });
  await page.getByLabel('E-mail').fill(email);
  await page.getByLabel('Password', { exact: true }).fill(password);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.getByRole('navigation', { name: 'Sections' }).getByRole('link', { name: 'Account' }).waitFor({ timeout: 10_000 });
}

/** The navigation the shell should show for these roles: what paths.ts lists and the router serves. */
function expectedNav(roles: (typeof demoUsers)[number]['roles']): string[] {
  return navFor(roles, false, true)
    .filter((i) => i.key !== 'design' && isRouted(i.href))
    .map((i) => i.label);
}

describe('accounts in the browser', () => {
  it('the sign-in page is a real form with labelled type=email and type=password inputs, and passes axe', async () => {
    const page = await browser.context.newPage();
    const errors: string[] = [];
    page.on('pageerror', (e) => errors.push(e.message));
    await page.goto(`${server.url}/sign-in`, { waitUntil: 'networkidle' });
    expect(await page.getByRole('heading', { level: 1 }).textContent()).toBe('Sign in to Seisift');
    expect(await page.locator('form input[type="email"]').count()).toBe(1);
    expect(await page.locator('form input[type="password"]').count()).toBe(1);
    expect(await page.getByLabel('E-mail').getAttribute('type')).toBe('email');
    expect(await page.getByLabel('Password', { exact: true }).getAttribute('autocomplete')).toBe('current-password');
    await screenshot(page, 'accounts-sign-in');
    expect(await checkA11y(page)).toEqual([]);

    // A wrong password gets the one generic answer.
    await page.getByLabel('E-mail').fill('analyst@kestrel.example');
    await page.getByLabel('Password', { exact: true }).fill('wrong-password-here');
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.getByRole('alert').waitFor();
    expect(await page.getByRole('alert').textContent()).toContain('E-mail or password is not right');
    await screenshot(page, 'accounts-sign-in-refused');
    expect(await checkA11y(page)).toEqual([]);
    expect(errors).toEqual([]);
    await page.close();
  });

  for (const u of demoUsers) {
    it(`${u.email} signs in through the page and sees the navigation for ${u.roles.join(', ')}`, async () => {
      const page = await browser.context.newPage();
      await signIn(page, u.email, demoPassword);
      const nav = page.getByRole('navigation', { name: 'Sections' });
      const labels = (await nav.getByRole('link').allTextContents()).filter((l) => l !== 'Design reference');
      expect(labels).toEqual(expectedNav(u.roles));
      expect(await page.getByRole('banner').textContent()).toContain(u.displayName);
      // What the issue says each role may and may not use.
      const has = (label: string) => labels.includes(label);
      const role = u.roles[0];
      if (role === 'admin') expect([has('Users'), has('Mailbox'), has('Audit log'), has('Queue')]).toEqual([true, true, true, false]);
      if (role === 'supervisor') expect([has('Audit log'), has('Users'), has('Mailbox')]).toEqual([true, false, false]);
      if (role === 'analyst') expect([has('Users'), has('Audit log'), has('Mailbox')]).toEqual([false, false, false]);
      if (role === 'operator') expect([has('Users'), has('Audit log'), has('Mailbox')]).toEqual([false, false, false]);
      await screenshot(page, `accounts-nav-${role ?? 'none'}`);
      await page.close();
    });
  }

  it('the account page lists your sessions, passes axe, and signs out', async () => {
    const page = await browser.context.newPage();
    await signIn(page, 'supervisor@kestrel.example', demoPassword);
    await page.goto(`${server.url}/account`, { waitUntil: 'networkidle' });
    await page.getByRole('heading', { name: 'Your sessions' }).waitFor();
    await page.getByText('this session').waitFor();
    await screenshot(page, 'accounts-account', true);
    expect(await checkA11y(page)).toEqual([]);
    // The account page's own button (the top bar has one too).
    await page.getByRole('main').getByRole('button', { name: 'Sign out' }).click();
    await page.getByRole('heading', { name: 'Sign in to Seisift' }).waitFor();
    await page.goto(`${server.url}/account`, { waitUntil: 'networkidle' });
    await page.getByRole('heading', { name: 'Sign in to Seisift' }).waitFor();
    expect(page.url()).toContain('/sign-in?next=%2Faccount');
    await page.close();
  });

  it('an admin invites an operator; the mail is in the mailbox; the link sets a password and signs the person in', async () => {
    const page = await browser.context.newPage();
    await signIn(page, 'admin@kestrel.example', demoPassword);
    await page.goto(`${server.url}/admin/users`, { waitUntil: 'networkidle' });
    await page.getByRole('region', { name: 'Users' }).getByText('analyst@kestrel.example').waitFor();
    await screenshot(page, 'accounts-admin-users', true);
    expect(await checkA11y(page)).toEqual([]);

    // Sort by e-mail descending and filter by role: TanStack Table in the page.
    await page.getByRole('button', { name: /^E-mail/ }).click();
    expect(await page.locator('th[aria-sort="descending"]').textContent()).toContain('E-mail');
    await page.getByLabel('Role', { exact: true }).selectOption('operator');
    const emails = await page.getByRole('region', { name: 'Users' }).locator('tbody td:nth-child(2)').allTextContents();
    expect(emails).toEqual(['operator@kestrel.example']);

    // The invite form refuses a bad address, then sends.
    const form = page.locator('form[aria-labelledby="invite-heading"]');
    await form.getByLabel('E-mail').fill('not-an-address');
    await form.getByRole('button', { name: 'Send invitation' }).click();
    await form.getByText('must be an e-mail address').waitFor();
    await form.getByLabel('E-mail').fill('kv-field-tech@kestrel.example');
    await form.getByLabel('Name').fill('Field Technician');
    await form.getByLabel('Station operator').check();
    await form.getByLabel(/XX\.KV05/).check();
    await screenshot(page, 'accounts-invite-form');
    expect(await checkA11y(page)).toEqual([]);
    await form.getByRole('button', { name: 'Send invitation' }).click();
    await page.getByText('Invitation sent to kv-field-tech@kestrel.example').waitFor();
    await page.getByRole('region', { name: 'Invitations' }).getByText('kv-field-tech@kestrel.example').waitFor();

    await page.goto(`${server.url}/mailbox`, { waitUntil: 'networkidle' });
    await page.getByRole('button', { name: /Your invitation to Seisift/ }).first().click();
    const link = page.getByRole('article').getByRole('link', { name: /\/welcome#token=/ });
    const href = await link.getAttribute('href');
    expect(href).toMatch(/\/welcome#token=[A-Za-z0-9_-]{43}$/);
    await screenshot(page, 'accounts-mailbox', true);
    expect(await checkA11y(page)).toEqual([]);
    await page.close();

    // The invited person, in a fresh page without the admin's cookie.
    await browser.context.clearCookies();
    const guest = await browser.context.newPage();
    const path = new URL(href ?? '').pathname + new URL(href ?? '').hash;
    await guest.goto(`${server.url}${path}`, { waitUntil: 'networkidle' });
    await guest.getByText('you are invited as Station operator').waitFor();
    expect(guest.url()).not.toContain('token=');
    await guest.getByLabel('New password', { exact: true }).fill('field-tech-password');
    await guest.getByLabel('Repeat the new password').fill('field-tech-password');
    await screenshot(guest, 'accounts-welcome');
    expect(await checkA11y(guest)).toEqual([]);
    await guest.getByRole('button', { name: 'Set password and sign in' }).click();
    await guest.getByRole('navigation', { name: 'Sections' }).getByRole('link', { name: 'Account' }).waitFor();
    expect(await guest.getByRole('banner').textContent()).toContain('Field Technician');
    // The link is used up.
    await guest.goto(`${server.url}${path}`, { waitUntil: 'networkidle' });
    await guest.getByRole('alert').waitFor();
    expect(await guest.getByRole('alert').textContent()).toContain('already been used');
    await guest.close();
    await browser.context.clearCookies();
  });

  it('the audit page shows the sign-ins to a supervisor and filters them', async () => {
    const page = await browser.context.newPage();
    await signIn(page, 'supervisor@kestrel.example', demoPassword);
    await page.goto(`${server.url}/audit`, { waitUntil: 'networkidle' });
    await page.getByRole('cell', { name: 'auth.sign_in', exact: true }).first().waitFor();
    await page.getByLabel('Action').selectOption('auth.sign_in_failed');
    await page.getByRole('button', { name: 'Apply' }).click();
    await page.waitForFunction(() => [...document.querySelectorAll('tbody td:nth-child(3)')].every((td) => td.textContent === 'auth.sign_in_failed'));
    expect(await page.locator('tbody td:nth-child(3)').count()).toBeGreaterThan(0);
    await screenshot(page, 'accounts-audit', true);
    expect(await checkA11y(page)).toEqual([]);
    await page.close();
    await browser.context.clearCookies();
  });
});
