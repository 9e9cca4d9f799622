import { can, type Action } from '@shared/auth/policies';
import type { Role } from '@shared/auth/roles';

/**
 * Every client URL in one place. Screens link with `paths.x.href`, the router registers
 * `paths.x.path`. A section appears in the navigation only once the router has a route for it
 * (see client/src/app/router.tsx), so listing a section here promises nothing on its own.
 */
export const paths = {
  home: { path: '/', href: '/' },
  queue: { path: '/queue', href: '/queue' },
  /** One queue item on the review screen: `${paths.queueItem.href}/${id}`. */
  queueItem: { path: '/queue/items/:id', href: '/queue/items' },
  /** One event on the event workbench: `${paths.event.href}/${id}`. */
  event: { path: '/events/:id', href: '/events' },
  stations: { path: '/stations', href: '/stations' },
  /** One station's page: `${paths.station.href}/${id}`. */
  station: { path: '/stations/:id', href: '/stations' },
  upload: { path: '/upload', href: '/upload' },
  review: { path: '/review', href: '/review' },
  thresholds: { path: '/thresholds', href: '/thresholds' },
  dashboard: { path: '/dashboard', href: '/dashboard' },
  inbox: { path: '/inbox', href: '/inbox' },
  audit: { path: '/audit', href: '/audit' },
  adminUsers: { path: '/admin/users', href: '/admin/users' },
  mailbox: { path: '/mailbox', href: '/mailbox' },
  account: { path: '/account', href: '/account' },
  design: { path: '/design', href: '/design' },
} as const;

/** Key of one entry in `paths`. */
export type PathKey = keyof typeof paths;

/** Groups the navigation is divided into, in display order. */
export const navGroups = ['Start', 'Triage', 'Network', 'Supervision', 'Administration', 'You', 'Reference'] as const;

/** One navigation group name. */
export type NavGroup = (typeof navGroups)[number];

/**
 * Who may see a navigation entry:
 * - `'signed-in'`: any signed-in user;
 * - `{ action }`: whoever the one policy module (shared/auth/policies.ts) lets do that action on
 *   some station — the same predicate the server enforces, so nav and policy cannot drift;
 * - `{ role }`: holders of that role (only for screens no API action guards).
 */
export type NavAccess = 'signed-in' | { action: Action } | { role: Role };

/** Server-side features a nav entry may depend on (GET /api/auth/session → `mailbox`). */
export type NavFeatures = {
  /** Whether the local fake mailbox is in use (no SMTP_URL set). */
  mailbox: boolean;
};

/** One navigation entry. */
export type NavItem = {
  key: PathKey;
  label: string;
  href: string;
  group: NavGroup;
  /** Who may use the section. */
  access: NavAccess;
  /** Shown only while this server feature is on. */
  feature?: keyof NavFeatures;
  /** Also shown in development builds (import.meta.env.DEV) regardless of role. */
  inDevelopment?: boolean;
  /** A page for people building Seisift: listed in builds that carry it (config/build-flags.ts), never in production. */
  devOnly?: boolean;
  /** One line for the home page. */
  summary: string;
};

/**
 * The navigation, in display order. Visibility comes from the policy actions each screen needs
 * (issue 3 roles): Queue needs queue.claim (working the queue), Stations station.view (operators,
 * and analysts, supervisors, admins for every station), Upload upload.create (operators only).
 */
export const navItems: readonly NavItem[] = [
  { key: 'home', label: 'Home', href: paths.home.href, group: 'Start', access: 'signed-in', inDevelopment: true, summary: 'What you can do here.' },
  { key: 'queue', label: 'Queue', href: paths.queue.href, group: 'Triage', access: { action: 'queue.claim' }, summary: 'Windows waiting for review, oldest and highest score first.' },
  { key: 'stations', label: 'Stations', href: paths.stations.href, group: 'Network', access: { action: 'station.view' }, summary: 'Station registry, ingest tokens and health.' },
  { key: 'upload', label: 'Upload', href: paths.upload.href, group: 'Network', access: { action: 'upload.create' }, summary: 'Send MiniSEED or CSV windows by hand.' },
  { key: 'review', label: 'Review & catalogue', href: paths.review.href, group: 'Supervision', access: { action: 'review.evaluate' }, summary: 'Labelled events to confirm or return; catalogue export.' },
  { key: 'thresholds', label: 'Thresholds', href: paths.thresholds.href, group: 'Supervision', access: { action: 'thresholds.edit' }, summary: 'Flagging thresholds per station against labelled history.' },
  { key: 'dashboard', label: 'Dashboard', href: paths.dashboard.href, group: 'Supervision', access: { action: 'dashboard.view' }, summary: 'Items per day, flag mix, time to triage.' },
  { key: 'inbox', label: 'Inbox', href: paths.inbox.href, group: 'Supervision', access: { action: 'inbox.view' }, summary: 'Escalations sent to supervisors.' },
  { key: 'audit', label: 'Audit log', href: paths.audit.href, group: 'Supervision', access: { action: 'audit.view' }, summary: 'Who did what, when and from where.' },
  { key: 'adminUsers', label: 'Users', href: paths.adminUsers.href, group: 'Administration', access: { action: 'users.manage' }, summary: 'People, roles, station assignments, invitations.' },
  { key: 'mailbox', label: 'Mailbox', href: paths.mailbox.href, group: 'Administration', access: { action: 'mailbox.view' }, feature: 'mailbox', summary: 'Mail sent by the local test mail server.' },
  { key: 'account', label: 'Account', href: paths.account.href, group: 'You', access: 'signed-in', summary: 'Your password and sessions.' },
  { key: 'design', label: 'Design reference', href: paths.design.href, group: 'Reference', access: 'signed-in', devOnly: true, summary: 'Every component in both themes (development builds only).' },
];

/**
 * The entries a person may use. Hiding is a convenience only; the server checks every request.
 * @param roles the user's roles (empty when nobody is signed in: then nothing is listed)
 * @param isDevelopment whether this build carries the development pages (shows `inDevelopment`
 *   entries to anyone, and is the only way a `devOnly` entry is listed)
 * @param signedIn whether a user is signed in (every other entry needs one)
 * @param features server features in use; left out (previews of the navigation), every feature counts as on
 */
export function navFor(roles: readonly Role[], isDevelopment: boolean, signedIn: boolean, features: NavFeatures = { mailbox: true }): NavItem[] {
  // Nav asks "may this person use the screen at all", so no station target: assigned stations do not matter.
  const actor = signedIn ? { roles, stationIds: [] } : null;
  return navItems.filter((item) => {
    if (item.devOnly) return isDevelopment;
    if (item.inDevelopment && isDevelopment) return true;
    if (!actor) return false;
    if (item.feature && !features[item.feature]) return false;
    if (item.access === 'signed-in') return true;
    if ('role' in item.access) return roles.includes(item.access.role);
    return can(actor, item.access.action);
  });
}
