import { useQuery } from '@tanstack/react-query';
import { eventListSchema } from '@shared/schemas/events';
import { apiRequest } from '@client/lib/api-client';
import { queryKeys } from '@client/lib/query-keys';

/**
 * Event ids by candidate-event group id (GET /api/events), so a queue group row and the review
 * screen's group panel can open its event. Refetched when the live channel marks events stale
 * (every key under `queryKeys.events.all`).
 */
export function useEventIdsByGroup(enabled: boolean) {
  return useQuery({
    queryKey: queryKeys.events.byGroup,
    queryFn: async ({ signal }) => {
      const list = await apiRequest(eventListSchema, '/api/events', { query: { limit: 1000 }, signal });
      const m = new Map<number, number>();
      for (const e of list.events) if (e.candidateEventId !== null) m.set(e.candidateEventId, e.id);
      return m;
    },
    enabled,
    staleTime: 30_000,
  });
}
