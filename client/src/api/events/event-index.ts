import { useQuery } from '@tanstack/react-query';
import { eventListSchema } from '@shared/schemas/events';
import { apiRequest } from '@client/lib/api-client';
import { queryKeys } from '@client/lib/query-keys';

/** Which event holds what: event id by candidate-event group id, and by member window (queue item) id. */
export type EventIndex = { byGroup: Map<number, number>; byItem: Map<number, number> };

/**
 * The event index (GET /api/events), so a queue group row, the review screen's group panel and a
 * window an analyst put into an event can open their event. Refetched when the live channel marks
 * events stale (every key under `queryKeys.events.all`).
 */
export function useEventIndex(enabled: boolean) {
  return useQuery({
    queryKey: queryKeys.events.index,
    queryFn: async ({ signal }) => {
      const list = await apiRequest(eventListSchema, '/api/events', { query: { limit: 1000 }, signal });
      const index: EventIndex = { byGroup: new Map(), byItem: new Map() };
      for (const e of list.events) {
        if (e.candidateEventId !== null) index.byGroup.set(e.candidateEventId, e.id);
        for (const itemId of e.memberItemIds) index.byItem.set(itemId, e.id);
      }
      return index;
    },
    enabled,
    staleTime: 30_000,
  });
}
