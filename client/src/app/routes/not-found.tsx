import { Link, useLocation } from 'react-router';
import { EmptyState } from '@client/components/ui/empty-state';
import { buttonClass } from '@client/components/ui/button';

/** Shown for a URL the router does not know: names the URL and offers the way home. */
export function NotFoundRoute() {
  const location = useLocation();
  return (
    <EmptyState
      title="No page here"
      action={
        <Link to="/" className={buttonClass('secondary', 'md')}>
          Go to the start page
        </Link>
      }
    >
      <p>
        Seisift has no page at <code className="text-ink">{location.pathname}</code>. The link may be old, or the section is not in this build.
      </p>
    </EmptyState>
  );
}
