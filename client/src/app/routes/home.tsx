import { Link } from 'react-router';
import { authPagePaths } from '@shared/auth/links';
import { roleLabels } from '@shared/auth/roles';
import { devPagesIncluded } from '@client/config/build-flags';
import { navFor } from '@client/config/paths';
import { useSession } from '@client/lib/session-context';
import { buttonClass } from '@client/components/ui/button';
import { EmptyState } from '@client/components/ui/empty-state';

/** Props of <HomeRoute>: which paths the router serves, to tell built sections from coming ones. */
export type HomeRouteProps = { isRouted: (href: string) => boolean };

/**
 * The start page: who you are signed in as and the sections your roles give you. Sections whose
 * screens are not in this build yet are listed as such rather than linked.
 */
export function HomeRoute({ isRouted }: HomeRouteProps) {
  const { user, features } = useSession();
  const sections = navFor(user?.roles ?? [], devPagesIncluded, user !== null, features).filter((item) => item.key !== 'home');
  return (
    <div className="flex max-w-4xl flex-col gap-4">
      <header>
        <h1 className="text-xl font-semibold">Welcome to Seisift</h1>
        <p className="text-base text-ink-muted">
          Triage of seismic waveform windows: each upload is filtered, scored against its station’s own noise, and put in front of a person.
        </p>
      </header>
      {user ? (
        <p className="text-base">
          Signed in as <strong className="font-semibold">{user.displayName}</strong> ({user.roles.map((r) => roleLabels[r]).join(', ')}).
        </p>
      ) : (
        <EmptyState
          title="Not signed in"
          action={
            <Link to={authPagePaths.signIn} className={buttonClass('primary')}>
              Sign in
            </Link>
          }
        >
          Sign in to see the sections your roles give you.
          {devPagesIncluded ? ' This build also has the design reference, listed below.' : ''}
        </EmptyState>
      )}
      {sections.length > 0 ? (
        <section aria-labelledby="home-sections">
          <h2 id="home-sections" className="pb-2 text-md font-semibold">
            Your sections
          </h2>
          <ul className="grid grid-cols-[repeat(auto-fill,minmax(16rem,1fr))] gap-2">
            {sections.map((item) => {
              const ready = isRouted(item.href);
              return (
                <li key={item.key} className="rounded-sm border border-line bg-surface px-3 py-2">
                  {ready ? (
                    <Link to={item.href} className="font-semibold">
                      {item.label}
                    </Link>
                  ) : (
                    <span className="font-semibold text-ink">
                      {item.label} <span className="font-normal text-ink-muted">— not in this build yet</span>
                    </span>
                  )}
                  <p className="text-sm text-ink-muted">{item.summary}</p>
                </li>
              );
            })}
          </ul>
        </section>
      ) : null}
    </div>
  );
}
