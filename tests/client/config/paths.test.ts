import { describe, expect, it } from 'vitest';
import { roles, type Role } from '../../../shared/auth/roles';
import { navFor, navItems, paths } from '../../../client/src/config/paths';

/*
 * Who sees which section, as issue 10 lists it: Queue (analyst, supervisor); Stations and Upload
 * (operator, supervisor, admin); Review & catalogue, Thresholds, Dashboard, Inbox (supervisor);
 * Audit log (supervisor, admin); admin users and Mailbox (admin); Account (all). Home is for
 * everyone signed in; the design reference for admins (and in development builds).
 */
const expected: Record<string, readonly Role[]> = {
  home: roles,
  queue: ['analyst', 'supervisor'],
  stations: ['operator', 'supervisor', 'admin'],
  upload: ['operator', 'supervisor', 'admin'],
  review: ['supervisor'],
  thresholds: ['supervisor'],
  dashboard: ['supervisor'],
  inbox: ['supervisor'],
  audit: ['supervisor', 'admin'],
  adminUsers: ['admin'],
  mailbox: ['admin'],
  account: roles,
  design: ['admin'],
};

describe('navigation by role', () => {
  it('lists every section of issue 10 once', () => {
    expect(navItems.map((i) => i.key).sort()).toEqual(Object.keys(expected).sort());
  });

  it.each(roles)('shows a %s exactly the sections of that role', (role) => {
    const shown = navFor([role], false, true).map((i) => i.key).sort();
    const want = Object.entries(expected)
      .filter(([, who]) => who.includes(role))
      .map(([key]) => key)
      .sort();
    expect(shown).toEqual(want);
  });

  it('unions the sections of several roles', () => {
    const shown = navFor(['operator', 'analyst'], false, true).map((i) => i.key);
    expect(shown).toEqual(['home', 'queue', 'stations', 'upload', 'account']);
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
