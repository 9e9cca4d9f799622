import { useQueryClient } from '@tanstack/react-query';
import { useEffect } from 'react';
import { itemOptions, tracesOptions } from '@client/features/review/api/get-item';
import { itemMatchesOptions } from '@client/features/review/api/get-matches';
import { REVIEW_TRACE_POINTS } from '@client/api/urls';

/**
 * Query options of an item's whole-window display traces, as the review screen first asks for them
 * (`useTraces(id, null, null, REVIEW_TRACE_POINTS)`, engine view): built by the same `tracesOptions`,
 * so a prefetch fills the very cache entry the screen reads.
 */
export function wholeWindowTracesOptions(id: number) {
  return tracesOptions(id, null, null, REVIEW_TRACE_POINTS);
}

/**
 * Fetches, in the background, what the review screen of item `id` needs first (its detail, its
 * whole-window traces, its matches), so that J draws the next item from the cache instead of
 * waiting on three requests and the server's trace computation. Does nothing for undefined, or for
 * what is already cached and fresh (prefetchQuery's own rule). Called by the review screen with the
 * next item's id (`usePrefetchQueueItem(neighbour(1)?.id)`) and by the queue with the selected row's,
 * after it has stayed selected for `afterMs` (so J/K through the list does not fetch every row).
 * @param afterMs wait before fetching, ms (default 150: after the current screen's own requests)
 */
export function usePrefetchQueueItem(id: number | undefined, afterMs = 150): void {
  const qc = useQueryClient();
  useEffect(() => {
    if (id === undefined) return;
    const t = window.setTimeout(() => {
      void qc.prefetchQuery(itemOptions(id));
      void qc.prefetchQuery(wholeWindowTracesOptions(id));
      void qc.prefetchQuery(itemMatchesOptions(id));
    }, afterMs);
    return () => window.clearTimeout(t);
  }, [qc, id, afterMs]);
}
