import type { QueryClient } from '@tanstack/react-query';
import { meOptions, queueListOptions } from '@client/api/queue/get-queue';
import { parseFilters } from '@client/api/queue/queue-filters';
import { EVENT_TRACE_POINTS, eventOptions, eventTracesOptions } from '@client/features/events/api/event-api';
import { meQueryOptions } from '@client/features/auth/api/session';
import { wholeWindowTracesOptions } from '@client/features/queue/hooks/use-prefetch-item';
import { itemOptions } from '@client/features/review/api/get-item';
import { itemMatchesOptions } from '@client/features/review/api/get-matches';

/**
 * Starts, when the app opens, the requests of the screen it opens on (the queue's list, an item's
 * review, an event with its traces) as soon as the session is known to be signed in, instead of
 * after the screen's code has loaded and rendered: the answers are then in the query cache (the
 * very keys the screens read) when the screen first asks. Nothing is asked for a visitor who is not
 * signed in. A path of no such screen starts nothing.
 * @param location the address the app opened at (window.location)
 */
export function preloadRouteData(qc: QueryClient, location: { pathname: string; search: string }): void {
  const { pathname, search } = location;
  const item = /^\/queue\/items\/(\d{1,15})$/.exec(pathname);
  const event = /^\/events\/(\d{1,15})$/.exec(pathname);
  if (pathname !== '/queue' && !item && !event) return;
  void qc
    .fetchQuery(meQueryOptions())
    .then((me) => {
      if (!me) return;
      if (pathname === '/queue') {
        void qc.prefetchQuery(meOptions());
        void qc.prefetchInfiniteQuery(queueListOptions(parseFilters(new URLSearchParams(search))));
      } else if (item) {
        const id = Number(item[1]);
        void qc.prefetchQuery(meOptions());
        void qc.prefetchQuery(itemOptions(id));
        void qc.prefetchQuery(wholeWindowTracesOptions(id));
        void qc.prefetchQuery(itemMatchesOptions(id));
      } else if (event) {
        const id = Number(event[1]);
        void qc.prefetchQuery(eventOptions(id));
        void qc.prefetchQuery(eventTracesOptions(id, EVENT_TRACE_POINTS));
      }
    })
    .catch(() => {});
}
