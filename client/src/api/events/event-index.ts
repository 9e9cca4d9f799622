import { queryOptions, useQuery } from '@tanstack/react-query';
import { eventListSchema } from '@shared/schemas/events';
import { apiUrls } from '@client/api/urls';
import { apiRequest } from '@client/lib/api-client';
import { queryKeys } from '@client/lib/query-keys';

/** Which event holds what: event id by candidate-event group id, and by member window (queue item) id. */
export type EventIndex = { byGroup: Map<number, number>; byItem: Map<number, number> };

/**
 * Query options of the event index (GET /api/events), so a queue group row, the review screen's
 * group panel and a window an analyst put into an event can open their event. Refetched when the
 * live channel marks events stale (every key under `queryKeys.events.all`).
 */
export function eventIndexOptions() {
  return queryOptions({
    queryKey: queryKeys.events.index,
    queryFn: async ({ signal }): Promise<EventIndex> => {
      const list = await apiRequest(eventListSchema, apiUrls.eventIndex, { signal });
      const index: EventIndex = { byGroup: new Map(), byItem: new Map() };
      for (const e of list.events) {
        if (e.candidateEventId !== null) index.byGroup.set(e.candidateEventId, e.id);
        for (const itemId of e.memberItemIds) index.byItem.set(itemId, e.id);
      }
      return index;
    },
    staleTime: 30_000,
  });
}

/** The event index (`eventIndexOptions`), asked for only when `enabled`. */
export function useEventIndex(enabled: boolean) {
  return useQuery({ ...eventIndexOptions(), enabled });
}
