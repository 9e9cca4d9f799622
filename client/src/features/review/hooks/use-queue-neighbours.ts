import { useCallback, useMemo } from 'react';
import { useLocation, useNavigate } from 'react-router';
import type { QueueRow } from '@shared/schemas/queue';
import { useQueueList } from '@client/api/queue/get-queue';
import { parseFilters } from '@client/api/queue/queue-filters';
import { paths } from '@client/config/paths';

/** Moving from one item to the next in the queue the analyst came from. */
export interface QueueNeighbours {
  /** The next (1) or previous (−1) item the viewer can work: waiting, or claimed by them. */
  neighbour: (step: 1 | -1) => QueueRow | undefined;
  /** Opens item `id` (undefined: back to the queue), keeping the queue's filters. */
  go: (id: number | undefined) => void;
  /** The queue's filters as the URL's query string (with its '?'). */
  search: string;
}

/**
 * The queue list under the filters in the URL (the one the queue screen shows, from the cache)
 * and the way through it from item `itemId`.
 * @param meId the signed-in person, whose claimed items count as workable
 */
export function useQueueNeighbours(itemId: number, meId: string | undefined): QueueNeighbours {
  const navigate = useNavigate();
  const location = useLocation();
  const filters = useMemo(() => parseFilters(new URLSearchParams(location.search)), [location.search]);
  const list = useQueueList(filters);
  const rows = useMemo(() => list.data?.pages.flatMap((p) => p.items) ?? [], [list.data]);
  const neighbour = useCallback(
    (step: 1 | -1) => {
      const idx = rows.findIndex((r) => r.id === itemId);
      if (idx < 0) return rows[0]?.id === itemId ? undefined : rows[0];
      for (let i = idx + step; i >= 0 && i < rows.length; i += step) {
        const r = rows[i];
        if (r && (r.state === 'new' || r.state === 'returned' || r.claimedBy?.id === meId)) return r;
      }
      return undefined;
    },
    [rows, itemId, meId],
  );
  const go = useCallback(
    (id: number | undefined) => {
      if (id === undefined) void navigate(`${paths.queue.href}${location.search}`);
      else void navigate(`${paths.queueItem.href}/${id}${location.search}`);
    },
    [navigate, location.search],
  );
  return { neighbour, go, search: location.search };
}
