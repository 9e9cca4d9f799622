import { createBrowserRouter, matchRoutes, Navigate, Outlet, useLocation, useNavigate, type RouteObject } from 'react-router';
import { AppShell } from '@client/components/layouts/app-shell';
import { Loading } from '@client/components/ui/skeleton';
import { authPagePaths } from '@shared/auth/links';
import { paths } from '@client/config/paths';
import { useSession } from '@client/lib/session-context';
import { devPagesIncluded } from '@client/config/build-flags';
import { useSignOut } from '@client/features/auth/api/session';
import { holdWhileOpening } from '@client/lib/screen-opening';
import { screenAt } from './early-requests';
import { LiveUpdatesProvider, useLiveConnection } from './live-updates';
import { HomeRoute } from './routes/home';
import { NotFoundRoute } from './routes/not-found';
import { RouteError } from './routes/route-error';

/**
 * Whether the router has a screen of its own at `href` (the catch-all does not count). The shell
 * and the home page use it to list only sections that exist in this build.
 * @param href a client path such as "/queue"
 */
export function isRouted(href: string): boolean {
  const matches = matchRoutes(routes, href);
  const leaf = matches?.[matches.length - 1];
  return leaf !== undefined && leaf.route.path !== '*';
}

/**
 * The signed-in frame. A visitor who is not signed in goes to the sign-in page (which brings them
 * back afterwards) instead of an empty shell whose live channel can only fail; the one exception
 * is the design reference of a development build. The live channel opens only for a signed-in user.
 */
function RootLayout() {
  const { user } = useSession();
  const location = useLocation();
  if (!user) {
    if (devPagesIncluded && location.pathname === paths.design.path) return <LiveShell />;
    const here = `${location.pathname}${location.search}`;
    return <Navigate to={here === paths.home.href ? authPagePaths.signIn : `${authPagePaths.signIn}?next=${encodeURIComponent(here)}`} replace />;
  }
  return (
    <LiveUpdatesProvider>
      <LiveShell />
    </LiveUpdatesProvider>
  );
}

function LiveShell() {
  const connection = useLiveConnection();
  const signOut = useSignOut();
  const navigate = useNavigate();
  // The session ends on the server (POST /api/auth/sign-out), cached answers are dropped, then the
  // sign-in page; a failed request still leaves the person signed out here.
  const onSignOut = () => void signOut.mutateAsync().catch(() => {}).finally(() => navigate(authPagePaths.signIn, { replace: true }));
  return (
    <AppShell isRouted={isRouted} connection={connection} onSignOut={onSignOut} signingOut={signOut.isPending}>
      <Outlet />
    </AppShell>
  );
}

/**
 * The route table. Screens are lazy so their code (and uPlot) loads only when visited. Add a
 * screen: a file in routes/, a `paths` entry, a route here; the nav picks it up by itself.
 */
