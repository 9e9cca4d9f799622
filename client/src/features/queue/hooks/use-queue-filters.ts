import { useCallback, useMemo } from 'react';
import { useSearchParams } from 'react-router';
import type { QueueFilters } from '@client/api/urls';
import { parseFilters } from '@client/api/queue/queue-filters';

/**
 * The queue filters, kept in the URL's search params (so a view can be bookmarked, shared and
 * survives a reload). Params are those of GET /api/queue; `state=all` lifts the state filter.
 * Invalid params are ignored one by one (the rest still apply).
 */
export function useQueueFilters(): {
  filters: QueueFilters;
  setFilters: (next: Partial<QueueFilters>) => void;
  /** Sets the `state` param as written: '' (the working states), 'all', or a comma list. */
  setStateParam: (value: string) => void;
  search: string;
} {
  const [params, setParams] = useSearchParams();
  const search = params.toString();
  const filters = useMemo<QueueFilters>(() => parseFilters(new URLSearchParams(search)), [search]);
  const setFilters = useCallback(
    (next: Partial<QueueFilters>) => {
      setParams(
        (prev) => {
          const p = new URLSearchParams(prev);
          for (const [k, v] of Object.entries(next)) {
            if (v === undefined || v === null || v === '' || (Array.isArray(v) && v.length === 0)) p.delete(k);
            else p.set(k, Array.isArray(v) ? v.join(',') : String(v));
          }
          return p;
        },
        { replace: true },
      );
    },
    [setParams],
  );
  const setStateParam = useCallback(
    (value: string) =>
      setParams(
        (prev) => {
          const p = new URLSearchParams(prev);
          if (value === '') p.delete('state');
          else p.set('state', value);
          return p;
        },
        { replace: true },
      ),
    [setParams],
  );
  return { filters, setFilters, setStateParam, search };
}
