import type { QueryClient } from '@tanstack/react-query';
import { can } from '@shared/auth/policies';
import { eventIndexOptions } from '@client/api/events/event-index';
import { meOptions, queueListOptions } from '@client/api/queue/get-queue';
import { parseFilters } from '@client/api/queue/queue-filters';
import { screenAt } from './early-requests';
import { EVENT_TRACE_POINTS } from '@client/api/urls';
import { eventGeometryOptions, eventOptions, eventTracesOptions } from '@client/features/events/api/event-api';
import { meQueryOptions } from '@client/features/auth/api/session';
import { wholeWindowTracesOptions } from '@client/features/queue/hooks/use-prefetch-item';
import { itemOptions } from '@client/features/review/api/get-item';
import { itemMatchesOptions } from '@client/features/review/api/get-matches';

/**
 * Fills the query cache, when the app opens, with what the screen it opens on asks for first (the
 * queue's list, an item's review, an event with its traces) as soon as the session is known to be
 * signed in, instead of after the screen's code has loaded and rendered: the answers are then in the
 * cache under the very keys the screens read. Most of them were asked for before the app's code
 * ran (early-requests.ts); these requests take those answers. Nothing is asked for a visitor who is
 * not signed in, nor for a path of no such screen.
 * @param location the address the app opened at (window.location)
 * @returns settles once every one of those answers is in (or failed): main.tsx draws the first
 *   screen with them in one go instead of once per answer
 */
export async function preloadRouteData(qc: QueryClient, location: { pathname: string; search: string }): Promise<void> {
  const at = screenAt(location.pathname);
  if (!at) return;
  const me = await qc.fetchQuery(meQueryOptions()).catch(() => null);
  if (!me) return;
  // The queue's and the review's event index, only for those who may see events (an operator's queue has no event rows).
  const eventIndex = () => (can(me.user, 'event.view') ? [qc.prefetchQuery(eventIndexOptions())] : []);
  const filters = () => parseFilters(new URLSearchParams(location.search));
  let asked: Promise<unknown>[];
  if (at.screen === 'queue') {
    asked = [qc.prefetchQuery(meOptions()), qc.prefetchInfiniteQuery(queueListOptions(filters())), ...eventIndex()];
  } else if (at.screen === 'item') {
    const { id } = at;
    asked = [
      qc.prefetchQuery(meOptions()),
      qc.prefetchQuery(itemOptions(id)),
      qc.prefetchQuery(wholeWindowTracesOptions(id)),
      qc.prefetchQuery(itemMatchesOptions(id)),
      qc.prefetchInfiniteQuery(queueListOptions(filters())),
      ...eventIndex(),
    ];
  } else {
    const { id } = at;
    // The geometry (distances, predictions) orders the record section's rows: asked as seen from the event's origin.
    const geometry = qc.fetchQuery(eventOptions(id)).then((e) => qc.prefetchQuery(eventGeometryOptions(id, e.origin?.id ?? null)));
    asked = [geometry, qc.prefetchQuery(eventTracesOptions(id, EVENT_TRACE_POINTS))];
  }
  await Promise.allSettled(asked);
}
