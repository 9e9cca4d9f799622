import type { ReactNode } from 'react';
import { Link, NavLink } from 'react-router';
import { roleLabels } from '@shared/auth/roles';
import { devPagesIncluded } from '@client/config/build-flags';
import { navFor, navGroups, type NavItem } from '@client/config/paths';
import { cx } from '@client/lib/cx';
import { useSession, type SessionUser } from '@client/lib/session-context';
import { Badge } from '@client/components/ui/badge';
import { Button } from '@client/components/ui/button';
import { ConnectionIndicator, type ConnectionState } from '@client/components/ui/connection-indicator';
import { SeisiftMark } from '@client/components/ui/seisift-mark';
import { ThemeSwitch } from '@client/components/ui/theme-switch';

/** Props of <TopBar>. */
export type TopBarProps = {
  user: SessionUser | null;
  /** The websocket state; leave undefined where no live connection exists yet (nothing is shown). */
  connection?: ConnectionState;
  /**
   * Ends the session (POST /api/auth/sign-out, wired by the app layer); shown as a "Sign out"
   * button next to the user while someone is signed in. Left out, no button.
   */
  onSignOut?: () => void;
  /** Whether a sign-out is on its way (the button is disabled meanwhile). */
  signingOut?: boolean;
};

/**
 * The top bar: mark and name, connection state, theme switch, the signed-in user and their roles,
 * and a sign-out button (a real <button>, so it is reached with Tab and pressed with Enter/Space).
 */
export function TopBar({ user, connection, onSignOut, signingOut = false }: TopBarProps) {
  return (
    <div className="flex h-11 items-center gap-4 border-b border-line bg-surface px-3">
      <Link to="/" className="flex items-center gap-2 rounded-xs text-ink no-underline">
        <SeisiftMark />
        <span className="text-md font-semibold tracking-wide">Seisift</span>
      </Link>
      <div className="ml-auto flex items-center gap-4">
        {connection ? <ConnectionIndicator state={connection} /> : null}
        <ThemeSwitch />
        <UserBadge user={user} />
        {user && onSignOut ? (
          <Button size="sm" variant="quiet" onClick={onSignOut} disabled={signingOut} aria-busy={signingOut || undefined}>
            {signingOut ? 'Signing out…' : 'Sign out'}
          </Button>
        ) : null}
      </div>
    </div>
  );
}

function UserBadge({ user }: { user: SessionUser | null }) {
  if (!user) return <span className="text-sm text-ink-muted">Not signed in</span>;
  return (
    <div className="flex items-center gap-2 border-l border-line pl-4">
      <div className="text-right leading-tight">
        <p className="text-sm font-medium text-ink">{user.displayName}</p>
        <p className="font-mono text-xs text-ink-muted">{user.email}</p>
      </div>
      <ul aria-label="Your roles" className="flex gap-1">
        {user.roles.map((role) => (
          <li key={role}>
            <Badge tone="accent" className="lowercase">
              <span title={roleLabels[role]}>{role}</span>
            </Badge>
          </li>
        ))}
      </ul>
    </div>
  );
}

/** Props of <SideNav>. */
export type SideNavProps = { items: NavItem[]; className?: string };

/**
 * The navigation: entries grouped under small headings, the current one marked by a bar, bold
 * text and aria-current (not colour alone).
 */
export function SideNav({ items, className }: SideNavProps) {
  return (
    <div className={cx('flex flex-col gap-3 px-2 py-3', className)}>
      {navGroups.map((group) => {
        const entries = items.filter((item) => item.group === group);
        if (entries.length === 0) return null;
        return (
          <div key={group}>
            <p className="px-2 pb-1 text-xs font-medium tracking-wider text-ink-muted uppercase">{group}</p>
            <ul className="flex flex-col">
              {entries.map((item) => (
                <li key={item.key}>
                  <NavLink
                    to={item.href}
                    end
                    className={({ isActive }) =>
                      cx(
                        'flex h-7 items-center rounded-xs border-l-[3px] px-2 text-base no-underline',
                        isActive ? 'border-accent bg-accent-wash font-semibold text-accent-ink' : 'border-transparent text-ink hover:bg-raised',
                      )
                    }
                  >
                    {item.label}
                  </NavLink>
                </li>
              ))}
            </ul>
          </div>
        );
      })}
    </div>
  );
}

/** Props of <AppShell>. */
export type AppShellProps = {
  children: ReactNode;
  /** The websocket state, once a live connection exists (analyst issue). */
  connection?: ConnectionState;
  /** Whether the router has a screen at `href`; sections without one are left out of the nav. */
  isRouted: (href: string) => boolean;
  /** Signs the person out (see TopBarProps.onSignOut). */
  onSignOut?: () => void;
  /** Whether a sign-out is on its way. */
  signingOut?: boolean;
};

/**
 * The frame of every signed-in screen: top bar, role-aware navigation (from the session context)
 * and a content area that takes the full width. Landmarks: banner, navigation, main.
 */
export function AppShell({ children, connection, isRouted, onSignOut, signingOut }: AppShellProps) {
  const { user, features } = useSession();
  const items = navFor(user?.roles ?? [], devPagesIncluded, user !== null, features).filter((item) => isRouted(item.href));
  return (
    <div className="grid h-dvh grid-rows-[auto_minmax(0,1fr)] bg-canvas text-ink">
      <a
        href="#main"
        className="sr-only rounded-sm bg-accent px-3 py-1.5 font-medium text-on-accent focus:not-sr-only focus:fixed focus:top-2 focus:left-2 focus:z-50"
      >
        Skip to content
      </a>
      <header>
        <TopBar user={user} connection={connection} onSignOut={onSignOut} signingOut={signingOut} />
      </header>
      <div className="grid min-h-0 grid-cols-[12.5rem_minmax(0,1fr)]">
        <nav aria-label="Sections" className="min-h-0 overflow-y-auto border-r border-line bg-surface">
          <SideNav items={items} />
        </nav>
        <main id="main" tabIndex={-1} className="min-h-0 min-w-0 overflow-auto px-5 py-4 focus:outline-none">
          {children}
        </main>
      </div>
    </div>
  );
}
