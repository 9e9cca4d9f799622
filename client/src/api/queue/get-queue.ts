import { infiniteQueryOptions, queryOptions, useInfiniteQuery, useQuery, type InfiniteData } from '@tanstack/react-query';
import { z } from 'zod';
import { queuePageSchema, type QueuePage, type QueueQuery } from '@shared/schemas/queue';
import { apiRequest } from '@client/lib/api-client';
import { queryKeys } from '@client/lib/query-keys';

/** The list filters a screen holds (everything of GET /api/queue but the cursor and page size). */
export type QueueFilters = Omit<Partial<QueueQuery>, 'cursor' | 'limit'> & { sort: QueueQuery['sort'] };

/** Page size of the queue screen's list. */
export const QUEUE_PAGE_SIZE = 500;

/** The query string of GET /api/queue for `f` (lists comma-separated; empty values left out). */
export function queueSearch(f: QueueFilters, extra: { cursor?: string; limit?: number } = {}): string {
  const p = new URLSearchParams();
  const list = (k: string, v: readonly string[] | undefined) => {
    if (v && v.length > 0) p.set(k, v.join(','));
  };
  list('state', f.state);
  list('station', f.station);
  list('flag', f.flag);
  list('label', f.label);
  if (f.scoreMin !== undefined) p.set('scoreMin', String(f.scoreMin));
  if (f.scoreMax !== undefined) p.set('scoreMax', String(f.scoreMax));
  if (f.from) p.set('from', f.from);
  if (f.to) p.set('to', f.to);
  p.set('sort', f.sort);
  if (extra.cursor) p.set('cursor', extra.cursor);
  if (extra.limit) p.set('limit', String(extra.limit));
  return p.toString();
}

/** Fetches one page of the queue. */
export function getQueuePage(f: QueueFilters, cursor: string | undefined, limit = QUEUE_PAGE_SIZE, signal?: AbortSignal): Promise<QueuePage> {
  return apiRequest(queuePageSchema, `/api/queue?${queueSearch(f, { cursor, limit })}`, { signal });
}

/** Query options of the queue list: pages of QUEUE_PAGE_SIZE, fetched on as the analyst scrolls. */
export function queueListOptions(f: QueueFilters) {
  return infiniteQueryOptions({
    queryKey: queryKeys.queue.list(f),
    queryFn: ({ pageParam, signal }) => getQueuePage(f, pageParam, QUEUE_PAGE_SIZE, signal),
    initialPageParam: undefined as string | undefined,
    getNextPageParam: (last: QueuePage) => last.nextCursor ?? undefined,
    // Live changes patch the cache; a stale list is refetched only when asked.
    staleTime: Infinity,
  });
}

/** The queue list (infinite pages). */
export function useQueueList(f: QueueFilters) {
  return useInfiniteQuery(queueListOptions(f));
}

/** Cached data of the queue list. */
export type QueueListData = InfiniteData<QueuePage, string | undefined>;

const meSchema = z.object({ user: z.object({ id: z.string(), displayName: z.string(), roles: z.array(z.string()) }) });

/** Who is signed in (GET /api/auth/me): the queue needs the id to know whose claim an item is. */
export function meOptions() {
  return queryOptions({ queryKey: queryKeys.queueMe, queryFn: ({ signal }) => apiRequest(meSchema, '/api/auth/me', { signal, allowUnauthenticated: true }), staleTime: 5 * 60_000, retry: false });
}

/** The signed-in user (id, name, roles), or undefined while loading / signed out. */
export function useMe() {
  return useQuery(meOptions()).data?.user;
}
