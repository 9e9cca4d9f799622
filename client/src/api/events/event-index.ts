import { useQuery } from '@tanstack/react-query';
import { eventListSchema } from '@shared/schemas/events';
import { apiRequest } from '@client/lib/api-client';

/**
 * Event ids by candidate-event group id (GET /api/events, which also builds events from new
 * groups), so a queue group row can open its event. Refetched when the live channel marks events
 * stale (key `['events', ...]`).
 */
export function useEventIdsByGroup(enabled: boolean) {
  return useQuery({
    queryKey: ['events', 'by-group'] as const,
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
