import type { Role } from '../../../shared/auth/roles';

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

/** One navigation entry. */
export type NavItem = {
  key: PathKey;
  label: string;
  href: string;
  group: NavGroup;
  /** Roles that may use the section; 'all' means any signed-in user. */
  roles: readonly Role[] | 'all';
  /** Also shown in development builds (import.meta.env.DEV) regardless of role. */
  inDevelopment?: boolean;
  /** One line for the home page. */
  summary: string;
};

/** The navigation, in display order. Who sees what follows issue 10 / the roles of issue 3. */
export const navItems: readonly NavItem[] = [
  { key: 'home', label: 'Home', href: paths.home.href, group: 'Start', roles: 'all', inDevelopment: true, summary: 'What you can do here.' },
  { key: 'queue', label: 'Queue', href: paths.queue.href, group: 'Triage', roles: ['analyst', 'supervisor'], summary: 'Windows waiting for review, oldest and highest score first.' },
  { key: 'stations', label: 'Stations', href: paths.stations.href, group: 'Network', roles: ['operator', 'supervisor', 'admin'], summary: 'Station registry, ingest tokens and health.' },
  { key: 'upload', label: 'Upload', href: paths.upload.href, group: 'Network', roles: ['operator', 'supervisor', 'admin'], summary: 'Send MiniSEED or CSV windows by hand.' },
  { key: 'review', label: 'Review & catalogue', href: paths.review.href, group: 'Supervision', roles: ['supervisor'], summary: 'Labelled events to confirm or return; catalogue export.' },
  { key: 'thresholds', label: 'Thresholds', href: paths.thresholds.href, group: 'Supervision', roles: ['supervisor'], summary: 'Flagging thresholds per station against labelled history.' },
  { key: 'dashboard', label: 'Dashboard', href: paths.dashboard.href, group: 'Supervision', roles: ['supervisor'], summary: 'Items per day, flag mix, time to triage.' },
  { key: 'inbox', label: 'Inbox', href: paths.inbox.href, group: 'Supervision', roles: ['supervisor'], summary: 'Escalations sent to supervisors.' },
  { key: 'audit', label: 'Audit log', href: paths.audit.href, group: 'Supervision', roles: ['supervisor', 'admin'], summary: 'Who did what, when and from where.' },
  { key: 'adminUsers', label: 'Users', href: paths.adminUsers.href, group: 'Administration', roles: ['admin'], summary: 'People, roles, station assignments, invitations.' },
  { key: 'mailbox', label: 'Mailbox', href: paths.mailbox.href, group: 'Administration', roles: ['admin'], summary: 'Mail sent by the local test mail server.' },
  { key: 'account', label: 'Account', href: paths.account.href, group: 'You', roles: 'all', summary: 'Your password and sessions.' },
  { key: 'design', label: 'Design reference', href: paths.design.href, group: 'Reference', roles: ['admin'], inDevelopment: true, summary: 'Every component in both themes.' },
];

/**
 * The entries a person may use. Hiding is a convenience only; the server checks every request.
 * @param roles the user's roles (empty when nobody is signed in: then nothing is listed)
 * @param isDevelopment whether this is a development build (shows `inDevelopment` entries)
 * @param signedIn whether a user is signed in ('all' entries need one)
 */
export function navFor(roles: readonly Role[], isDevelopment: boolean, signedIn: boolean): NavItem[] {
  return navItems.filter((item) => {
    if (item.inDevelopment && isDevelopment) return true;
    if (!signedIn) return false;
    if (item.roles === 'all') return true;
    return item.roles.some((role) => roles.includes(role));
  });
}
