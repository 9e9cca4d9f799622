import { describe, expect, it } from 'vitest';
import { roles, type Role } from '@shared/auth/roles';
import { navFor, navItems, paths } from '@client/config/paths';

/*
 * Who sees which section, written out by hand from the role descriptions of issue 3 and issue 5
 * (not derived from the policy table the navigation reads, so a drift in either shows here):
 * Queue (analyst, supervisor: they work the queue); Stations (operator, analyst, supervisor, admin:
 * station.view); Upload (operator only: upload.create); Review & catalogue, Thresholds, Dashboard,
 * Inbox (supervisor); Audit log (supervisor, admin); Users and Mailbox (admin; Mailbox only while the
 * local fake mailbox is in use); Account (all). Home is for everyone signed in; the design reference
 * for nobody in production (it is listed only in builds that carry the development pages).
 */
const expected: Record<string, readonly Role[]> = {
  home: roles,
  queue: ['analyst', 'supervisor'],
  stations: ['operator', 'analyst', 'supervisor', 'admin'],
  upload: ['operator'],
  review: ['supervisor'],
  thresholds: ['supervisor'],
  dashboard: ['supervisor'],
  inbox: ['supervisor'],
  audit: ['supervisor', 'admin'],
  adminUsers: ['admin'],
  mailbox: ['admin'],
  account: roles,
  design: [],
};

describe('navigation by role', () => {
  it('lists every section of issue 10 once', () => {
    expect(navItems.map((i) => i.key).sort()).toEqual(Object.keys(expected).sort());
  });

  it.each(roles)('shows a %s exactly the sections of that role', (role) => {
    const shown = navFor([role], false, true, { mailbox: true }).map((i) => i.key).sort();
    const want = Object.entries(expected)
      .filter(([, who]) => who.includes(role))
      .map(([key]) => key)
      .sort();
    expect(shown).toEqual(want);
  });

  it('unions the sections of several roles', () => {
    const shown = navFor(['operator', 'analyst'], false, true, { mailbox: true }).map((i) => i.key);
    expect(shown).toEqual(['home', 'queue', 'stations', 'upload', 'account']);
  });

  it('hides Mailbox when the fake mailbox is off (a real SMTP server is configured)', () => {
    expect(navFor(['admin'], false, true, { mailbox: false }).map((i) => i.key)).not.toContain('mailbox');
    expect(navFor(['admin'], false, true, { mailbox: true }).map((i) => i.key)).toContain('mailbox');
  });

  it('never lists the design reference in production, whatever the roles; lists it in builds with the development pages', () => {
    expect(navFor(['admin', 'supervisor', 'analyst', 'operator'], false, true).map((i) => i.key)).not.toContain('design');
    expect(navFor(['operator'], true, true).map((i) => i.key)).toContain('design');
  });

  it('shows nothing to nobody in production, and only the development entries in development', () => {
    expect(navFor([], false, false)).toEqual([]);
    expect(navFor([], true, false).map((i) => i.key)).toEqual(['home', 'design']);
  });

  it('links each entry to its own path', () => {
    for (const item of navItems) expect(item.href).toBe(paths[item.key].href);
    expect(new Set(navItems.map((i) => i.href)).size).toBe(navItems.length);
  });
});
