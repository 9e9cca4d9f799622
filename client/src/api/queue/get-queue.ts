import { infiniteQueryOptions, queryOptions, useInfiniteQuery, useQuery, type InfiniteData } from '@tanstack/react-query';
import { z } from 'zod';
import { lazySchema } from '@shared/schemas/lazy-schema';
import { queuePageSchema, type QueuePage } from '@shared/schemas/queue';
import { apiUrls, QUEUE_PAGE_SIZE, type QueueFilters } from '@client/api/urls';
import { apiRequest } from '@client/lib/api-client';
import { queryKeys } from '@client/lib/query-keys';


/** Fetches one page of the queue. */
export function getQueuePage(f: QueueFilters, cursor: string | undefined, limit = QUEUE_PAGE_SIZE, signal?: AbortSignal): Promise<QueuePage> {
  return apiRequest(queuePageSchema, apiUrls.queuePage(f, cursor, limit), { signal });
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

const meSchema = lazySchema(() => z.object({ user: z.object({ id: z.string(), displayName: z.string(), roles: z.array(z.string()) }) }));

/** Who is signed in (GET /api/auth/me): the queue needs the id to know whose claim an item is. */
export function meOptions() {
  return queryOptions({ queryKey: queryKeys.queueMe, queryFn: ({ signal }) => apiRequest(meSchema, apiUrls.me, { signal, allowUnauthenticated: true }), staleTime: 5 * 60_000, retry: false });
}

/** The signed-in user (id, name, roles), or undefined while loading / signed out. */
export function useMe() {
  return useQuery(meOptions()).data?.user;
}