export const routes: RouteObject[] = [
  // Pages used before signing in: their own frame, no navigation, no live connection.
  ...(
    [
      [authPagePaths.signIn, 'SignInPage'],
      [authPagePaths.forgotPassword, 'ForgotPasswordPage'],
      [authPagePaths.resetPassword, 'ResetPasswordPage'],
      [authPagePaths.welcome, 'WelcomePage'],
    ] as const
  ).map(([path, name]): RouteObject => ({
    path,
    errorElement: <RouteError />,
    hydrateFallbackElement: <Loading label="Loading Seisift…" className="m-6" />,
    lazy: async () => {
      const pages = await import('@client/features/auth/components/auth-pages');
      return { Component: pages[name] };
    },
  })),
  {
    path: paths.home.path,
    element: <RootLayout />,
    errorElement: <RouteError />,
    // Shown while a lazy screen's code loads on the first visit.
    hydrateFallbackElement: <Loading label="Loading Seisift…" className="m-6" />,
    children: [
      { index: true, element: <HomeRoute isRouted={isRouted} /> },
      // The design reference exists only in builds that carry the development pages (not production).
      // The condition is written out here, not read from build-flags.ts, so the bundler can see it is
      // false in a production build and leave the page's code out altogether.
      ...(import.meta.env.DEV || import.meta.env.VITE_SEISIFT_DEV_PAGES === '1'
        ? [
            {
              path: paths.design.path.slice(1),
              lazy: async () => {
                const { DesignRoute } = await import('./routes/design');
                return { Component: DesignRoute };
              },
            },
          ]
        : []),
      {
        path: paths.queue.path.slice(1),
        lazy: async () => {
          const { QueueRoute } = await import('./routes/queue');
          return { Component: QueueRoute };
        },
      },
      {
        path: paths.queueItem.path.slice(1),
        lazy: async () => {
          const { QueueItemRoute } = await import('./routes/queue-item');
          return { Component: QueueItemRoute };
        },
      },
      {
        path: paths.event.path.slice(1),
        lazy: async () => {
          const { EventRoute } = await import('./routes/event');
          return { Component: EventRoute };
        },
      },
      {
        path: paths.stations.path.slice(1),
        lazy: async () => {
          const { StationsRoute } = await import('./routes/stations');
          return { Component: StationsRoute };
        },
      },
      {
        path: paths.station.path.slice(1),
        lazy: async () => {
          const { StationRoute } = await import('./routes/station');
          return { Component: StationRoute };
        },
      },
      {
        path: paths.upload.path.slice(1),
        lazy: async () => {
          const { UploadRoute } = await import('./routes/upload');
          return { Component: UploadRoute };
        },
      },
      {
        path: paths.inbox.path.slice(1),
        lazy: async () => {
          const { InboxRoute } = await import('./routes/supervisor');
          return { Component: InboxRoute };
        },
      },
      {
        path: paths.review.path.slice(1),
        lazy: async () => {
          const { ReviewRoute } = await import('./routes/supervisor');
          return { Component: ReviewRoute };
        },
      },
      {
        path: paths.thresholds.path.slice(1),
        lazy: async () => {
          const { ThresholdsRoute } = await import('./routes/supervisor');
          return { Component: ThresholdsRoute };
        },
      },
      {
        path: paths.dashboard.path.slice(1),
        lazy: async () => {
          const { DashboardRoute } = await import('./routes/supervisor');
          return { Component: DashboardRoute };
        },
      },
      {
        path: paths.account.path.slice(1),
        lazy: async () => {
          const { AccountRoute } = await import('./routes/account');
          return { Component: AccountRoute };
        },
      },
      {
        path: paths.adminUsers.path.slice(1),
        lazy: async () => {
          const { AdminUsersRoute } = await import('./routes/admin-users');
          return { Component: AdminUsersRoute };
        },
      },
      {
        path: paths.mailbox.path.slice(1),
        lazy: async () => {
          const { MailboxRoute } = await import('./routes/mailbox');
          return { Component: MailboxRoute };
        },
      },
      {
        path: paths.audit.path.slice(1),
        lazy: async () => {
          const { AuditRoute } = await import('./routes/audit');
          return { Component: AuditRoute };
        },
      },
      { path: '*', element: <NotFoundRoute /> },
    ],
  },
];

/**
 * Builds the browser router (called once, in main.tsx). Whenever it moves to a review (from the
 * queue, J or K, a link, the back button), the live changes and the claim's answer wait until that
 * review has drawn (lib/screen-opening.ts).
 */
export function createAppRouter() {
  const router = createBrowserRouter(routes);
  // From the moment the navigation starts (a screen's code may still be loading), not when it lands.
  let heading = router.state.location.pathname;
  router.subscribe((state) => {
    const path = (state.navigation.location ?? state.location).pathname;
    if (path === heading) return;
    heading = path;
    if (screenAt(path)?.screen === 'item') holdWhileOpening();
  });
  return router;
}
